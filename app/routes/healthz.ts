// GET /healthz — 200 when the database answers, 503 otherwise. For load balancers and scripts.
import { databaseAnswers } from "~/db.server";

export async function loader() {
  const up = await databaseAnswers();
  return Response.json(
    { status: up ? "ok" : "unavailable", database: up ? "up" : "down", time: new Date().toISOString() },
    { status: up ? 200 : 503, headers: { "Cache-Control": "no-store" } },
  );
}
