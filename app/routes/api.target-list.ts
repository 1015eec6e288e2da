// GET /api/target-lists/:id — one core-target list: settings, cruise plan, targets with every field
// of issue 11, further downloads and the cautions. Viewers: published lists only, positions
// generalised to the project's site-generalisation grid, no exact coordinates.
// PATCH / PUT / DELETE — refused (409): a published list cannot change; a draft is replaced by a new list.
import { requireTargetListAccess } from "~/resource-access.server";
import { refuseListChange, targetListView } from "~/target-lists.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.target-list";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, listId } = await requireTargetListAccess(request, params.id, "project.read");
  return apiAction(async () => Response.json(await targetListView(listId, project.id, role), { headers: PRIVATE_HEADERS }));
}

export async function action({ request, params }: Route.ActionArgs) {
  const { project, listId } = await requireTargetListAccess(request, params.id, "runs.start");
  if (request.method !== "PATCH" && request.method !== "PUT" && request.method !== "DELETE") return methodNotAllowed(["GET"]);
  return apiAction(async () => {
    await refuseListChange(listId, project.id);
    return methodNotAllowed(["GET"]);
  });
}
