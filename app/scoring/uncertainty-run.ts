/**
 * One uncertainty run (design §7, issue 12; decision 403): from a reconstruction's layers and a
 * weight-set version to per-cell P(high), mean and spread, the shoreline envelope (share of draws at
 * sea), convergence, one-at-a-time sensitivity (Chen, Yu & Khan 2010) and variance-based indices
 * over the weights (Saltelli et al. 2010; Ligmann-Zielinska & Jankowski 2014). The heavy loop (cells ×
 * draws) goes through a `BlockRunner`: in one thread ({@link inlineBlockRunner}) or across worker
 * threads (jobs/uncertainty-pool.ts) — the same `accumulateDraws`, so the results are equal.
 *
 * Pure: no fs, DB or network; typed arrays in the loops.
 */
import { ScoringInputError } from "./errors.ts";
import { applyCurve, evaluateCurve } from "./factor-curves.ts";
import { factorDef, type FactorId } from "./factors.ts";
import { normaliseWeights } from "./weighted-sum.ts";
import { combinePeriod } from "./periods.ts";
import { shelterIndex } from "./shelter.ts";
import { oneAtATimeSensitivity, type SensitivityResult } from "./sensitivity.ts";
import { preservationModel, type GridShape, type LayerData, type PreservationResult } from "./potential.ts";
import { buildScoringInputs, scoredAges, targetAges, type EvidencePoint, type LayerSource, type ScoreTarget } from "./scoring-inputs.ts";
import type { WeightSetContent } from "./weight-set.ts";
import { Mulberry32 } from "./random.ts";
import {
  accumulateDraws,
  convergenceCheckpoints,
  convergenceTable,
  CONVERGENCE_FIELDS,
  createAccumulators,
  createLandscapeOut,
  drawLandscapeParams,
  drawWeights,
  landscapeDraw,
  landscapeFixed,
  summariseCells,
  weightVarianceIndices,
  type Accumulators,
  type ConvergencePoint,
  type DrawBlock,
  type LandscapeBase,
  type LandscapeParams,
  type LandscapeSpread,
  type VarianceIndices,
  type WeightPerturbation,
} from "./monte-carlo.ts";

/** Runs `accumulateDraws` over every cell for one block and returns the summed convergence counts. */
export type BlockRunner = (block: DrawBlock, acc: Accumulators) => Promise<Float64Array>;

/** Common practice, no source. The block in this thread, all cells at once. O(n·draws·k). */
export const inlineBlockRunner: BlockRunner = async (block, acc) => {
  const conv = new Float64Array(block.checkpoints.length * CONVERGENCE_FIELDS);
  accumulateDraws(block, acc, 0, acc.n, conv, new Float64Array(block.scores.length));
  return conv;
};

export interface UncertaintySettings {
  draws: number;
  seed: number;
  perturbation: WeightPerturbation;
  landscape: LandscapeSpread;
  /** landscape draws (blocks of weight draws share one); 1 … draws */
  landscapeDraws: number;
  /** lower bound of the high class */
  threshold: number;
}

/** What the landscape draws need beyond the layers (from the manifest and the sea-level curve). */
export interface LandscapeContext {
  seaLevelM: number | null;
  sigmaM: number;
  tidalRangeM: number;
  shorelineTidalLevel: number;
  streamThresholdKm2: number;
}

export interface UncertaintyOutcome {
  pHigh: Float32Array;
  mean: Float32Array;
  spread: Float32Array;
  /** share of landscape draws in which the cell is sea at the age (null for periods or without landscape draws) */
  pSea: Float32Array | null;
  convergence: ConvergencePoint[];
  oat: SensitivityResult;
  variance: VarianceIndices | null;
  factors: { factor: FactorId; label: string; weight: number; varies: boolean }[];
  landscape: { draws: number; params: LandscapeParams[]; varied: string[] } | null;
  /** base potential from the factor layers (equals scoreTarget's up to Float32 rounding) */
  basePotential: Float32Array;
  notes: string[];
}

interface Hooks {
  progress?: (fraction: number, step: string) => void;
  throwIfCancelled?: () => void;
}

