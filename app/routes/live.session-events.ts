// GET /live/weighing/:sessionId — the session's live event stream (text/event-stream) for the
// session page's EventSource. Cookie sessions only (tokens are for /api/; API clients read
// /api/weighing-sessions/:id/events). Starts after the browser's Last-Event-ID on a reconnect, else
// after `?after=` (the number the page's snapshot ends at). A closed session with nothing more to
// send answers 204, which tells the browser to stop reconnecting.
import { requireSessionAccess, sessionStream, streamStart } from "~/weighing-sessions.server";
import { UserError } from "~/errors";
import type { Route } from "./+types/live.session-events";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { session, identity, role } = await requireSessionAccess(request, params.sessionId, "project.read");
  let after: number;
  try {
    after = streamStart(request);
  } catch (e) {
    if (e instanceof UserError) return new Response(e.message, { status: e.status, headers: { "Content-Type": "text/plain; charset=utf-8" } });
    throw e;
  }
  if (session.status === "closed" && after >= session.lastSeq) return new Response(null, { status: 204 });
  return sessionStream(request, session, { userId: identity.user.id, name: identity.user.name, role, projectId: session.projectId }, after);
}
