// `npm run create-user -- <address> --roles <role,role> [--name <name>]`: invites a person with these
// roles, or sets the roles (and name, if given) of someone already registered. This is how a fresh
// installation gets its first editor. No mail is sent: the person signs in at /sign-in.
import { parseArgs } from "node:util";
import { getDb } from "#app/db/client.server.ts";
import { ROLES } from "#app/db/schema.ts";
import { createUser, findUserByEmail, inviteUser, isRole, normalizeEmail, setRoles } from "#app/models/accounts/users.server.ts";

const usage = `Usage: npm run create-user -- <address> --roles <role,role> [--name <name>]
Roles: ${ROLES.join(", ")}`;

const { values, positionals } = parseArgs({
  options: { roles: { type: "string" }, name: { type: "string" } },
  allowPositionals: true,
});

const address = positionals[0];
if (!address || positionals.length > 1 || !values.roles) {
  console.error(usage);
  process.exit(2);
}
if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(address)) {
  console.error(`"${address}" is not an e-mail address.\n${usage}`);
  process.exit(2);
}
const requested = values.roles
  .split(",")
  .map((r) => r.trim())
  .filter(Boolean);
const unknown = requested.filter((r) => !isRole(r));
if (unknown.length || requested.length === 0) {
  console.error(`Unknown role${unknown.length === 1 ? "" : "s"}: ${unknown.join(", ") || "(none given)"}.\n${usage}`);
  process.exit(2);
}
const roles = requested.filter(isRole);
const email = normalizeEmail(address);

const db = getDb();
try {
  const actor = { actorId: null, ip: "command line" };
  const existing = findUserByEmail(db, email);
  if (existing) {
    const changed = setRoles(db, existing.id, roles, actor);
    if (values.name?.trim()) createUser(db, { email, name: values.name, roles }); // updates the name
    console.log(`${email}: roles ${changed ? "set to" : "already"} ${roles.join(", ")}.`);
    if (!existing.active) console.log("Note: this person is deactivated; an editor can reactivate them on the People page.");
  } else {
    const name = values.name?.trim() || email.split("@")[0]!;
    inviteUser(db, { email, name, roles }, actor);
    console.log(`${email} (${name}) may now sign in at /sign-in with roles ${roles.join(", ")}.`);
  }
} finally {
  db.$client.close();
}
