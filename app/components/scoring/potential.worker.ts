/// <reference lib="webworker" />
// The weighing page's scoring worker: keeps the reconstruction's display layers (8-bit codes) and
// re-scores the display grid whenever a weight, a curve or the target changes — with the very code
// the scoring job runs (app/scoring/scoring-inputs.ts), so its result equals the server's.
import { createScoringCache, scoreTarget, type EvidencePoint, type LayerSource } from "~/scoring/scoring-inputs";
import { potentialChecksum, type LayerData } from "~/scoring/potential";
import { spearmanRankCorrelation, topCellsInCommon } from "~/scoring/rank-compare";
import { factorCorrelations } from "~/scoring/correlation";
import { shelterIndex } from "~/scoring/shelter";
import { classLayer } from "~/scoring/scoring-inputs";
import { factorDef } from "~/scoring/factors";
import { ScoringInputError } from "~/scoring/errors";
import { differenceRgba, potentialRgba, spreadRgba } from "./render";
import { layerKey, type FromWorker, type ToWorker } from "./protocol";

const layers = new Map<string, LayerData>();
// decoded class layers, the preservation result and scratch buffers, kept between re-scores
const cache = createScoringCache();
const compareCache = createScoringCache();
// evidence arrives anew with every message: keep one array while its content stays the same, so the
// cached preservation result is reused
// the comparison set's potential, kept while the set, the target and the evidence stay the same
let compared: { key: string; potential: Float32Array } | null = null;
let evidence: EvidencePoint[] = [];
let evidenceJson = "[]";
function stableEvidence(next: EvidencePoint[]): EvidencePoint[] {
  const json = JSON.stringify(next);
  if (json !== evidenceJson) {
    evidence = next;
    evidenceJson = json;
  }
  return evidence;
}

const source: LayerSource = (layer, ageKa) => layers.get(layerKey(layer, ageKa));

function post(msg: FromWorker, transfer: Transferable[] = []) {
  (self as unknown as DedicatedWorkerGlobalScope).postMessage(msg, transfer);
}

function fail(id: number, e: unknown) {
  if (e instanceof ScoringInputError) post({ type: "error", id, message: e.message, field: e.field });
  else post({ type: "error", id, message: e instanceof Error ? e.message : String(e) });
}

