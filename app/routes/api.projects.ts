// GET /api/projects — your projects. POST /api/projects — create one (if your account may).
import { mayNotCreate, requireIdentity } from "~/auth.server";
import { createProject, listProjectsForUser } from "~/projects.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { projectFields } from "~/validation";
import type { Route } from "./+types/api.projects";

export async function loader({ request }: Route.LoaderArgs) {
  const { user } = await requireIdentity(request);
  return Response.json({ projects: await listProjectsForUser(user.id) });
}

export async function action({ request, context }: Route.ActionArgs) {
  const { user } = await requireIdentity(request);
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  if (!user.mayCreateProjects) throw mayNotCreate(request);
  return apiAction(async () => {
    const fields = await readJson(request, projectFields.strict());
    const project = await createProject(user, fields, { clientAddress: context?.clientAddress });
    return Response.json({ project: { id: project.id, slug: project.slug, name: project.name, summary: project.summary, crsEpsg: project.crsEpsg } }, { status: 201 });
  });
}
