import type { Route } from "./+types/upload-template-xlsx";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { materials } from "#app/db/schema.ts";
import { listCurves } from "#app/models/calibration/curves.server.ts";
import { templateXlsx } from "#app/models/submission/upload-template.server.ts";

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  const db = getDb();
  const names = db
    .select({ name: materials.name })
    .from(materials)
    .all()
    .map((m) => m.name);
  const curves = [
    ...new Set(
      listCurves(db)
        .filter((c) => c.active)
        .map((c) => c.name),
    ),
  ];
  const body = await templateXlsx(names, curves);
  return new Response(new Uint8Array(body), {
    headers: {
      "Content-Type": "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
      "Content-Disposition": 'attachment; filename="thawline-upload-template.xlsx"',
      "Cache-Control": "no-store",
    },
  });
}
