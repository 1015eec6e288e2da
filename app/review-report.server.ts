// The printable report of a review (design §7): every figure is read from the snapshot's frozen ids
// — the published scoring's files (checked against the SHA-256s the snapshot froze), the
// weight-set version (an immutable row), the classification as frozen — never from "the newest".
// Sections whose source is not built yet say so plainly; no number is invented.
import { createHash } from "node:crypto";
import { asc, eq } from "drizzle-orm";
import { db } from "./db.server";
import { datasets, models, projects, scorings, weightSetVersions } from "./db/schema";
import { UserError } from "./errors";
import { store } from "./storage.server";
import { readGeoTiff } from "./terrain/geotiff-read";
import { encodePng } from "./png.server";
import { potentialRgba } from "./components/scoring/render";
import { factorDef } from "./scoring/factors";
import { controlPointNames, type FactorCurve } from "./scoring/factor-curves";
import { ahpWeights, matrixFromUpperTriangle } from "./scoring/ahp";
import { classAreas, type ProjectClassification } from "./scoring/classification";
import type { WeightSetContent } from "./scoring/weight-set";
import type { ReviewSnapshot, ReviewView } from "./reviews.server";
import { canonicalJson } from "./weight-sets.server";
import { blockFigures, classificationOf, conflictTable, exclusionZones, mitigationZones } from "./regulator.server";
import { getUncertaintyRun, uncertaintyView } from "./uncertainty.server";
import { DEFAULT_EXCLUSION_BUFFERS_M, type ExclusionBuffers } from "./scoring/zones";
import type { Viewer } from "./sites.server";
import { can } from "./permissions";

/** The dataset kinds the review desk's figures read (conflicts, blocks, exclusion zones). */
const DESK_KINDS = ["development_footprint", "lease_blocks", "exclusions", "interpretations", "known_sites"];

/**
 * Why the desk figures (conflict table, block figures, zones) cannot be shown as frozen: they read
 * the project's classification and its datasets of the desk's kinds, so they are the snapshot's only
 * while those are as the snapshot froze them. Empty when unchanged.
 */
export async function deskChanges(snap: ReviewSnapshot): Promise<string[]> {
  const reasons: string[] = [];
  const [p] = await db().select({ classification: projects.classification }).from(projects).where(eq(projects.id, snap.project.id));
  if (!p || canonicalJson(p.classification) !== canonicalJson(snap.classification)) reasons.push("the project classification changed");
  const frozen = new Map(snap.datasets.map((d) => [d.id, d.sha256]));
  const now = await db().select({ id: datasets.id, kind: datasets.kind, name: datasets.name, sha256: datasets.sha256 }).from(datasets).where(eq(datasets.projectId, snap.project.id)).orderBy(asc(datasets.id));
  const added = now.filter((d) => DESK_KINDS.includes(d.kind) && frozen.get(d.id) !== d.sha256);
  if (added.length) reasons.push(`dataset${added.length === 1 ? "" : "s"} ${added.map((d) => `“${d.name}”`).join(", ")} arrived since`);
  return reasons;
}

/** The rasters a review's report draws as maps (those of the frozen scoring). */
export const REVIEW_MAPS = ["potential", "occupation", "preservation"] as const;
export type ReviewMap = (typeof REVIEW_MAPS)[number];

type ReviewLike = { id: number; snapshot: Record<string, unknown> | ReviewSnapshot };

/**
 * One published file of a frozen scoring or model, read from storage and checked against the
 * SHA-256 the snapshot froze: a file that is gone or no longer matches is refused (409), never drawn.
 * `what` names the run in messages ("Scoring 12", "Model 3").
 */
async function frozenRaster(what: string, row: { layerPrefix: string | null; result: unknown } | undefined, name: string, frozenSha256: string) {
  const file = ((row?.result as { files?: { name: string; file: string }[] } | null)?.files ?? []).find((f) => f.name === name);
  if (!row?.layerPrefix || !file) throw new UserError(409, "snapshot_broken", `${what}'s ${name} raster is no longer where the snapshot left it.`);
  const bytes = await store().getBytes(`${row.layerPrefix}/${file.file}`);
  const sha = createHash("sha256").update(bytes).digest("hex");
  if (sha !== frozenSha256) throw new UserError(409, "snapshot_broken", `${what}'s ${name} raster no longer matches the snapshot (SHA-256 ${sha.slice(0, 12)}… against the frozen ${frozenSha256.slice(0, 12)}…): it is not drawn.`);
  const { grid } = await readGeoTiff(bytes);
  return { values: grid.data as Float32Array, width: grid.spec.width, height: grid.spec.height, sha256: sha };
}

