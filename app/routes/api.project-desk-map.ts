// GET /api/projects/:projectId/regulator/map.png — the review desk's small map, drawn on the server
// from the desk's scoring (`?scoring=<id>`): classes, unassessed ground, lease blocks, asset
// footprints and exclusion zones (find spots as the caller may see them, design §9).
import { requireProjectAccess } from "~/permissions.server";
import { deskMapPng, scoringParam } from "~/regulator.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-desk-map";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const url = new URL(request.url);
  return apiAction(async () => {
    const map = await deskMapPng(project.id, { scoringId: scoringParam(url.searchParams.get("scoring")), viewer: { userId: identity.user.id, role } });
    return new Response(new Uint8Array(map.png), { headers: { "Content-Type": "image/png", "Cache-Control": "private, no-store", "X-Lowstand-Scoring": String(map.scoringId) } });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
