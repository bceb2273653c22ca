import type { Route } from "./+types/upload-template-csv";
import { requireRole } from "#app/auth/session.server.ts";
import { templateCsv } from "#app/models/submission/upload-template.server.ts";

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  return new Response(templateCsv(), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": 'attachment; filename="thawline-upload-template.csv"',
      "Cache-Control": "no-store",
    },
  });
}
