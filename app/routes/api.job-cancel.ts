// POST /api/jobs/:jobId/cancel — asks the job to stop (analysts and up). The engine polls the
// flag and the job ends as cancelled; a job still queued is cancelled at once.
import { requireJobAccess } from "~/resource-access.server";
import { getJobRun, jobRunStatus, requestCancel } from "~/jobs.server";
import { methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import { recordAudit } from "~/audit.server";
import { db } from "~/db.server";
import type { Route } from "./+types/api.job-cancel";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireJobAccess(request, params.jobId, "runs.start");
  return methodNotAllowed(["POST"]);
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { jobRunId, identity, project } = await requireJobAccess(request, params.jobId, "runs.start");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  const result = await requestCancel(jobRunId, identity.user.id);
  if (result === "already_ended") return apiError(409, "already_ended", "The job has already ended.");
  await recordAudit(db(), { actorUserId: identity.user.id, projectId: project.id, action: "job.cancel_requested", detail: { jobRunId, result }, clientAddress: context?.clientAddress });
  return Response.json({ result, job: jobRunStatus((await getJobRun(jobRunId))!) }, { status: 202 });
}
