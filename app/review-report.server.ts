// The printable report of a review (design §7): every figure is read from the snapshot's frozen ids
// — the published scoring's files (checked against the SHA-256s the snapshot froze), the
// weight-set version (an immutable row), the classification as frozen — never from "the newest".
// Sections whose source is not built yet say so plainly; no number is invented.
import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import { db } from "./db.server";
import { scorings, weightSetVersions } from "./db/schema";
import { UserError } from "./errors";
import { store } from "./storage.server";
import { readGeoTiff } from "./terrain/geotiff-read";
import { encodePng } from "./png.server";
import { potentialRgba } from "./components/scoring/render";
import { factorDef } from "./scoring/factors";
import { controlPointNames, type FactorCurve } from "./scoring/factor-curves";
import { ahpWeights, matrixFromUpperTriangle } from "./scoring/ahp";
import { classAreas, fixedClassification, type ProjectClassification } from "./scoring/classification";
import type { WeightSetContent } from "./scoring/weight-set";
import type { ReviewSnapshot, ReviewView } from "./reviews.server";

/** The rasters a review's report draws as maps (those of the frozen scoring). */
export const REVIEW_MAPS = ["potential", "occupation", "preservation"] as const;
export type ReviewMap = (typeof REVIEW_MAPS)[number];

type ReviewLike = { id: number; snapshot: Record<string, unknown> | ReviewSnapshot };

/**
 * A raster of the review's frozen scoring, read from storage and checked against the SHA-256 the
 * snapshot froze: a file that no longer matches is refused (409), never drawn.
 */
export async function frozenScoringRaster(review: ReviewLike, name: string) {
  const snap = review.snapshot as unknown as ReviewSnapshot;
  if (!snap.scoring) throw new UserError(404, "no_scoring", "This review looks at a trained model, not a scoring: it has no potential map of a weight set.");
  const frozen = snap.scoring.files.find((f) => f.name === name);
  if (!frozen) throw new UserError(404, "no_such_map", `The reviewed scoring has no ${name} raster (it has ${snap.scoring.files.map((f) => f.name).join(", ")}).`);
  const [s] = await db().select({ layerPrefix: scorings.layerPrefix, result: scorings.result }).from(scorings).where(eq(scorings.id, snap.scoring.id));
  const files = ((s?.result as { files?: { name: string; file: string }[] } | null)?.files ?? []) as { name: string; file: string }[];
  const file = files.find((f) => f.name === name);
  if (!s?.layerPrefix || !file) throw new UserError(409, "snapshot_broken", `Scoring ${snap.scoring.id}'s ${name} raster is no longer where the snapshot left it.`);
  const bytes = await store().getBytes(`${s.layerPrefix}/${file.file}`);
  const sha = createHash("sha256").update(bytes).digest("hex");
  if (sha !== frozen.sha256) throw new UserError(409, "snapshot_broken", `Scoring ${snap.scoring.id}'s ${name} raster no longer matches the snapshot (SHA-256 ${sha.slice(0, 12)}… against the frozen ${frozen.sha256.slice(0, 12)}…): it is not drawn.`);
  const { grid } = await readGeoTiff(bytes);
  return { values: grid.data as Float32Array, width: grid.spec.width, height: grid.spec.height, sha256: sha };
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
 * The classification the review froze, as classification.ts expects it (thresholds decreasing,
 * labels highest first). A stored classification with increasing thresholds (the table's default
 * is written lowest first) is read in the other order; one that cannot be read is reported, not guessed.
 */
export function frozenClassification(stored: Record<string, unknown>): { classification: ProjectClassification | null; problem: string | null } {
  const thresholds = Array.isArray(stored.thresholds) ? (stored.thresholds as unknown[]).map(Number) : [];
  const labels = Array.isArray(stored.labels) ? (stored.labels as unknown[]).map(String) : undefined;
  try {
    const increasing = thresholds.length > 1 && thresholds.every((t, i) => i === 0 || t > thresholds[i - 1]);
    const c = increasing ? fixedClassification([...thresholds].reverse(), labels ? [...labels].reverse() : undefined) : fixedClassification(thresholds, labels);
    return { classification: { ...c, kind: stored.kind === "quantile" ? "quantile" : "fixed", ...(stored.quantile ? { quantile: stored.quantile as ProjectClassification["quantile"] } : {}) }, problem: null };
  } catch (e) {
    return { classification: null, problem: `The frozen classification cannot be read: ${(e as Error).message}` };
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

/** Everything the printable report shows, from the review's frozen snapshot. */
export async function reviewReport(review: ReviewView) {
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

  return {
    review,
    classification,
    classificationProblem,
    methods,
    citations: CITATIONS,
    scoringStats: stats,
    classes,
    classesProblem,
    maps: snap.scoring ? REVIEW_MAPS.filter((m) => snap.scoring!.files.some((f) => f.name === m)) : [],
  };
}
export type ReviewReport = Awaited<ReturnType<typeof reviewReport>>;
