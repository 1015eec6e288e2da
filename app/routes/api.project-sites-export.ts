// GET /api/projects/:projectId/sites/export?format=csv|geojson — exact positions, leads and owners
// only; every export is written to the audit log in the same transaction that reads the rows.
import { requireProjectAccess } from "~/permissions.server";
import { exportExactSites, PRIVATE_HEADERS, sitesCsv } from "~/sites.server";
import { apiError } from "~/security.server";
import type { Route } from "./+types/api.project-sites-export";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "sites.export");
  const format = new URL(request.url).searchParams.get("format") ?? "csv";
  if (format !== "csv" && format !== "geojson") return apiError(400, "unknown_format", "Ask for format=csv or format=geojson.");
  const rows = await exportExactSites(project, { userId: identity.user.id, role }, format, { clientAddress: context?.clientAddress });
  const stem = `${project.slug}-known-sites-EPSG${project.crsEpsg}`;
  if (format === "csv") {
    return new Response(sitesCsv(rows), { headers: { ...PRIVATE_HEADERS, "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${stem}.csv"` } });
  }
  const fc = {
    type: "FeatureCollection",
    // Positions are in the project CRS, not WGS 84 (RFC 7946 allows this by prior arrangement): named here.
    crs: { type: "name", properties: { name: `urn:ogc:def:crs:EPSG::${project.crsEpsg}` } },
    features: rows.map((r) => ({
      type: "Feature",
      geometry: { type: "Point", coordinates: [r.x, r.y] },
      properties: { id: r.id, label: r.label, precision_m: r.precisionM, kind: r.siteKind, context: r.context, cal_bp_from: r.calBpFrom, cal_bp_to: r.calBpTo, confidence: r.confidence, community: r.community, visibility: r.visibility },
    })),
  };
  return new Response(JSON.stringify(fc), { headers: { ...PRIVATE_HEADERS, "Content-Type": "application/geo+json", "Content-Disposition": `attachment; filename="${stem}.geojson"` } });
}
