// GET /api/projects/:projectId/conflicts — the conflict table (design §7): for each development
// asset, the depth to the preserved horizon under it and its buffer, the cover, the potential
// classes, whether the horizon is assessed, whether the impact depth reaches it, and the mitigation
// proposed, with the rules in words. `?scoring=<id>` reads another published scoring (default: the
// newest published scoring of the adopted weight-set version; 409 with the way to make one when
// there is none). `?format=csv` downloads it. No site positions are in it: any member may read it.
import { requireProjectAccess } from "~/permissions.server";
import { conflictsCsv, conflictTable, scoringParam } from "~/regulator.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.project-conflicts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const url = new URL(request.url);
  const format = url.searchParams.get("format") ?? "json";
  if (format !== "json" && format !== "csv") return apiError(400, "unknown_format", `Ask for format=json or format=csv, not "${format}".`);
  return apiAction(async () => {
    const table = await conflictTable(project.id, { scoringId: scoringParam(url.searchParams.get("scoring")), viewer: { userId: identity.user.id, role } });
    if (format === "csv")
      return new Response(conflictsCsv(table), { headers: { ...PRIVATE_HEADERS, "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${project.slug}-conflicts-scoring-${table.scoring.id}.csv"` } });
    return Response.json(table, { headers: PRIVATE_HEADERS });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
