// GET /api/projects/:projectId/reconstructions — the project's reconstructions.
// POST (JSON) — start one: { bathymetryDatasetId, agesKa: [20, 16, 12], oceanSides: ["south"],
//   tidalRangeM, streamThresholdKm2, horizonDatasetId?, surveyLinesDatasetId?, curveId?, name? }.
//   202 with the run and its job id; identical inputs return the existing run (reused: true).
import { requireProjectAccess } from "~/permissions.server";
import { listReconstructions, reconstructionParams, startReconstruction } from "~/reconstructions.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { reconstructionView } from "~/reconstruction-view.server";
import type { Route } from "./+types/api.project-reconstructions";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  const rows = await listReconstructions(project.id);
  return Response.json({ reconstructions: rows.map(reconstructionView) });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "runs.start");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const p = await readJson(request, reconstructionParams);
    const { reconstruction, reused } = await startReconstruction(project, identity.user.id, p, { clientAddress: context?.clientAddress });
    return Response.json({ reconstruction: { id: reconstruction.id, status: reconstruction.status }, jobId: reconstruction.jobRunId, reused }, { status: reused ? 200 : 202 });
  });
}
