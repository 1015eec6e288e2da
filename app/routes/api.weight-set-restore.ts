// POST /api/weight-sets/:id/restore (JSON) { version, expectedVersion, note? } — a new version with
//   version `version`'s content and the note "Restored from version n." (weights.edit);
//   `expectedVersion` is the current version as the person saw it (409 when stale).
import { requireWeightSetAccess } from "~/resource-access.server";
import { getWeightSet, restoreWeightSetBody, restoreWeightSetVersion } from "~/weight-sets.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.weight-set-restore";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireWeightSetAccess(request, params.id, "weights.edit");
  return methodNotAllowed(["POST"]);
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { weightSetId, identity } = await requireWeightSetAccess(request, params.id, "weights.edit");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const body = await readJson(request, restoreWeightSetBody);
    await restoreWeightSetVersion({ ...body, weightSetId, userId: identity.user.id, clientAddress: context?.clientAddress });
    return Response.json({ weightSet: await getWeightSet(weightSetId) }, { headers: PRIVATE_HEADERS });
  });
}
