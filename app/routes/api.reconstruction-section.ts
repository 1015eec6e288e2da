// GET /api/reconstructions/:id/section?from=x1,y1&to=x2,y2&corridor=250 — a cross-section in the
// project CRS: seabed, buried horizon and flooding age along the line, sea level at each age with
// its σ, and the picks and cores within the corridor (m either side).
import { requireReconstructionAccess } from "~/resource-access.server";
import { sectionAlong } from "~/map.server";
import { getReconstruction } from "~/reconstructions.server";
import { apiError } from "~/security.server";
import { methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.reconstruction-section";

function point(v: string | null, name: string): [number, number] {
  const m = v ? /^\s*(-?\d+(?:\.\d+)?)\s*,\s*(-?\d+(?:\.\d+)?)\s*$/.exec(v) : null;
  if (!m) throw apiError(400, "bad_point", `${name} must be "x,y" in the project CRS (metres), e.g. ${name}=481200,5022300.`);
  return [Number(m[1]), Number(m[2])];
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { reconstructionId } = await requireReconstructionAccess(request, params.id, "project.read");
  const r = await getReconstruction(null, reconstructionId);
  if (!r || r.status !== "published") return apiError(409, "not_published", "This reconstruction has no published layers (yet).");
  const url = new URL(request.url);
  const from = point(url.searchParams.get("from"), "from");
  const to = point(url.searchParams.get("to"), "to");
  const corridor = Number(url.searchParams.get("corridor") ?? 250);
  if (!(corridor >= 0 && corridor <= 5000)) return apiError(400, "bad_corridor", "corridor is 0 to 5000 m either side of the line.");
  return Response.json(await sectionAlong(reconstructionId, from, to, corridor), { headers: { "Cache-Control": "private, max-age=600" } });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireReconstructionAccess(request, params.id, "project.read");
  return methodNotAllowed(["GET"]);
}
