// GET /api/weighing-sessions/:sessionId/events?after=n — the session's events after number n (at
// most 500, oldest first): how an API client catches up without the live stream.
import { eventsAfter, requireSessionAccess } from "~/weighing-sessions.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.session-events";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { session } = await requireSessionAccess(request, params.sessionId, "project.read");
  const raw = new URL(request.url).searchParams.get("after") ?? "0";
  if (!/^\d{1,15}$/.test(raw)) return apiError(400, "bad_after", "`after` is the number of the last event you have: a whole number of 0 or more.");
  const events = await eventsAfter(session.id, Number(raw));
  return Response.json({ events, lastSeq: session.lastSeq });
}