/** A raster of the review's frozen scoring (see {@link frozenRaster}). */
export async function frozenScoringRaster(review: ReviewLike, name: string) {
  const snap = review.snapshot as unknown as ReviewSnapshot;
  if (!snap.scoring) throw new UserError(404, "no_scoring", "This review looks at a trained model, not a scoring: it has no potential map of a weight set.");
  const frozen = snap.scoring.files.find((f) => f.name === name);
  if (!frozen) throw new UserError(404, "no_such_map", `The reviewed scoring has no ${name} raster (it has ${snap.scoring.files.map((f) => f.name).join(", ")}).`);
  const [s] = await db().select({ layerPrefix: scorings.layerPrefix, result: scorings.result }).from(scorings).where(eq(scorings.id, snap.scoring.id));
  return frozenRaster(`Scoring ${snap.scoring.id}`, s, name, frozen.sha256);
}

/**
 * The probability raster of a review's frozen model (see {@link frozenRaster}). The caller checks the
 * reader may see model rasters (design §9).
 */
export async function frozenModelRaster(review: ReviewLike) {
  const snap = review.snapshot as unknown as ReviewSnapshot;
  if (snap.subject.kind !== "model") throw new UserError(404, "no_model", "This review looks at a weight set, not a trained model: it has no probability map.");
  const subject = snap.subject.model;
  const frozen = subject.files.find((f) => f.name === "probability");
  if (!frozen) throw new UserError(404, "no_such_map", `The reviewed model has no probability raster (it has ${subject.files.map((f) => f.name).join(", ")}).`);
  const [m] = await db().select({ layerPrefix: models.layerPrefix, result: models.result }).from(models).where(eq(models.id, subject.id));
  return frozenRaster(`Model ${subject.id}`, m, "probability", frozen.sha256);
}

/** A PNG of the frozen model's probability (viridis over 0–1, the sea transparent), as its page draws it. */
export async function reviewModelMapPng(review: ReviewLike, maxSide = 900): Promise<Uint8Array<ArrayBuffer>> {
  const raster = await frozenModelRaster(review);
  const v = reduce(raster.values, raster.width, raster.height, maxSide, (n) => new Float32Array(n));
  const rgba = potentialRgba(v.data, null, v.w, v.h);
  return new Uint8Array(encodePng(v.w, v.h, new Uint8Array(rgba.buffer, rgba.byteOffset, rgba.byteLength)));
}

/** Nearest-sample reduction to at most `maxSide` cells on the longer side. O(output). */
function reduce<T extends Float32Array | Uint8Array>(a: T, width: number, height: number, maxSide: number, make: (n: number) => T) {
  const step = Math.max(1, Math.ceil(Math.max(width, height) / maxSide));
  const w = Math.ceil(width / step);
  const h = Math.ceil(height / step);
  if (step === 1) return { data: a, w, h };
  const out = make(w * h);
  for (let r = 0; r < h; r++) for (let c = 0; c < w; c++) out[r * w + c] = a[r * step * width + c * step];
  return { data: out, w, h };
}

/**
 * A PNG of one of the frozen scoring's rasters, coloured exactly as the map in the browser
 * (potentialRgba: viridis over 0–1, unassessed cells hatched grey, sea transparent).
 */
export async function reviewMapPng(review: ReviewLike, name: ReviewMap, maxSide = 900): Promise<Uint8Array<ArrayBuffer>> {
  const raster = await frozenScoringRaster(review, name);
  const snap = review.snapshot as unknown as ReviewSnapshot;
  let unassessed: Uint8Array | null = null;
  if (name !== "occupation" && snap.scoring!.files.some((f) => f.name === "unassessed")) {
    const u = await frozenScoringRaster(review, "unassessed");
    unassessed = new Uint8Array(u.values.length);
    for (let i = 0; i < u.values.length; i++) unassessed[i] = u.values[i] === 1 ? 1 : 0;
  }
  const v = reduce(raster.values, raster.width, raster.height, maxSide, (n) => new Float32Array(n));
  const u = unassessed ? reduce(unassessed, raster.width, raster.height, maxSide, (n) => new Uint8Array(n)).data : null;
  const rgba = potentialRgba(v.data, u, v.w, v.h);
  return new Uint8Array(encodePng(v.w, v.h, new Uint8Array(rgba.buffer, rgba.byteOffset, rgba.byteLength)));
}

