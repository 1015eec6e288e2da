// GET /api/me — who the session or token belongs to, and their projects.
import { requireIdentity } from "~/auth.server";
import { listProjectsForUser } from "~/projects.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.me";

export async function loader({ request }: Route.LoaderArgs) {
  const { user, via } = await requireIdentity(request);
  const projects = await listProjectsForUser(user.id);
  return Response.json({
    user: { id: user.id, email: user.email, name: user.name, mayCreateProjects: user.mayCreateProjects },
    authenticatedBy: via,
    projects: projects.map((p) => ({ id: p.id, name: p.name, role: p.role })),
  });
}

export async function action({ request }: Route.ActionArgs) {
  await requireIdentity(request);
  return methodNotAllowed(["GET"]);
}
