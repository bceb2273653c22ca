// `npm run token -- --email <address> [--label <label>]`: prints a new personal API token for an
// existing, active person (for scripts and first set-up). The token is shown once; only its hash is kept.
import { parseArgs } from "node:util";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { findUserByEmail } from "#app/models/accounts/users.server.ts";

const { values } = parseArgs({
  options: { email: { type: "string" }, label: { type: "string" } },
  allowPositionals: false,
});

if (!values.email) {
  console.error("Usage: npm run token -- --email <address> [--label <label>]");
  process.exit(2);
}

const db = getDb();
try {
  const user = findUserByEmail(db, values.email);
  if (!user) {
    console.error(
      `Nobody with the address ${values.email} is registered. Invite them first: npm run create-user -- ${values.email} --roles modeller`,
    );
    process.exit(1);
  }
  if (!user.active) {
    console.error(`${user.email} is deactivated; reactivate them on the People page first.`);
    process.exit(1);
  }
  const label = values.label ?? `created from the command line ${new Date().toISOString().slice(0, 10)}`;
  const { token } = createToken(db, user.id, label, { actorId: null, ip: "command line" });
  console.error(`New token "${label}" for ${user.email} (shown once; store it safely):`);
  console.log(token);
} finally {
  db.$client.close();
}