/**
 * The classification the review froze, read as classification.ts expects it (regulator.server.ts's
 * reading of the stored form); one that cannot be read is reported, not guessed.
 */
export function frozenClassification(stored: Record<string, unknown>): { classification: ProjectClassification | null; problem: string | null } {
  try {
    return { classification: classificationOf(stored), problem: null };
  } catch (e) {
    if (e instanceof UserError) return { classification: null, problem: `The frozen classification cannot be read: ${e.message}` };
    throw e;
  }
}

function curveWords(curve: FactorCurve): string {
  const c = curve as unknown as Record<string, unknown>;
  const points = controlPointNames(curve)
    .map((n) => `${n} ${c[n]}`)
    .join(", ");
  const kind = curve.kind === "band" ? `band (${(curve as { shape: string }).shape} flanks)` : "direction" in curve ? `${curve.direction} ${curve.kind}` : curve.kind;
  return `${kind}: ${points}`;
}

const CITATIONS = {
  wlc: "Malczewski, J. (2000) On the use of weighted linear combination method in GIS: common and best practice approaches. Transactions in GIS 4(1), 5–22.",
  curves:
    "Eastman, J.R., Jin, W., Kyem, P.A.K. & Toledano, J. (1995) Raster procedures for multi-criteria/multi-objective decisions. Photogrammetric Engineering & Remote Sensing 61(5), 539–547; Malczewski, J. (1999) GIS and Multicriteria Decision Analysis. Wiley, New York.",
  ahp: "Saaty, T.L. (1980) The Analytic Hierarchy Process: Planning, Priority Setting, Resource Allocation. McGraw-Hill, New York; group judgements: Aczél, J. & Saaty, T.L. (1983) Journal of Mathematical Psychology 27, 93–102.",
};

