// GET /api/weighing-sessions/:sessionId — the session as its page shows it: proposals, comments,
// who is present, the outcome, and `lastSeq`, the number of the newest event included (read
// /api/weighing-sessions/:id/events?after=lastSeq for what follows).
import { requireSessionAccess, sessionSnapshot } from "~/weighing-sessions.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.session";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { session } = await requireSessionAccess(request, params.sessionId, "project.read");
  return Response.json(await sessionSnapshot(session.id));
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireSessionAccess(request, params.sessionId, "project.read");
  return methodNotAllowed(["GET"]);
}
