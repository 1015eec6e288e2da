// GET /api/projects/:projectId/weight-sets/adopted — the project's adopted weight-set version
//   (null when none) and every adoption, newest first (every member).
// POST (JSON) { versionId, rationale } — adopt a version (weights.adopt: leads and owners); the
//   rationale is required and audit-logged with the set and version. 201 with the new state.
import { requireProjectAccess } from "~/permissions.server";
import { adoptBody, adoptedVersion, adoptionHistory, adoptVersion } from "~/weight-sets.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.project-adopted-weights";

/** `adopted` is the newest adoption with the adopted version's content; `history` lists them all. */
async function state(projectId: number) {
  const [history, current] = await Promise.all([adoptionHistory(projectId), adoptedVersion(projectId)]);
  return { adopted: history[0] && current ? { ...history[0], content: current.version.content } : null, history };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json(await state(project.id), { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "weights.adopt");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, adoptBody);
    await adoptVersion({ ...body, projectId: project.id, userId: identity.user.id, clientAddress: context?.clientAddress });
    return Response.json(await state(project.id), { status: 201, headers: PRIVATE_HEADERS });
  });
}