/** Everything the printable report shows, from the review's frozen snapshot; `viewer` decides how known sites are counted (design §9). */
export async function reviewReport(review: ReviewView, viewer: Viewer | null = null) {
  const snap = review.snapshot;
  const { classification, problem: classificationProblem } = frozenClassification(snap.classification);

  // Methods: the weight-set version the review froze (an immutable row, checked against its hash).
  let methods: null | {
    versionHashMatches: boolean;
    factors: { factor: string; label: string; layer: string; weight: number; share: number; curve: string }[];
    ahp: null | { factors: string[]; weights: number[]; consistencyRatio: number };
    periods: WeightSetContent["periods"];
    preservation: WeightSetContent["preservation"];
    shelterRadiusM: number;
  } = null;
  if (snap.subject.kind === "weights") {
    const [v] = await db().select().from(weightSetVersions).where(eq(weightSetVersions.id, snap.subject.version.id));
    if (v) {
      const content = v.content as unknown as WeightSetContent;
      const total = content.factors.reduce((a, f) => a + f.weight, 0);
      let ahp = null;
      if (content.ahp) {
        try {
          const r = ahpWeights(matrixFromUpperTriangle(content.ahp.factors.length, content.ahp.upper));
          ahp = { factors: content.ahp.factors.map((f) => factorDef(f)?.label ?? f), weights: [...r.weights], consistencyRatio: r.consistencyRatio };
        } catch {
          ahp = null;
        }
      }
      methods = {
        versionHashMatches: v.contentHash === snap.subject.version.contentHash,
        factors: content.factors
          .filter((f) => f.weight > 0)
          .map((f) => ({ factor: f.factor, label: factorDef(f.factor)?.label ?? f.factor, layer: factorDef(f.factor)?.layer ?? "", weight: f.weight, share: total > 0 ? f.weight / total : 0, curve: curveWords(f.curve) })),
        ahp,
        periods: content.periods,
        preservation: content.preservation,
        shelterRadiusM: content.shelterRadiusM,
      };
    }
  }

  // Figures of the frozen scoring: its published statistics, and the class areas under the frozen classification.
  const [s] = snap.scoring ? await db().select({ result: scorings.result }).from(scorings).where(eq(scorings.id, snap.scoring.id)) : [];
  const stats = (s?.result ?? null) as null | {
    grid: { cellAreaKm2: number; width: number; height: number; cellSizeX: number; cellSizeY: number; epsg: number | null };
    occupiable: { cells: number; areaKm2: number };
    unassessed: { cells: number; areaKm2: number };
    potential: { cells: number; min: number | null; max: number | null; mean: number | null; median: number | null };
    notes: string[];
    preservation: { active: boolean; reason: string; evidence: null | { points: number; intact: number; truncated: number } };
    ageWeights?: { ageKa: number; weight: number }[];
  };
  let classes: null | { label: string; from: number | null; to: number | null; areaKm2: number; share: number }[] = null;
  let classesProblem: string | null = classificationProblem;
  if (snap.scoring && classification && stats) {
    try {
      const potential = await frozenScoringRaster(review, "potential");
      const occupation = await frozenScoringRaster(review, "occupation");
      const mask = new Uint8Array(occupation.values.length);
      for (let i = 0; i < mask.length; i++) mask[i] = occupation.values[i] === occupation.values[i] ? 1 : 0;
      const cellAreaM2 = stats.grid.cellAreaKm2 * 1e6;
      const a = classAreas(classification, potential.values, mask, cellAreaM2);
      const occupiableM2 = stats.occupiable.cells * cellAreaM2;
      const t = classification.thresholds;
      classes = classification.labels.map((label, c) => ({ label, from: c < t.length ? t[c] : null, to: c > 0 ? t[c - 1] : null, areaKm2: a.areaM2[c] / 1e6, share: occupiableM2 > 0 ? a.areaM2[c] / occupiableM2 : 0 }));
    } catch (e) {
      if (!(e instanceof UserError)) throw e;
      classesProblem = e.message;
    }
  }

  // The review desk's figures, on the frozen scoring with the frozen buffers, while their other inputs are unchanged.
  let desk: null | {
    conflicts: Awaited<ReturnType<typeof conflictTable>>;
    blocks: Awaited<ReturnType<typeof blockFigures>>;
    /** zones without their geometry: the report lists them, and exact find-spot outlines never leave the server here */
    exclusion: { buffersM: Record<string, number>; notes: string[]; zones: Record<string, unknown>[] };
    mitigation: { notes: string[]; zones: Record<string, unknown>[] };
  } = null;
  let deskProblem: string | null = null;
  if (!snap.scoring) deskProblem = "The review desk reads a weight-set scoring; this review looks at a trained model.";
  else {
    const changed = await deskChanges(snap);
    if (changed.length) deskProblem = `Not shown: ${changed.join("; ")}, so figures computed now would not be those of the snapshot.`;
    else {
      try {
        const buffers = (snap.exclusionBuffersM ?? DEFAULT_EXCLUSION_BUFFERS_M) as ExclusionBuffers;
        const opts = { scoringId: snap.scoring.id, viewer };
        const exclusion = await exclusionZones(snap.project.id, { viewer, buffers });
        const mitigation = await mitigationZones(snap.project.id, opts);
        desk = {
          conflicts: await conflictTable(snap.project.id, opts),
          blocks: await blockFigures(snap.project.id, opts),
          exclusion: { buffersM: exclusion.buffersM, notes: exclusion.notes, zones: exclusion.features.map((f) => f.properties) },
          mitigation: { notes: mitigation.notes, zones: mitigation.features.map((f) => f.properties) },
        };
      } catch (e) {
        if (!(e instanceof UserError)) throw e;
        deskProblem = e.message;
      }
    }
  }

  // The frozen uncertainty run's published result (immutable once published).
  let uncertainty: null | ReturnType<typeof uncertaintyView> = null;
  if (snap.uncertaintyRun) {
    const run = await getUncertaintyRun(snap.uncertaintyRun.id);
    uncertainty = run ? uncertaintyView(run) : null;
  }

  return {
    review,
    desk,
    deskProblem,
    uncertainty,
    classification,
    classificationProblem,
    methods,
    citations: CITATIONS,
    scoringStats: stats,
    classes,
    classesProblem,
    maps: snap.scoring ? REVIEW_MAPS.filter((m) => snap.scoring!.files.some((f) => f.name === m)) : [],
    // A model's map peaks on exact site positions: drawn only for roles that may see model rasters.
    modelMap:
      snap.subject.kind !== "model" || !snap.subject.model.files.some((f) => f.name === "probability")
        ? ("none" as const)
        : can(viewer?.role, "models.read")
          ? ("shown" as const)
          : ("withheld" as const),
  };
}
export type ReviewReport = Awaited<ReturnType<typeof reviewReport>>;
