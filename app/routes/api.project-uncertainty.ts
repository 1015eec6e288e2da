// GET /api/projects/:projectId/uncertainty — the project's uncertainty runs, newest first.
// POST (JSON) — start one: { reconstructionId, weightSetVersionId, target: { kind: "age", ageKa } |
//   { kind: "period", name }, draws?, seed?, perturbation?, landscape?, landscapeDraws? }. 202 with the
//   run and its job id; identical inputs (the seed included) return the existing run (200, reused: true).
import { requireProjectAccess } from "~/permissions.server";
import { listUncertaintyRuns, startUncertainty, uncertaintyRequest, uncertaintyView } from "~/uncertainty.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-uncertainty";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  const rows = await listUncertaintyRuns(project.id);
  return Response.json({ runs: rows.map(uncertaintyView) });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "uncertainty.run");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, uncertaintyRequest);
    const { run, reused } = await startUncertainty(project, identity.user.id, body, { clientAddress: context?.clientAddress });
    return Response.json({ run: { id: run.id, status: run.status, seed: (run.params as { seed: number }).seed }, jobId: run.jobRunId, reused }, { status: reused ? 200 : 202 });
  });
}
