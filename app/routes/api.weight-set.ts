// GET /api/weight-sets/:id[?version=n] — one weight set: the current version's content (or version
//   n's), the adopted marker and the version history, newest first (every member).
// PATCH (JSON) { version, content?, name?, description?, note? } — save a new version (weights.edit);
//   `version` is the version the edit started from: 409 naming who saved since, nothing saved.
// DELETE — delete the set (weights.edit); 409 while a version is adopted or used by a scoring.
import { z } from "zod";
import { requireWeightSetAccess } from "~/resource-access.server";
import { deleteWeightSet, getWeightSet, saveWeightSetBody, saveWeightSetVersion } from "~/weight-sets.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import type { Route } from "./+types/api.weight-set";

const versionQuery = z.coerce.number().int().positive();

export async function loader({ request, params }: Route.LoaderArgs) {
  const { weightSetId } = await requireWeightSetAccess(request, params.id, "project.read");
  return apiAction(async () => {
    const raw = new URL(request.url).searchParams.get("version");
    let version: number | undefined;
    if (raw !== null) {
      const r = versionQuery.safeParse(raw);
      if (!r.success) return apiError(400, "invalid_fields", `version: "${raw}" is not a version number (1, 2, …).`);
      version = r.data;
    }
    return Response.json({ weightSet: await getWeightSet(weightSetId, { version }) }, { headers: PRIVATE_HEADERS });
  });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { weightSetId, identity } = await requireWeightSetAccess(request, params.id, "weights.edit");
  if (request.method === "PATCH") {
    return apiAction(async () => {
      const { version, ...body } = await readJson(request, saveWeightSetBody);
      await saveWeightSetVersion({ ...body, weightSetId, expectedVersion: version, userId: identity.user.id, clientAddress: context?.clientAddress });
      return Response.json({ weightSet: await getWeightSet(weightSetId) }, { headers: PRIVATE_HEADERS });
    });
  }
  if (request.method === "DELETE") {
    return apiAction(async () => {
      await deleteWeightSet({ weightSetId, userId: identity.user.id, clientAddress: context?.clientAddress });
      return new Response(null, { status: 204 });
    });
  }
  return methodNotAllowed(["GET", "PATCH", "DELETE"]);
}
