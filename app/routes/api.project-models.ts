// GET /api/projects/:projectId/models — the project's trained models, newest first (models.read:
// owner, lead, analyst, reviewer; a viewer gets 403 — a model peaks on exact site positions).
// POST (JSON) — start one (runs.start): { reconstructionId, name?, ageKa?, factors?, settings? }
//   (app/models.server.ts modelRequest). 202 with the model and its job id; identical inputs return
//   the existing model (200, reused: true). Too few presences: 422 too_few_sites with the numbers in
//   `refusal` ({ presences, sites, cores, minimum, excluded: { reason: count }, heldOut }); nothing stored.
import { requireProjectAccess } from "~/permissions.server";
import { listModels, modelRequest, modelView, ModelRefused, startModel } from "~/models.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.project-models";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project } = await requireProjectAccess(request, params.projectId, "models.read");
  const rows = await listModels(project.id);
  return Response.json({ models: rows.map(modelView) }, { headers: { "Cache-Control": "private, no-store" } });
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity } = await requireProjectAccess(request, params.projectId, "runs.start");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const body = await readJson(request, modelRequest);
    try {
      const { model, reused } = await startModel(project, identity.user.id, body, { clientAddress: context?.clientAddress });
      return Response.json({ model: { id: model.id, status: model.status }, jobId: model.jobRunId, reused }, { status: reused ? 200 : 202 });
    } catch (e) {
      if (e instanceof ModelRefused) return Response.json({ error: { code: e.code, message: e.message, field: e.field }, refusal: e.detail }, { status: 422 });
      throw e;
    }
  });
}
