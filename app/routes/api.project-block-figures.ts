// GET /api/projects/:projectId/blocks/figures — figures per lease block (design §7): area and share
// in each class of the project classification, share unassessed, mean and max potential, known
// sites inside and the ages at which the block was land. Known sites follow design §9: exact counts
// for roles that may see exact positions, else counted by generalised cells with counts below the
// project's minimum shown as "< n" (in the CSV too). `?scoring=<id>`, `?format=csv` as for conflicts.
import { requireProjectAccess } from "~/permissions.server";
import { blockFigures, blockFiguresCsv, scoringParam } from "~/regulator.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.project-block-figures";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const url = new URL(request.url);
  const format = url.searchParams.get("format") ?? "json";
  if (format !== "json" && format !== "csv") return apiError(400, "unknown_format", `Ask for format=json or format=csv, not "${format}".`);
  return apiAction(async () => {
    const table = await blockFigures(project.id, { scoringId: scoringParam(url.searchParams.get("scoring")), viewer: { userId: identity.user.id, role } });
    if (format === "csv")
      return new Response(blockFiguresCsv(table), { headers: { ...PRIVATE_HEADERS, "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${project.slug}-block-figures-scoring-${table.scoring.id}.csv"` } });
    return Response.json(table, { headers: PRIVATE_HEADERS });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
