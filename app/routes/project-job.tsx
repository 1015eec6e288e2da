// /projects/:projectId/jobs/:jobId — where job e-mails link to: the page of what the job made.
import { redirect } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { getJobRun } from "~/jobs.server";
import { refusal } from "~/security.server";
import type { Route } from "./+types/project-job";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  const run = /^[0-9a-f-]{36}$/.test(params.jobId) ? await getJobRun(params.jobId) : null;
  if (!run || run.projectId !== project.id) throw refusal(request, 404, "no_such_job", "There is no such job in this project.");
  const reconstructionId = (run.payload as { reconstructionId?: number }).reconstructionId;
  if (run.kind === "reconstruction" && reconstructionId) throw redirect(`/projects/${project.id}/reconstructions/${reconstructionId}`);
  throw redirect(`/projects/${project.id}`);
}