/**
 * Ligmann-Zielinska & Jankowski (2014) (Monte Carlo over weights, variance-based indices); Chen, Yu &
 * Khan (2010) (one-at-a-time); decision 403 (landscape draws).
 *
 * Draws all weight vectors from the seed, then runs the landscape draws in blocks: each block redraws
 * the landscape (age targets only), re-derives the factor scores that depend on it (height above
 * sea, distance to the shoreline and to a stream, shelter) and preservation when the erosion depth
 * varies, and accumulates its share of the weight draws through `runBlock`. Preconditions: as
 * `scoreTarget`; settings checked by the caller (see uncertainty.server.ts). Throws
 * ScoringInputError for inputs a person can fix. Complexity O(n·draws·k / threads) plus O(n) per
 * landscape draw and distance, plus OAT O(n·k·41).
 */
export async function runUncertainty(
  content: WeightSetContent,
  grid: GridShape & { originX: number; originY: number },
  agesKa: readonly number[],
  target: ScoreTarget,
  get: LayerSource,
  evidencePoints: readonly EvidencePoint[],
  landscapeCtx: LandscapeContext | null,
  settings: UncertaintySettings,
  runBlock: BlockRunner,
  hooks: Hooks = {},
): Promise<UncertaintyOutcome> {
  const n = grid.width * grid.height;
  const notes: string[] = [];
  const rng = new Mulberry32(settings.seed);
  const need = targetAges(target, agesKa);
  const scored = scoredAges(target, agesKa);
  const { ages, preservation: presInputs } = buildScoringInputs(content, grid, agesKa, need, get, evidencePoints, scored);
  const basePres: PreservationResult = preservationModel(content, grid, presInputs);
  const pres0 = basePres.active ? basePres.score : null;

  // the active factors (weight > 0) and their base scores
  const labels = content.factors.map((f) => factorDef(f.factor)?.label ?? f.factor);
  const w0 = normaliseWeights(content.factors.map((f, k) => ({ name: labels[k], weight: f.weight })));
  const active: { k: number; factor: FactorId; label: string; weight: number }[] = [];
  content.factors.forEach((f, k) => {
    if (w0[k] > 0) active.push({ k, factor: f.factor, label: labels[k], weight: w0[k] });
  });
  const curveOf = (k: number) => content.factors[k].curve;
  const valuesOf = (d: LayerData): Float32Array => {
    if (d.kind === "values") return d.values;
    throw new ScoringInputError("The uncertainty run reads layers as values.");
  };
  const hasValid = (v: Float32Array) => {
    for (let i = 0; i < v.length; i++) if (v[i] === v[i]) return true;
    return false;
  };

  const isAge = target.kind === "age";
  const landscapeOn = isAge && !landscapeFixed(settings.landscape) && landscapeCtx !== null && landscapeCtx.seaLevelM !== null;
  if (!isAge && !landscapeFixed(settings.landscape)) notes.push("Landscape draws are made for a single age only: this period's run varies the weights (and the erosion depth is held).");
  if (isAge && !landscapeFixed(settings.landscape) && (landscapeCtx === null || landscapeCtx.seaLevelM === null))
    notes.push("The reconstruction's sea level is not one number at this age (regional curves or grids): the landscape is held at the base.");

  // Per age: the factor score layers (curve applied), NaN where not occupiable at that age.
  const activeKept: typeof active = [];
  const baseLayer = new Map<FactorId, Float32Array>();
  const scoreAt = (a: (typeof ages)[number], f: (typeof active)[number]): Float32Array | null => {
    if (f.factor === "shelter") return applyCurve(curveOf(f.k), shelterIndex(a.landClass, grid, content.shelterRadiusM));
    const d = a.layers[f.factor];
    const v = d ? valuesOf(d) : null;
    if (!v || !hasValid(v)) {
      if (f.factor.startsWith("dist_")) return new Float32Array(n).fill(evaluateCurve(curveOf(f.k), Infinity));
      return null;
    }
    if (isAge) baseLayer.set(f.factor, v);
    return applyCurve(curveOf(f.k), v);
  };
  let scores: Float32Array[] = [];
  let landClass: Uint8Array;
  if (isAge) {
    const a = ages[0];
    for (const f of active) {
      const s = scoreAt(a, f);
      if (s === null) {
        notes.push(`No data for ${f.label.toLowerCase()} at ${a.ageKa} ka: it is left out and the other weights are rescaled to sum 1.`);
        continue;
      }
      activeKept.push(f);
      scores.push(s);
    }
    landClass = a.landClass;
  } else {
    const period = target.period;
    const window = { youngKa: period.youngKa, oldKa: period.oldKa };
    const lacking = new Set<number>();
    const perFactor: Float32Array[][] = active.map(() => []);
    for (const a of ages) {
      const scoredHere = scored.includes(a.ageKa);
      active.forEach((f, q) => {
        if (!scoredHere) {
          perFactor[q].push(new Float32Array(0));
          return;
        }
        const s = scoreAt(a, f);
        if (s === null) {
          lacking.add(q);
          perFactor[q].push(new Float32Array(n).fill(NaN));
          return;
        }
        const lc = a.landClass;
        for (let i = 0; i < n; i++) if (lc[i] !== 0 && lc[i] !== 2) s[i] = NaN;
        perFactor[q].push(s);
      });
    }
    active.forEach((f, q) => {
      if (lacking.has(q)) {
        notes.push(`No data for ${f.label.toLowerCase()} at some ages of the period: it is left out of this run.`);
        return;
      }
      const layers = perFactor[q].map((s) => (s.length ? s : new Float32Array(n).fill(NaN)));
      activeKept.push(f);
      scores.push(combinePeriod(layers, ages.map((a) => a.ageKa), window, period.rule));
    });
    // every cell with a period score is scored; NaN scores decide the rest
    landClass = new Uint8Array(n);
    const lc0 = ages[0].landClass;
    for (let i = 0; i < n; i++) landClass[i] = lc0[i] === 255 ? 255 : 0;
  }
  if (activeKept.length === 0) throw new ScoringInputError("Nothing to score: every factor with a weight above 0 has no data here.", "factors");
  const wKept = normaliseWeights(activeKept.map((f) => ({ name: f.label, weight: f.weight })));
  const k = activeKept.length;

  // shared buffers: the scores the kernel reads, rewritten per landscape draw
  const sharedF32 = (src: Float32Array) => {
    const a = new Float32Array(new SharedArrayBuffer(n * 4));
    a.set(src);
    return a;
  };
  const sScores = scores.map(sharedF32);
  const sPres = pres0 ? sharedF32(pres0) : null;
  const sLand = new Uint8Array(new SharedArrayBuffer(n));
  sLand.set(landClass);
  scores = [];

  // base potential, OAT (on base scores × preservation, occupiable only)
  hooks.progress?.(0.05, "one-at-a-time sensitivity");
  const premult = sScores.map((s) => {
    const o = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      const c = sLand[i];
      o[i] = c === 0 || c === 2 ? s[i] * (sPres ? sPres[i] : 1) : NaN;
    }
    return o;
  });
  const basePotential = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const c = sLand[i];
    if (c !== 0 && c !== 2) {
      basePotential[i] = NaN;
      continue;
    }
    let occ = 0;
    for (let q = 0; q < k; q++) occ += wKept[q] * sScores[q][i];
    basePotential[i] = Math.fround(Math.fround(occ) * (sPres ? sPres[i] : 1));
  }
  const oat = oneAtATimeSensitivity(
    activeKept.map((f, q) => ({ name: f.label, weight: wKept[q], scores: premult[q] })),
    null,
    { highThreshold: settings.threshold },
  );
  hooks.throwIfCancelled?.();

  // variance-based indices on a sample of scored cells, where the draws allow
  let variance: VarianceIndices | null = null;
  const nBase = Math.floor(settings.draws / (k + 2));
  if (k >= 2 && nBase >= 16) {
    hooks.progress?.(0.1, "variance-based sensitivity");
    const scoredCells: number[] = [];
    for (let i = 0; i < n; i++) if (basePotential[i] === basePotential[i]) scoredCells.push(i);
    const sampleRng = new Mulberry32((settings.seed ^ 0x5bd1e995) >>> 0);
    const m = Math.min(2000, scoredCells.length);
    // partial Fisher–Yates: the first m of a seeded shuffle
    for (let j = 0; j < m; j++) {
      const r = j + sampleRng.nextInt(scoredCells.length - j);
      const t = scoredCells[j];
      scoredCells[j] = scoredCells[r];
      scoredCells[r] = t;
    }
    if (m > 0) {
      const sample = sScores.map((s) => Float32Array.from({ length: m }, (_, j) => s[scoredCells[j]]));
      const sp = sPres ? Float32Array.from({ length: m }, (_, j) => sPres[scoredCells[j]]) : null;
      variance = weightVarianceIndices(wKept, settings.perturbation, sample, sp, settings.threshold, Math.min(nBase, 512), sampleRng);
    }
  } else notes.push(`Variance-based indices need at least ${16 * (k + 2)} draws for ${k} factors (N = 16 base samples × (k + 2) runs); this run has ${settings.draws}.`);
  hooks.throwIfCancelled?.();

  // the weight draws (all of them, from the seed), on a shared buffer
  const wd = drawWeights(wKept, settings.perturbation, settings.draws, rng);
  const sWeights = new Float64Array(new SharedArrayBuffer(wd.weights.byteLength));
  sWeights.set(wd.weights);
  const acc = createAccumulators(n, true);
  const checkpoints = convergenceCheckpoints(settings.draws);
  const conv = new Float64Array(checkpoints.length * CONVERGENCE_FIELDS);

  // landscape
  const L = landscapeOn ? Math.max(1, Math.min(settings.landscapeDraws, settings.draws)) : 1;
  let pSeaCount: Int32Array | null = null;
  let base: LandscapeBase | null = null;
  const lParams: LandscapeParams[] = [];
  const varied: string[] = [];
  const spread = settings.landscape;
  const landscapeRng = new Mulberry32((settings.seed + 0x9e3779b9) >>> 0);
  if (landscapeOn) {
    const a = ages[0];
    const spill = get("spill_elevation", null);
    if (!spill) throw new ScoringInputError("The reconstruction has no spill elevation layer: landscape draws need it.");
    const cover = get("cover_thickness", null);
    const area = get("contributing_area", a.ageKa);
    base = {
      width: grid.width,
      height: grid.height,
      cellSizeX: grid.cellSizeX,
      cellSizeY: grid.cellSizeY,
      landClass: a.landClass,
      spill: valuesOf(spill),
      seaLevelM: landscapeCtx!.seaLevelM!,
      sigmaM: landscapeCtx!.sigmaM,
      tidalRangeM: landscapeCtx!.tidalRangeM,
      shorelineTidalLevel: landscapeCtx!.shorelineTidalLevel,
      coverThickness: cover ? valuesOf(cover) : null,
      contributingArea: area ? valuesOf(area) : null,
      streamThresholdKm2: landscapeCtx!.streamThresholdKm2,
    };
    pSeaCount = new Int32Array(n);
    if (spread.sigmaScale > 0) {
      if (base.sigmaM > 0) varied.push("sea level within its σ");
      else notes.push("The sea-level curve gives no σ at this age: sea level varies only by the datum offset.");
    }
    if (spread.datumOffsetM > 0) varied.push("datum offset");
    if (spread.velocityRel > 0) {
      if (base.coverThickness) varied.push("sediment velocity");
      else notes.push("The reconstruction has no buried horizon: the sediment velocity has nothing to change.");
    }
    if (spread.streamThresholdFactor > 1) {
      if (base.contributingArea) varied.push("stream threshold");
      else notes.push("The reconstruction has no contributing area at this age: the stream threshold is held.");
    }
    if (spread.erosionDepthRel > 0) {
      if (basePres.active) varied.push("erosion depth");
      else notes.push("Preservation is not active: the erosion depth changes nothing.");
    }
  }
  const idx = (f: FactorId) => activeKept.findIndex((x) => x.factor === f);
  const iHas = idx("height_above_sea");
  const iShore = idx("dist_shoreline");
  const iStream = idx("dist_stream");
  const iShelter = idx("shelter");
  const seaMoves = spread.sigmaScale > 0 || spread.datumOffsetM > 0 || spread.velocityRel > 0;
  const want = { shoreline: seaMoves && iShore >= 0 && baseLayer.has("dist_shoreline"), streams: iStream >= 0 && base?.contributingArea != null && (spread.streamThresholdFactor > 1 || seaMoves) };
  const lout = landscapeOn ? createLandscapeOut(n, want) : null;
  const tmp = new Float32Array(n);

  for (let b = 0; b < L; b++) {
    hooks.throwIfCancelled?.();
    const from = Math.floor((b * settings.draws) / L);
    const to = Math.floor(((b + 1) * settings.draws) / L);
    if (to <= from) continue;
    if (landscapeOn && base && lout) {
      const p = drawLandscapeParams(spread, base.streamThresholdKm2, content.preservation.shorefaceErosion.erosionDepthM, landscapeRng);
      lParams.push(p);
      landscapeDraw(base, p, spread.sigmaScale, lout, want);
      sLand.set(lout.landClass);
      for (let i = 0; i < n; i++) if (lout.landClass[i] === 1) pSeaCount![i]++;
      if (iHas >= 0) {
        const v = baseLayer.get("height_above_sea")!;
        for (let i = 0; i < n; i++) tmp[i] = v[i] + lout.heightShift[i];
        applyCurve(curveOf(activeKept[iHas].k), tmp, sScores[iHas]);
      }
      if (want.shoreline && lout.distShoreline) applyCurve(curveOf(activeKept[iShore].k), lout.distShoreline, sScores[iShore]);
      if (want.streams && lout.distStream) {
        if (hasValid(lout.distStream)) applyCurve(curveOf(activeKept[iStream].k), lout.distStream, sScores[iStream]);
        else sScores[iStream].fill(evaluateCurve(curveOf(activeKept[iStream].k), Infinity));
      }
      if (iShelter >= 0 && seaMoves) applyCurve(curveOf(activeKept[iShelter].k), shelterIndex(lout.landClass, grid, content.shelterRadiusM), sScores[iShelter]);
      if (sPres && spread.erosionDepthRel > 0 && basePres.active) {
        const c2: WeightSetContent = { ...content, preservation: { ...content.preservation, shorefaceErosion: { ...content.preservation.shorefaceErosion, erosionDepthM: p.erosionDepthM } } };
        const pr = preservationModel(c2, grid, presInputs);
        if (pr.score) sPres.set(pr.score);
      }
    }
    const block: DrawBlock = { scores: sScores, preservation: sPres, landClass: sLand, weights: sWeights, from, to, threshold: settings.threshold, checkpoints };
    const c = await runBlock(block, acc);
    for (let q = 0; q < conv.length; q++) conv[q] += c[q];
    hooks.progress?.(0.15 + 0.75 * (to / settings.draws), "drawing");
  }

  const summary = summariseCells(acc, settings.draws);
  let pSea: Float32Array | null = null;
  if (pSeaCount && lParams.length) {
    pSea = new Float32Array(n);
    const lc0 = ages[0].landClass;
    for (let i = 0; i < n; i++) pSea[i] = lc0[i] === 255 ? NaN : pSeaCount[i] / lParams.length;
  }
  return {
    ...summary,
    pSea,
    convergence: convergenceTable(checkpoints, conv),
    oat,
    variance,
    factors: activeKept.map((f, q) => ({
      factor: f.factor,
      label: f.label,
      weight: wKept[q],
      varies: landscapeOn && ((q === iHas && seaMoves) || (q === iShore && want.shoreline) || (q === iStream && want.streams) || (q === iShelter && seaMoves)),
    })),
    landscape: landscapeOn ? { draws: lParams.length, params: lParams, varied } : null,
    basePotential,
    notes,
  };
}
