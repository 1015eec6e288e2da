// GET /api/projects/:projectId/zones?kind=exclusion|mitigation — zones as GeoJSON (RFC 7946: WGS 84
// longitude/latitude, exteriors counter-clockwise). Without `kind`, both. Exclusion zones surround
// wrecks, anomalies judged archaeological and find spots by position uncertainty plus the reviewer's
// buffer; mitigation zones grade the potential of the desk's scoring (`?scoring=<id>`). Each
// feature's properties are documented in the collection's `propertiesDoc` member. Find spots follow
// design §9 (exact only for roles that may see exact positions, else generalised cells with small
// counts left out); a response carrying zones around exact find spots is written to the audit log.
import { requireProjectAccess } from "~/permissions.server";
import { exclusionZones, logExactZoneExport, mitigationZones, scoringParam, zonesToWgs84, ZONE_PROPERTIES_DOC, type ZoneFeature } from "~/regulator.server";
import { PRIVATE_HEADERS } from "~/sites.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.project-zones";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { project, identity, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const url = new URL(request.url);
  const kind = url.searchParams.get("kind");
  if (kind !== null && kind !== "exclusion" && kind !== "mitigation") return apiError(400, "unknown_kind", `kind is exclusion or mitigation (or leave it out for both), not "${kind}".`);
  return apiAction(async () => {
    const viewer = { userId: identity.user.id, role };
    const features: ZoneFeature[] = [];
    const notes: string[] = [];
    let scoring = null;
    let exactFindSpots = 0;
    if (kind !== "mitigation") {
      const ex = await exclusionZones(project.id, { viewer });
      features.push(...ex.features);
      notes.push(...ex.notes);
      exactFindSpots = ex.exactFindSpots;
    }
    if (kind !== "exclusion") {
      const mz = await mitigationZones(project.id, { scoringId: scoringParam(url.searchParams.get("scoring")), viewer });
      features.push(...mz.features);
      notes.push(...mz.notes);
      scoring = { id: mz.scoring.id, targetLabel: mz.scoring.targetLabel, weightSet: mz.scoring.weightSet };
    }
    if (exactFindSpots > 0) await logExactZoneExport(project.id, identity.user.id, exactFindSpots, { clientAddress: context?.clientAddress });
    const body = { ...zonesToWgs84(features, project.crsEpsg), propertiesDoc: ZONE_PROPERTIES_DOC, scoring, notes };
    return new Response(JSON.stringify(body), { headers: { ...PRIVATE_HEADERS, "Content-Type": "application/geo+json", "Content-Disposition": `inline; filename="${project.slug}-zones${kind ? `-${kind}` : ""}.geojson"` } });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  await requireProjectAccess(request, params.projectId, "project.read");
  return methodNotAllowed(["GET"]);
}