self.onmessage = (ev: MessageEvent<ToWorker>) => {
  const msg = ev.data;
  if (msg.type === "layers") {
    for (const l of msg.layers) layers.set(l.key, { kind: "codes", codes: l.raster.codes, scale: l.raster.scale, offset: l.raster.offset, nodataCode: l.raster.nodataCode });
    compared = null;
    return;
  }
  if (msg.type === "score") {
    try {
      const t0 = performance.now();
      const { grid } = msg;
      const ev = stableEvidence(msg.evidence);
      const r = scoreTarget(msg.content, grid, msg.agesKa, msg.target, source, ev, cache);
      const checksum = potentialChecksum(r.potential);
      let occupiable = 0;
      let unassessed = 0;
      let sum = 0;
      let scored = 0;
      let high = 0;
      for (let i = 0; i < r.potential.length; i++) {
        const v = r.potential[i];
        if (r.unassessed[i] === 1) unassessed++;
        if (v === v) {
          scored++;
          sum += v;
          if (v >= 0.5) high++;
        }
        if (v === v || r.unassessed[i] === 1) occupiable++;
      }
      let rgba: Uint8ClampedArray;
      let compare: Extract<FromWorker, { type: "scored" }>["compare"] = null;
      if (msg.compare) {
        // the other set does not change while this one is weighed: score it once per set, target and evidence
        const key = JSON.stringify([msg.compare.content, msg.target, msg.agesKa]) + evidenceJson;
        if (!compared || compared.key !== key) compared = { key, potential: scoreTarget(msg.compare.content, grid, msg.agesKa, msg.target, source, ev, compareCache).potential.slice() };
        const other = compared;
        rgba = differenceRgba(r.potential, other.potential, grid.width, grid.height);
        let dsum = 0;
        let dn = 0;
        for (let i = 0; i < r.potential.length; i++) {
          const d = r.potential[i] - other.potential[i];
          if (d === d) {
            dsum += d;
            dn++;
          }
        }
        let spearman: number | null = null;
        let topShare: number | null = null;
        try {
          spearman = spearmanRankCorrelation(r.potential, other.potential).rho;
        } catch {
          spearman = null;
        }
        try {
          topShare = topCellsInCommon(r.potential, other.potential, msg.compare.topN).share;
        } catch {
          topShare = null;
        }
        compare = { spearman, topShare, topN: msg.compare.topN, otherChecksum: potentialChecksum(other.potential), meanDifference: dn ? dsum / dn : null };
      } else {
        rgba = potentialRgba(r.potential, r.preservation.active ? r.unassessed : null, grid.width, grid.height);
      }
      const ms = performance.now() - t0;
      post(
        {
          type: "scored",
          id: msg.id,
          target: msg.target,
          width: grid.width,
          height: grid.height,
          rgba,
          potential: r.potential.slice(),
          unassessed: r.unassessed.slice(),
          checksum,
          notes: r.notes,
          preservation: { active: r.preservation.active, reason: r.preservation.reason },
          stats: { occupiable, unassessed, mean: scored ? sum / scored : null, high },
          compare,
          ms,
        },
        // the potential and mask may live in the cache's scratch: they are copied, the picture moved
        [rgba.buffer],
      );
    } catch (e) {
      fail(msg.id, e);
    }
    return;
  }
  if (msg.type === "disagree") {
    try {
      const t0 = performance.now();
      const { grid } = msg;
      const ev = stableEvidence(msg.evidence);
      const maps = msg.contents.map((c) => scoreTarget(c, grid, msg.agesKa, msg.target, source, ev, compareCache).potential.slice());
      const n = grid.width * grid.height;
      const spread = new Float32Array(n);
      let cells = 0;
      let sumSpread = 0;
      let maxSpread = 0;
      for (let i = 0; i < n; i++) {
        let mean = 0;
        let ok = maps.length > 0;
        for (let k = 0; k < maps.length; k++) {
          const v = maps[k][i];
          if (v !== v) { ok = false; break; }
          mean += v;
        }
        if (!ok) { spread[i] = NaN; continue; }
        mean /= maps.length;
        let ss = 0;
        for (let k = 0; k < maps.length; k++) ss += (maps[k][i] - mean) ** 2;
        // population standard deviation across the proposals (each member counts once)
        const sd = Math.sqrt(ss / maps.length);
        spread[i] = sd;
        cells++;
        sumSpread += sd;
        if (sd > maxSpread) maxSpread = sd;
      }
      const scaleTop = Math.max(0.05, maxSpread);
      const rgba = spreadRgba(spread, scaleTop);
      const topShare = maps.map((a, i) =>
        maps.map((b, j) => {
          if (i === j) return 1;
          try {
            return topCellsInCommon(a, b, Math.min(msg.topN, cells)).share;
          } catch {
            return null;
          }
        }),
      );
      post(
        { type: "disagreed", id: msg.id, width: grid.width, height: grid.height, rgba, maxSpread: scaleTop, meanSpread: cells ? sumSpread / cells : null, cells, topShare, topN: Math.min(msg.topN, cells), checksums: maps.map(potentialChecksum), ms: performance.now() - t0 },
        [rgba.buffer],
      );
    } catch (e) {
      fail(msg.id, e);
    }
    return;
  }
  if (msg.type === "correlate") {
    try {
      const lc = source("land_class", msg.ageKa);
      if (!lc) throw new ScoringInputError(`No land and sea classes at ${msg.ageKa} ka.`);
      const landClass = classLayer(lc);
      const mask = new Uint8Array(landClass.length);
      for (let i = 0; i < mask.length; i++) mask[i] = landClass[i] === 0 || landClass[i] === 2 ? 1 : 0;
      const inputs: { factor: (typeof msg.factors)[number]; data: LayerData }[] = [];
      for (const f of msg.factors) {
        const def = factorDef(f);
        if (!def) continue;
        if (f === "shelter") {
          inputs.push({ factor: f, data: { kind: "values", values: shelterIndex(landClass, msg.grid, msg.shelterRadiusM) } });
          continue;
        }
        const d = source(def.layer, def.perAge ? msg.ageKa : null);
        if (d) inputs.push({ factor: f, data: d });
      }
      const c = factorCorrelations(inputs, mask, { maxSamples: 20000, seed: 1 });
      post({ type: "correlated", id: msg.id, factors: c.factors, pearson: c.pearson, spearman: c.spearman, samples: c.samples });
    } catch (e) {
      fail(msg.id, e);
    }
  }
};
