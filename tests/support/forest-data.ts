/**
 * A small deterministic world for the forest's tests and benchmark: a grid whose coast moves east
 * as the age gets older, factor layers (factor 0 is the distance to that age's shoreline, the one
 * the sites follow; factor 1 a smooth field with a few nodata cells; the rest noise), a search-effort
 * mask of survey-line corridors and one cored area, and evidence: in-situ sites placed with a
 * preference for the coast, plus derived, trawled and dredged finds, cores with and without
 * archaeological material. Invented data, seeded (Mulberry32).
 */
import { FACTOR_IDS, type FactorId } from "../../app/scoring/factors.ts";
import type { Evidence, FactorStack } from "../../app/scoring/forest.ts";
import type { AgeLandMask } from "../../app/scoring/background.ts";
import { Mulberry32 } from "../../app/scoring/random.ts";

export interface ForestWorld {
  grid: { width: number; height: number; cellSizeX: number; cellSizeY: number };
  stack: FactorStack;
  effort: Uint8Array;
  landByAge: AgeLandMask[];
  evidence: Evidence[];
  /** in-situ sites per age, in the order of `landByAge` */
  sitesPerAge: number[];
}

export function forestWorld(o: { width?: number; height?: number; cellSizeM?: number; factors?: number; sites?: number; seed?: number } = {}): ForestWorld {
  const width = o.width ?? 80;
  const height = o.height ?? 80;
  const cell = o.cellSizeM ?? 50;
  const p = o.factors ?? 4;
  const sites = o.sites ?? 40;
  const rng = new Mulberry32(o.seed ?? 7);
  const n = width * height;
  const ages = [12, 10];
  const factorIds = FACTOR_IDS.slice(0, p) as FactorId[];
  const shoreCol = (ageKa: number) => Math.round(width * (ageKa === 12 ? 0.85 : 0.65));
  const statics: Float32Array[] = [];
  for (let f = 1; f < p; f++) {
    const l = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      const r = Math.floor(i / width);
      const c = i - r * width;
      l[i] = f === 1 ? Math.sin(r / 7) * Math.cos(c / 9) * 10 : rng.next() * 100;
    }
    if (f === 1) for (let k = 0; k < 5; k++) l[k * 997 + 13] = NaN; // nodata
    statics.push(l);
  }
  const landByAge: AgeLandMask[] = [];
  const stackAges: FactorStack["ages"][number][] = [];
  for (const ageKa of ages) {
    const sc = shoreCol(ageKa);
    const dist = new Float32Array(n);
    const land = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      const c = i % width;
      dist[i] = Math.abs(c - sc) * cell;
      land[i] = c < sc ? 1 : 0;
    }
    landByAge.push({ ageKa, land });
    stackAges.push({ ageKa, layers: [dist, ...statics] });
  }
  // survey-line corridors every 8 rows (3 rows wide) and one cored area in the north-west
  const effort = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const r = Math.floor(i / width);
    const c = i - r * width;
    if (r % 8 < 3 || (r < height / 4 && c < width / 4)) effort[i] = 1;
  }
  const evidence: Evidence[] = [];
  const sitesPerAge = [0, 0];
  let made = 0;
  let guard = 0;
  while (made < sites && guard++ < 1_000_000) {
    const a = made % 2;
    const i = rng.nextInt(n);
    if (!effort[i] || !landByAge[a].land[i]) continue;
    const d = stackAges[a].layers[0][i];
    if (rng.next() > Math.exp(-d / 300)) continue;
    evidence.push({ kind: "site", id: `S${made + 1}`, context: "in_situ", positionAdequate: true, cell: i, ageKa: ages[a] });
    sitesPerAge[a]++;
    made++;
  }
  const any = () => {
    for (;;) {
      const i = rng.nextInt(n);
      if (effort[i] && landByAge[0].land[i]) return i;
    }
  };
  evidence.push({ kind: "site", id: "D1", context: "derived", positionAdequate: true, cell: any(), ageKa: 12 });
  evidence.push({ kind: "site", id: "T1", context: "trawled", positionAdequate: true, cell: any(), ageKa: 12 });
  evidence.push({ kind: "site", id: "R1", context: "dredged", positionAdequate: true, cell: any(), ageKa: 10 });
  evidence.push({ kind: "core", id: "C-neg-1", archaeologicalMaterial: false, cell: any(), ageKa: 12 });
  evidence.push({ kind: "core", id: "C-neg-2", archaeologicalMaterial: false, cell: any(), ageKa: 10 });
  evidence.push({ kind: "core", id: "C-pos-1", archaeologicalMaterial: true, cell: any(), ageKa: 12 });
  return { grid: { width, height, cellSizeX: cell, cellSizeY: cell }, stack: { factorIds, ages: stackAges }, effort, landByAge, evidence, sitesPerAge };
}
