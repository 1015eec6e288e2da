// GET /api/projects/:projectId/weight-sets — the project's weight sets, each with its current
//   version (content, who, when) and the adopted marker (every member).
// POST (JSON) — create one (weights.edit): { name, description?, content?, note? } starts at
//   version 1 (content omitted: the catalogue's starting set); { name, forkFromVersionId, note? }
//   forks: version 1 copies that version of another of the project's sets. 201 with the set.
import { requireProjectAccess } from "~/permissions.server";
import { createWeightSet, createWeightSetBody, getWeightSet, listWeightSets } from "~/weight-sets.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.project-weight-sets";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "project.read");
  return Response.json({ weightSets: await listWeightSets(project.id) }, { headers: PRIVATE_HEADERS });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "weights.edit");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, createWeightSetBody);
    const { set } = await createWeightSet({ ...body, projectId: project.id, userId: identity.user.id, clientAddress: context?.clientAddress });
    return Response.json({ weightSet: await getWeightSet(set.id) }, { status: 201, headers: PRIVATE_HEADERS });
  });
}
