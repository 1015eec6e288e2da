// GET /api/jobs/:jobId — { state, progress, step, message, … } for progress bars and scripts.
import { requireJobAccess } from "~/resource-access.server";
import { getJobRun, jobRunStatus } from "~/jobs.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.job";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { jobRunId } = await requireJobAccess(request, params.jobId, "project.read");
  const run = await getJobRun(jobRunId);
  return Response.json(jobRunStatus(run!), { headers: { "Cache-Control": "no-store" } });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireJobAccess(request, params.jobId, "project.read");
  return methodNotAllowed(["GET"]);
}
