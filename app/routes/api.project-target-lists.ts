// GET /api/projects/:projectId/target-lists — the project's core-target lists, newest first (viewers:
// published lists only).
// POST (JSON, analysts and up: runs.start; a model source also needs models.read) — make a draft list
// from a published scoring or model: { name, source: { kind, id }, constraints?, minSpacingM?, modes[],
// cruise? { port { name, x, y }, speedKnots, stationHours, shipDays, hoursPerDay? }, velocityMps?,
// nearbyExclusionM?, waypointPrefix? }. 201 with the list; 4xx naming the problem, nothing stored.
import { requireProjectAccess } from "~/permissions.server";
import { createTargetList, listTargetLists, targetListRequest } from "~/target-lists.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-target-lists";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({ targetLists: await listTargetLists(project.id, role) }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "runs.start");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, targetListRequest);
    const list = await createTargetList(project, { userId: identity.user.id, role }, body, { clientAddress: context?.clientAddress });
    return Response.json({ targetList: { id: list.id, status: list.status, name: list.name } }, { status: 201 });
  });
}
