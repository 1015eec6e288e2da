// GET /api/projects/:projectId/scorings — the project's scorings, newest first.
// POST (JSON) — start one: { reconstructionId, weightSetVersionId, target: { kind: "age", ageKa } |
//   { kind: "period", name } }. 202 with the scoring and its job id; identical inputs return the
//   existing scoring (200, reused: true).
import { requireProjectAccess } from "~/permissions.server";
import { listScorings, scoringRequest, scoringView, startScoring } from "~/scorings.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-scorings";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  const rows = await listScorings(project.id);
  return Response.json({ scorings: rows.map(scoringView) });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "runs.start");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, scoringRequest);
    const { scoring, reused } = await startScoring(project, identity.user.id, body, { clientAddress: context?.clientAddress });
    return Response.json({ scoring: { id: scoring.id, status: scoring.status }, jobId: scoring.jobRunId, reused }, { status: reused ? 200 : 202 });
  });
}
