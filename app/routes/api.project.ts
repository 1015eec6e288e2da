// GET /api/projects/:projectId — one project, with your role in it.
import { requireProjectAccess } from "~/permissions.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({
    project: { id: project.id, slug: project.slug, name: project.name, summary: project.summary, crsEpsg: project.crsEpsg, isDemo: project.isDemo, createdAt: project.createdAt },
    role,
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
