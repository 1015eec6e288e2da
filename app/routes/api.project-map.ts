// GET /api/projects/:projectId/map[?reconstruction=<id>] — what the map workspace draws: the newest
// published reconstruction (layers, ages), its sea-level curve, vector evidence in the project
// CRS, and known sites as exactly as the caller may see them (design §9).
import { requireProjectAccess } from "~/permissions.server";
import { mapPayload } from "~/map.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-map";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const body = await mapPayload(project, { userId: identity.user.id, role }, new URL(request.url).searchParams.get("reconstruction"));
  return Response.json(body, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
