// What the map workspace needs from the server: the newest published reconstruction and its curve,
// the project's vector evidence in the project CRS, known sites as exactly as the caller may see
// them, lines traced from the per-age rasters, and cross-sections along a drawn line.
import { and, desc, eq, inArray } from "drizzle-orm";
import { db } from "./db.server";
import { datasets, reconstructions, seaLevelCurves } from "./db/schema";
import { getJson, ObjectNotFound, store } from "./storage.server";
import { resolveCrs } from "./terrain/crs";
import { defaultGlobalCurve, sigmaAt, type SeaLevelCurve } from "./terrain/sea-level";
import type { Manifest } from "./terrain/reconstruct";
import { readGeoTiff } from "./terrain/geotiff-read";
import { findLayer, layerGrid } from "./layers.server";
import { sitesFor } from "./sites.server";
import { traceBoundaries, traceStreams } from "./vectorise";
import { apiError } from "./security.server";
import type { Role } from "./permissions";
import { curveFromRow, pointsOf } from "./sea-level-curves.server";
import { displayGridFor } from "./display.server";

const OVERLAY_KINDS = ["survey_area", "dredging_areas", "lease_blocks", "ocean_boundary", "survey_lines", "interpretations", "exclusions", "development_footprint", "cores"] as const;

type Feature = { type: "Feature"; geometry: { type: string; coordinates: unknown }; properties: Record<string, unknown> };

async function curveOf(projectId: number, curveId: unknown): Promise<SeaLevelCurve> {
  if (typeof curveId === "number") {
    const [c] = await db().select().from(seaLevelCurves).where(and(eq(seaLevelCurves.id, curveId), eq(seaLevelCurves.projectId, projectId)));
    if (c) return curveFromRow(c);
  }
  return defaultGlobalCurve();
}

const derivedJson = (key: string) => getJson<{ type?: string; features?: Feature[]; rows?: Record<string, unknown>[] }>(key);

export async function mapPayload(project: { id: number; name: string; crsEpsg: number; siteGeneralisationM: number; siteMinCount: number }, viewer: { userId: number; role: Role }, reconstructionParam: string | null) {
  const where = reconstructionParam && /^\d{1,9}$/.test(reconstructionParam)
    ? and(eq(reconstructions.projectId, project.id), eq(reconstructions.id, Number(reconstructionParam)), eq(reconstructions.status, "published"))
    : and(eq(reconstructions.projectId, project.id), eq(reconstructions.status, "published"));
  const [r] = await db().select().from(reconstructions).where(where).orderBy(desc(reconstructions.publishedAt)).limit(1);
  const manifest = (r?.manifest ?? null) as unknown as Manifest | null;
  const curve = await curveOf(project.id, (r?.params as { curveId?: unknown } | undefined)?.curveId ?? null);

  const rows = await db().select().from(datasets).where(and(eq(datasets.projectId, project.id), inArray(datasets.kind, [...OVERLAY_KINDS]))).orderBy(datasets.id);
  const overlays = [];
  for (const d of rows) {
    let json;
    try {
      json = await derivedJson(d.derivedKey);
    } catch (err) {
      // A dataset whose stored form is missing is our fault: leave it off the map and say so in the log.
      if (!(err instanceof ObjectNotFound)) throw err;
      console.error(`[map] dataset ${d.id} (${d.kind}) has no stored object ${d.derivedKey}; left off the map`);
      continue;
    }
    let geojson: { type: "FeatureCollection"; features: Feature[] };
    if (d.kind === "cores") {
      geojson = {
        type: "FeatureCollection",
        features: (json.rows ?? []).map((c) => ({
          type: "Feature",
          geometry: { type: "Point", coordinates: [Number(c.x), Number(c.y)] },
          properties: { coreId: c.coreId, waterDepthM: c.waterDepthM, penetrationM: c.penetrationM, horizonReached: c.horizonReached, preservedLandSurface: c.preservedLandSurface, archaeologicalIndicators: c.archaeologicalIndicators },
        })),
      };
    } else {
      geojson = { type: "FeatureCollection", features: json.features ?? [] };
    }
    overlays.push({ datasetId: d.id, kind: d.kind, name: d.name, geojson });
  }

  const sites = await sitesFor(project, viewer);
  return {
    project: { id: project.id, name: project.name, crsEpsg: project.crsEpsg, proj4: resolveCrs(project.crsEpsg).proj4 },
    reconstruction:
      r && manifest
        ? {
            id: r.id,
            name: r.name || `Reconstruction ${r.id}`,
            grid: manifest.grid,
            // what the layer API's display copies are on (app/display.server.ts)
            displayGrid: displayGridFor(manifest.grid),
            agesKa: [...manifest.agesKa].sort((a, b) => b - a),
            layers: manifest.layers.map((l) => ({ name: l.name, ageKa: l.ageKa, units: l.units, type: l.type, stats: l.stats })),
            ages: manifest.ages.map((a) => ({ ageKa: a.ageKa, seaLevelM: a.seaLevelM, counts: a.counts })),
          }
        : null,
    seaLevel: { label: curve.label, citation: curve.citation, points: pointsOf(curve) },
    overlays,
    sites: {
      exact: sites.exact.map((s) => ({ id: s.id, label: s.label, x: s.x, y: s.y, context: s.context, kind: s.siteKind })),
      generalised: sites.generalised,
    },
  };
}

