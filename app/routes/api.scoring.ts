// GET /api/scorings/:id — status, progress, target, weight-set version, reconstruction and (once
// published) the statistics. Any member may read it: a weight-set potential is not a trained model.
import { requireScoringAccess } from "~/resource-access.server";
import { getScoring, scoringView } from "~/scorings.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.scoring";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { scoringId } = await requireScoringAccess(request, params.id, "project.read");
  const s = await getScoring(scoringId);
  return Response.json({ scoring: scoringView(s!) });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireScoringAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
