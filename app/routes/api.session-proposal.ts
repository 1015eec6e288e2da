// POST /api/weighing-sessions/:sessionId/proposal — save my proposal (analysts and up), made on the
// first save: { "content": <weight-set content> } in a direct session; { "upper": [judgements] }
// (optionally with content for curves) in an AHP session. Everyone in the session sees it at once.
import { proposalBody, requireSessionAccess, saveProposal } from "~/weighing-sessions.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.session-proposal";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireSessionAccess(request, params.sessionId, "weights.edit");
  return methodNotAllowed(["POST"]);
}

export async function action({ request, params }: Route.ActionArgs) {
  const { session, identity } = await requireSessionAccess(request, params.sessionId, "weights.edit");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const body = await readJson(request, proposalBody);
    const proposal = await saveProposal(session, body, { userId: identity.user.id, name: identity.user.name });
    return Response.json({ proposal });
  });
}