// ---------------------------------------------------------------------------------------------

function toProject(grid: Manifest["grid"], line: number[]): [number, number][] {
  const out: [number, number][] = [];
  for (let k = 0; k < line.length; k += 2) out.push([grid.originX + (line[k] + 0.5) * grid.cellSizeX, grid.originY - (line[k + 1] + 0.5) * grid.cellSizeY]);
  return out;
}

/**
 * Lines traced from one age's rasters: the shoreline (the landward edge of sea and intertidal
 * cells, i.e. high water), lake margins, and streams by Strahler order.
 */
export async function vectorsAt(reconstructionId: number, what: string, ageParam: string | null) {
  if (what === "streams") {
    const dir = await findLayer(reconstructionId, "flow_direction", ageParam);
    const ord = await findLayer(reconstructionId, "stream_order", ageParam);
    const [d, o] = await Promise.all([layerGrid(dir.key, dir.manifest, dir.layer), layerGrid(ord.key, ord.manifest, ord.layer)]);
    const g = dir.manifest.grid;
    const dirCodes = Uint8Array.from(d.data, (v) => (v === v ? v : 255));
    const orders = Uint8Array.from(o.data, (v) => (v === v ? v : 0));
    return {
      type: "FeatureCollection" as const,
      features: traceStreams(dirCodes, orders, g.width, g.height).map((s) => ({ type: "Feature" as const, properties: { order: s.order }, geometry: { type: "LineString" as const, coordinates: toProject(g, s.line) } })),
    };
  }
  if (what !== "shoreline" && what !== "lake_margins") throw apiError(404, "no_such_vectors", "Vectors are shoreline, lake_margins or streams.");
  const cls = await findLayer(reconstructionId, "land_class", ageParam);
  const grid = await layerGrid(cls.key, cls.manifest, cls.layer);
  const g = cls.manifest.grid;
  const inside = new Uint8Array(g.width * g.height);
  for (let i = 0; i < inside.length; i++) {
    const c = grid.data[i];
    inside[i] = what === "shoreline" ? (c === 1 || c === 2 ? 1 : 0) : c === 3 ? 1 : 0;
  }
  return {
    type: "FeatureCollection" as const,
    features: traceBoundaries(inside, g.width, g.height).map((line) => ({ type: "Feature" as const, properties: { what, ageKa: cls.ageKa }, geometry: { type: "LineString" as const, coordinates: toProject(g, line) } })),
  };
}

// ---------------------------------------------------------------------------------------------

function sampler(grid: { spec: { width: number; height: number; originX: number; originY: number; cellSizeX: number; cellSizeY: number }; data: Float32Array }) {
  const s = grid.spec;
  return (x: number, y: number): number | null => {
    const c = Math.floor((x - s.originX) / s.cellSizeX);
    const r = Math.floor((s.originY - y) / s.cellSizeY);
    if (c < 0 || r < 0 || c >= s.width || r >= s.height) return null;
    const v = grid.data[r * s.width + c];
    return v === v ? v : null;
  };
}

