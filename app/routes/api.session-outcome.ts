// POST /api/weighing-sessions/:sessionId/outcome — the lead adopts the group result or one proposal
// (owners and leads): { "source": "group" | userId, "target": { "weightSetId", "expectedVersion"? }
// | { "newName" }, "rationale": "…", "adoptForProject"?: true }. Writes a new weight-set version
// with the rationale, adopts it for the project when asked, and closes the session with the outcome.
import { adoptOutcome, adoptOutcomeBody, requireSessionAccess } from "~/weighing-sessions.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.session-outcome";

export async function action({ request, params, context }: Route.ActionArgs) {
  const { session, identity } = await requireSessionAccess(request, params.sessionId, "weights.adopt");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const body = await readJson(request, adoptOutcomeBody);
    const outcome = await adoptOutcome(session, body, { userId: identity.user.id, name: identity.user.name, clientAddress: context?.clientAddress });
    return Response.json({ outcome }, { status: 201 });
  });
}