/** A cross-section from `from` to `to` (project CRS), with picks and cores within `corridorM`. */
export async function sectionAlong(reconstructionId: number, from: [number, number], to: [number, number], corridorM: number) {
  const [r] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
  const manifest = r.manifest as unknown as Manifest;
  const params = r.params as { bathymetryDatasetId: number; horizonDatasetId: number | null; curveId: number | null };
  const lengthM = Math.hypot(to[0] - from[0], to[1] - from[1]);
  if (!(lengthM > 0)) throw apiError(400, "empty_section", "The section needs two different points.");
  const g = manifest.grid;
  const step = Math.min(g.cellSizeX, g.cellSizeY) / 2;
  const count = Math.min(2000, Math.max(2, Math.ceil(lengthM / step) + 1));

  const [bathy] = await db().select({ key: datasets.derivedKey }).from(datasets).where(eq(datasets.id, params.bathymetryDatasetId));
  const seabed = bathy ? sampler((await readGeoTiff(await store().getBytes(bathy.key))).grid) : () => null;
  const layerSampler = async (name: string) => {
    if (!manifest.layers.some((l) => l.name === name && l.ageKa === null)) return () => null;
    const f = await findLayer(reconstructionId, name, null);
    const grid = await layerGrid(f.key, f.manifest, f.layer);
    return sampler(grid as { spec: typeof g & { crs: unknown }; data: Float32Array });
  };
  const horizon = await layerSampler("horizon_elevation");
  const floodingAge = await layerSampler("flooding_age");

  const ux = (to[0] - from[0]) / lengthM;
  const uy = (to[1] - from[1]) / lengthM;
  const samples = [];
  for (let k = 0; k < count; k++) {
    const dist = (lengthM * k) / (count - 1);
    const x = from[0] + ux * dist;
    const y = from[1] + uy * dist;
    samples.push({ distanceM: dist, x, y, seabedM: seabed(x, y), horizonM: horizon(x, y), floodingAgeKa: floodingAge(x, y) });
  }
  const along = (x: number, y: number) => {
    const dx = x - from[0];
    const dy = y - from[1];
    const d = dx * ux + dy * uy;
    const off = -dx * uy + dy * ux;
    return { distanceM: d, offsetM: off, inside: d >= 0 && d <= lengthM && Math.abs(off) <= corridorM };
  };

  const picks = [];
  if (params.horizonDatasetId) {
    const [h] = await db().select({ key: datasets.derivedKey }).from(datasets).where(eq(datasets.id, params.horizonDatasetId));
    if (h) {
      for (const p of (await derivedJson(h.key)).rows ?? []) {
        const a = along(Number(p.x), Number(p.y));
        const sb = seabed(Number(p.x), Number(p.y));
        if (a.inside && sb !== null) picks.push({ distanceM: a.distanceM, offsetM: a.offsetM, elevationM: sb - Number(p.depthBelowSeabedM), lineId: String(p.lineId) });
      }
    }
  }
  const cores = [];
  const coreSets = await db().select({ key: datasets.derivedKey }).from(datasets).where(and(eq(datasets.projectId, r.projectId), eq(datasets.kind, "cores")));
  for (const cs of coreSets) {
    for (const c of (await derivedJson(cs.key)).rows ?? []) {
      const a = along(Number(c.x), Number(c.y));
      if (!a.inside) continue;
      const units = ((c.units as Array<Record<string, unknown>>) ?? []).map((u) => ({ topM: u.topM, baseM: u.baseM, description: u.description }));
      const dates = ((c.dates as Array<Record<string, unknown>>) ?? []).map((d) => ({ labCode: d.labCode, c14Age: d.c14AgeBp, c14Sigma: d.c14SigmaYears, calBpFrom: d.calBpFrom, calBpTo: d.calBpTo, material: d.material, sampleDepthM: d.sampleDepthM }));
      cores.push({ coreId: c.coreId, distanceM: a.distanceM, offsetM: a.offsetM, seabedElevationM: (c.seabedElevationM as number | null) ?? seabed(Number(c.x), Number(c.y)), penetrationM: c.penetrationM, units, dates });
    }
  }
  const curve = await curveOf(r.projectId, params.curveId);
  const ages = manifest.ages.map((a) => {
    const sigma = sigmaAt(curve, a.ageKa);
    return { ageKa: a.ageKa, seaLevelM: a.seaLevelM, sigmaM: Number.isFinite(sigma) ? sigma : null };
  });
  return { lengthM, corridorM, samples, ages, picks, cores };
}
