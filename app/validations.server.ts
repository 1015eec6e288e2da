// Validation in the product (design §5, issue 10): a scoring's potential raster — or a trained
// model's probability raster, through validateRaster — held against the project's in-situ sites and
// cores with archaeological material, under the one project classification: Kvamme's gain per
// class and cumulative, the site-capture curve and ROC AUC against background cells, with bootstrap
// intervals and the number of sites always given. Results are stored in `validations`, keyed by a
// hash of what went in, so repeated requests reuse them and two subjects compare on the same sites.
//
// Also here: the project classification (GET/PUT) and the hold-out set (membership, reveal, hide).
//
// Confidentiality (design §9): who sees a site's position is decided by sites.server.ts `sees`; a
// validation response carries coordinates only for records the caller sees exactly, never for
// viewers; records withheld by a custodian are not used at all; held-out sites are left out of
// every response while the hold-out is hidden, and the response says only how many there are.
import { createHash } from "node:crypto";
import { and, asc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import { targetResultEvidence } from "./target-results.server";
import { db } from "./db.server";
import { datasets, projects, reconstructions, siteRecords, validations } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { getJson, store } from "./storage.server";
import { readGeoTiff } from "./terrain/geotiff-read";
import { can, type Role } from "./permissions";
import { custodianFor, sees } from "./sites.server";
import { getScoring, targetLabel, type ScoringTarget, type ScoringWithRun } from "./scorings.server";
import type { Manifest } from "./terrain/reconstruct";
import { ScoringInputError } from "./scoring/errors";
import { classAreas, classOf, fixedClassification, quantileClassification, type ProjectClassification } from "./scoring/classification";
import { bootstrapAuc, bootstrapGain, gainByClass, siteCaptureCurve, type Interval } from "./scoring/validation";
import { sampleIndices } from "./scoring/background";
import { polygonMask, polygonsOfGeometries } from "./scoring/polygon-mask";
import { hasArchaeologicalMaterial } from "./evidence/material";

/** Bump when a validation's meaning changes for the same inputs: stored results are then not reused. */
export const VALIDATION_VERSION = "1";

/** Bootstrap settings of every validation (seeded: the same inputs give the same intervals). */
export const VALIDATION_BOOTSTRAP = { replicates: 1000, seed: 20_240_611, level: 0.95 } as const;

/** AUC background: at most this many cells of the area, a seeded random sample when there are more. */
export const MAX_BACKGROUND_CELLS = 50_000;

export const CAUTION =
  "A planning aid, not evidence: a low class is not evidence of absence, and unassessed ground is unknown, not low. " +
  "With few sites the intervals are wide — read the number of sites beside every figure.";

/** The age rule, in words for the page and the API. */
export const AGE_RULE =
  "A site or core counts for a raster when its calibrated date range (cal BP) overlaps the ages the raster stands for, both ends included: " +
  "for a single reconstructed age, from halfway to the next younger reconstructed age to halfway to the next older one " +
  "(mirrored at the youngest and oldest ages; ±0.5 ka when there is only one); for a period, its own window.";

type Viewer = { userId: number; role: Role };

// ---- the project classification ----------------------------------------------------------------

const labelSchema = z.string({ error: "A class name must be text." }).trim().min(1, "A class name may not be empty.").max(40, "A class name may be at most 40 characters.");

/**
 * PUT /api/projects/:projectId/classification. Thresholds and shares are given from the lowest class
 * up (as stored); labels likewise, one per class.
 */
export const classificationBody = z.discriminatedUnion(
  "kind",
  [
    z
      .object({
        kind: z.literal("fixed"),
        thresholds: z.array(z.number({ error: "Each threshold must be a number." }), { error: "thresholds must be a list of numbers." }),
        labels: z.array(labelSchema).optional(),
      })
      .strict(),
    z
      .object({
        kind: z.literal("quantile"),
        scoringId: z.number({ error: "scoringId must be the id of a published scoring." }).int().positive(),
        shares: z.array(z.number({ error: "Each share must be a number." }), { error: "shares must be a list of numbers." }),
        labels: z.array(labelSchema).optional(),
        bins: z.number().int().min(10).max(1_000_000).optional(),
      })
      .strict(),
  ],
  { error: 'kind is "fixed" (thresholds) or "quantile" (scoringId and shares).' },
);
export type ClassificationBody = z.infer<typeof classificationBody>;

/**
 * The classification as the API and the page give it: thresholds ascending, labels lowest class
 * first. (projects.classification itself holds app/scoring/classification.ts's ProjectClassification,
 * highest class first, plus `frozenFrom` for quantile classes.)
 */
export interface StoredClassification {
  kind: "fixed" | "quantile";
  thresholds: number[];
  labels: string[];
  /** quantile only: requested and achieved shares (lowest class first) and where they were frozen from */
  shares?: number[];
  achievedShares?: number[];
  frozenFrom?: { scoringId: number | null; reference: string; bins: number; min: number; max: number; cells: number; frozenAt: string | null };
}

const DEFAULT_STORED: StoredClassification = { kind: "fixed", thresholds: [0.25, 0.5, 0.75], labels: ["low", "medium", "high", "very high"] };

type RawClassification = Partial<ProjectClassification> & { frozenFrom?: { scoringId?: number; frozenAt?: string } };

/**
 * What projects.classification holds — ProjectClassification (thresholds decreasing), or the
 * ascending form an older installation may still hold — in the API's ascending shape.
 */
export function storedClassification(raw: unknown): StoredClassification {
  const r = (raw ?? {}) as RawClassification;
  if (!Array.isArray(r.thresholds) || r.thresholds.length === 0 || !r.thresholds.every((t) => typeof t === "number" && Number.isFinite(t))) return DEFAULT_STORED;
  const descending = r.thresholds.length === 1 ? true : r.thresholds[0] > r.thresholds[1];
  const flip = <T,>(a: T[]) => (descending ? [...a].reverse() : [...a]);
  const thresholds = flip(r.thresholds);
  const labels = Array.isArray(r.labels) && r.labels.length === thresholds.length + 1 ? flip(r.labels.map(String)) : defaultLabels(thresholds.length + 1);
  const out: StoredClassification = { kind: r.kind === "quantile" ? "quantile" : "fixed", thresholds, labels };
  const q = r.quantile;
  if (out.kind === "quantile" && q) {
    out.shares = flip(q.requestedShares);
    out.achievedShares = flip(q.achievedShares);
    out.frozenFrom = { scoringId: r.frozenFrom?.scoringId ?? null, reference: q.reference, bins: q.bins, min: q.min, max: q.max, cells: q.cells, frozenAt: r.frozenFrom?.frozenAt ?? null };
  }
  return out;
}

function defaultLabels(k: number): string[] {
  const names: Record<number, string[]> = { 2: ["low", "high"], 3: ["low", "medium", "high"], 4: ["low", "medium", "high", "very high"], 5: ["very low", "low", "medium", "high", "very high"] };
  return names[k] ?? Array.from({ length: k }, (_, c) => `class ${c + 1}`);
}

/** The API's ascending shape as app/scoring/classification.ts's ProjectClassification (highest class first). */
export function toProjectClassification(stored: StoredClassification): ProjectClassification {
  const c: ProjectClassification = { kind: stored.kind, thresholds: [...stored.thresholds].reverse(), labels: [...stored.labels].reverse() };
  if (stored.kind === "quantile" && stored.frozenFrom && stored.shares && stored.achievedShares)
    c.quantile = {
      requestedShares: [...stored.shares].reverse(),
      achievedShares: [...stored.achievedShares].reverse(),
      bins: stored.frozenFrom.bins,
      min: stored.frozenFrom.min,
      max: stored.frozenFrom.max,
      cells: stored.frozenFrom.cells,
      reference: stored.frozenFrom.reference,
    };
  return c;
}

/** The project's classification (highest class first), for every module that classes potential. */
export async function projectClassification(projectId: number): Promise<ProjectClassification> {
  const [p] = await db().select({ c: projects.classification }).from(projects).where(eq(projects.id, projectId));
  return toProjectClassification(storedClassification(p?.c));
}

/** The classification as the API and the page show it: stored form plus each class's range. */
export function classificationView(stored: StoredClassification) {
  const t = stored.thresholds;
  return {
    ...stored,
    classes: stored.labels.map((label, c) => ({ label, from: c === 0 ? 0 : t[c - 1], to: c === t.length ? 1 : t[c] })),
    rule: "A cell is in a class when its potential is at least the class's lower threshold and below the next one; the top class includes 1. Unassessed ground is a class of its own, never low.",
  };
}

function checkAscending(thresholds: number[]) {
  if (thresholds.length < 1 || thresholds.length > 9)
    throw new UserError(422, "invalid_thresholds", `Give from 1 to 9 thresholds (2 to 10 classes); got ${thresholds.length}.`, "thresholds");
  thresholds.forEach((t, i) => {
    if (!(t > 0 && t < 1)) throw new UserError(422, "invalid_thresholds", `Threshold ${i + 1} (${t}) must lie strictly between 0 and 1.`, "thresholds");
    if (i > 0 && !(Math.fround(t) > Math.fround(thresholds[i - 1])))
      throw new UserError(422, "invalid_thresholds", `Thresholds must increase from the lowest class up: threshold ${i + 1} (${t}) is not above threshold ${i} (${thresholds[i - 1]}).`, "thresholds");
  });
}

function checkLabels(labels: string[] | undefined, k: number): string[] {
  if (!labels) return defaultLabels(k);
  if (labels.length !== k) throw new UserError(422, "invalid_labels", `${k} classes need ${k} class names, lowest first (got ${labels.length}).`, "labels");
  return labels;
}

/**
 * Sets the project classification (leads and owners): fixed thresholds, or thresholds frozen from
 * quantiles of the histogram of a published scoring's potential. Audit-logged with before and after.
 * Throws UserError naming the problem; nothing is saved then.
 */
export async function setClassification(projectId: number, body: ClassificationBody, userId: number, meta: { clientAddress?: string } = {}): Promise<StoredClassification> {
  let next: StoredClassification;
  if (body.kind === "fixed") {
    checkAscending(body.thresholds);
    const labels = checkLabels(body.labels, body.thresholds.length + 1);
    next = { kind: "fixed", thresholds: body.thresholds, labels };
  } else {
    const k = body.shares.length;
    if (k < 2 || k > 10) throw new UserError(422, "invalid_shares", `Give from 2 to 10 class shares, lowest class first (got ${k}).`, "shares");
    const labels = checkLabels(body.labels, k);
    const s = await publishedScoring(projectId, body.scoringId, "scoringId");
    const { potential } = await loadScoringRasters(s);
    const reference = `scoring ${s.id}: ${s.version.setName} v${s.version.number}, ${targetLabel(s.target as unknown as ScoringTarget)}`;
    let q: ProjectClassification;
    try {
      q = quantileClassification(potential, [...body.shares].reverse(), { labels: [...labels].reverse(), reference, bins: body.bins });
    } catch (e) {
      if (e instanceof ScoringInputError) throw new UserError(422, "invalid_shares", e.message, e.field ?? "shares");
      throw e;
    }
    const info = q.quantile!;
    next = {
      kind: "quantile",
      thresholds: [...q.thresholds].reverse(),
      labels,
      shares: body.shares,
      achievedShares: [...info.achievedShares].reverse(),
      frozenFrom: { scoringId: s.id, reference, bins: info.bins, min: info.min, max: info.max, cells: info.cells, frozenAt: new Date().toISOString() },
    };
  }
  // the pure module checks again (Float32 rounding, class count) with its own words
  try {
    fixedClassification([...next.thresholds].reverse(), [...next.labels].reverse());
  } catch (e) {
    if (e instanceof ScoringInputError) throw new UserError(422, "invalid_thresholds", e.message, "thresholds");
    throw e;
  }
  await db().transaction(async (tx) => {
    const [before] = await tx.select({ c: projects.classification }).from(projects).where(eq(projects.id, projectId)).for("update");
    // stored as classification.ts reads it (highest class first), with where quantiles came from
    const row = { ...toProjectClassification(next), ...(next.frozenFrom ? { frozenFrom: { scoringId: next.frozenFrom.scoringId, frozenAt: next.frozenFrom.frozenAt } } : {}) };
    await tx.update(projects).set({ classification: row as unknown as Record<string, unknown> }).where(eq(projects.id, projectId));
    await recordAudit(tx, { actorUserId: userId, projectId, action: "classification.changed", detail: { before: storedClassification(before?.c), after: next }, clientAddress: meta.clientAddress });
  });
  return next;
}

// ---- the hold-out set --------------------------------------------------------------------------

export const holdoutBody = z
  .object({ siteIds: z.array(z.number({ error: "Each site id must be a number." }).int().positive(), { error: "siteIds must be a list of site ids." }).max(100_000) })
  .strict();

export const holdoutActionBody = z.object({ action: z.enum(["reveal", "hide"], { error: 'action is "reveal" or "hide".' }) }).strict();

/** The hold-out as its keepers (leads, owners) see it: which records are in it, and whether it is revealed. */
export async function holdoutState(projectId: number) {
  const [p] = await db().select({ revealedAt: projects.holdoutRevealedAt }).from(projects).where(eq(projects.id, projectId));
  const rows = await db()
    .select({ id: siteRecords.id, label: siteRecords.label, context: siteRecords.context, calBpFrom: siteRecords.calBpFrom, calBpTo: siteRecords.calBpTo, heldOut: siteRecords.heldOut, visibility: siteRecords.visibility })
    .from(siteRecords)
    .where(eq(siteRecords.projectId, projectId))
    .orderBy(asc(siteRecords.id));
  return {
    revealedAt: p?.revealedAt?.toISOString() ?? null,
    heldOut: rows.filter((r) => r.heldOut).length,
    sites: rows.filter((r) => r.visibility !== "withheld"),
    note: "Held-out sites are left out of every validation while the hold-out is hidden; the team sees only how many there are. Revealing it is recorded in the audit log.",
  };
}

/** Sets the hold-out membership (the listed sites in, all others out); a changed set starts hidden again. */
export async function setHoldout(projectId: number, siteIds: number[], userId: number, meta: { clientAddress?: string } = {}) {
  const wanted = [...new Set(siteIds)];
  await db().transaction(async (tx) => {
    const rows = await tx.select({ id: siteRecords.id }).from(siteRecords).where(eq(siteRecords.projectId, projectId)).for("update");
    const known = new Set(rows.map((r) => r.id));
    const unknown = wanted.filter((id) => !known.has(id));
    if (unknown.length) throw new UserError(422, "no_such_site", `Not known sites of this project: ${unknown.slice(0, 10).join(", ")}${unknown.length > 10 ? ", …" : ""}.`, "siteIds");
    await tx.update(siteRecords).set({ heldOut: false }).where(eq(siteRecords.projectId, projectId));
    if (wanted.length) await tx.update(siteRecords).set({ heldOut: true }).where(and(eq(siteRecords.projectId, projectId), inArray(siteRecords.id, wanted)));
    await tx.update(projects).set({ holdoutRevealedAt: null }).where(eq(projects.id, projectId));
    await recordAudit(tx, { actorUserId: userId, projectId, action: "holdout.changed", detail: { siteIds: wanted.sort((a, b) => a - b), count: wanted.length }, clientAddress: meta.clientAddress });
  });
  return holdoutState(projectId);
}

/** Reveals the hold-out to the team (validations then include it) or hides it again; audit-logged. */
export async function revealOrHideHoldout(projectId: number, action: "reveal" | "hide", userId: number, meta: { clientAddress?: string } = {}) {
  await db().transaction(async (tx) => {
    const [p] = await tx.select({ revealedAt: projects.holdoutRevealedAt }).from(projects).where(eq(projects.id, projectId)).for("update");
    if (action === "reveal" && p?.revealedAt) throw new UserError(409, "already_revealed", `The hold-out was already revealed on ${p.revealedAt.toISOString()}.`);
    if (action === "hide" && !p?.revealedAt) throw new UserError(409, "already_hidden", "The hold-out is already hidden.");
    await tx.update(projects).set({ holdoutRevealedAt: action === "reveal" ? new Date() : null }).where(eq(projects.id, projectId));
    const held = await tx.select({ id: siteRecords.id }).from(siteRecords).where(and(eq(siteRecords.projectId, projectId), eq(siteRecords.heldOut, true)));
    await recordAudit(tx, { actorUserId: userId, projectId, action: action === "reveal" ? "holdout.revealed" : "holdout.hidden", detail: { heldOut: held.length }, clientAddress: meta.clientAddress });
  });
  return holdoutState(projectId);
}

// ---- ages --------------------------------------------------------------------------------------

export interface AgeWindow {
  youngKa: number;
  oldKa: number;
  /** words: "10 ka (9–11 ka)" */
  label: string;
}

/**
 * The ages a raster stands for (see AGE_RULE): a period's own window, or for one reconstructed age
 * the span halfway to its neighbours among `agesKa`.
 */
export function ageWindowOf(target: { kind: "age"; ageKa: number } | { kind: "period"; name?: string; youngKa: number; oldKa: number }, agesKa: readonly number[]): AgeWindow {
  const fmt = (v: number) => `${+v.toFixed(3)}`;
  if (target.kind === "period") return { youngKa: target.youngKa, oldKa: target.oldKa, label: `${target.name ? `period ${target.name}, ` : ""}${fmt(target.youngKa)}–${fmt(target.oldKa)} ka` };
  const a = target.ageKa;
  const sorted = [...new Set(agesKa)].sort((x, y) => x - y);
  const i = sorted.indexOf(a);
  const younger = i > 0 ? sorted[i - 1] : null;
  const older = i >= 0 && i < sorted.length - 1 ? sorted[i + 1] : null;
  let down = younger !== null ? (a - younger) / 2 : older !== null ? (older - a) / 2 : 0.5;
  let up = older !== null ? (older - a) / 2 : younger !== null ? (a - younger) / 2 : 0.5;
  down = Math.min(down, a);
  up = Math.max(up, 0);
  const w = { youngKa: a - down, oldKa: a + up };
  return { ...w, label: `${fmt(a)} ka (${fmt(w.youngKa)}–${fmt(w.oldKa)} ka)` };
}

// ---- evidence ----------------------------------------------------------------------------------

export type EvidenceSet = "team" | "holdout" | "all";

/** One piece of evidence as validation reads it (positions exact: never sent as is). */
export interface EvidenceItem {
  key: string;
  kind: "site" | "core";
  siteId: number | null;
  label: string;
  context: string;
  x: number;
  y: number;
  precisionM: number | null;
  /** calibrated range in ka BP (young ≤ old), null when undated */
  youngKa: number | null;
  oldKa: number | null;
  archaeologicalMaterial: boolean;
  heldOut: boolean;
  visibility: "normal" | "restricted" | "withheld";
  community: string | null;
}

interface CoreRow {
  coreId?: unknown;
  x?: unknown;
  y?: unknown;
  archaeologicalIndicators?: unknown;
  dates?: Array<{ calBpFrom?: unknown; calBpTo?: unknown }>;
}

/** The project's evidence for validation: site records (withheld ones never) and cores, with fingerprints. */
async function projectEvidence(projectId: number) {
  const rows = await db().select().from(siteRecords).where(eq(siteRecords.projectId, projectId)).orderBy(asc(siteRecords.id));
  const items: EvidenceItem[] = [];
  for (const r of rows) {
    if (r.visibility === "withheld") continue;
    const from = r.calBpFrom;
    const to = r.calBpTo;
    const dated = from !== null || to !== null;
    const a = (from ?? to ?? 0) / 1000;
    const b = (to ?? from ?? 0) / 1000;
    items.push({
      key: `site:${r.id}`,
      kind: "site",
      siteId: r.id,
      label: r.label || `site ${r.id}`,
      context: r.context,
      x: r.x,
      y: r.y,
      precisionM: r.precisionM,
      youngKa: dated ? Math.min(a, b) : null,
      oldKa: dated ? Math.max(a, b) : null,
      archaeologicalMaterial: true,
      heldOut: r.heldOut,
      visibility: r.visibility,
      community: r.community,
    });
  }
  const coreSets = await db()
    .select({ id: datasets.id, key: datasets.derivedKey, sha256: datasets.sha256, name: datasets.name })
    .from(datasets)
    .where(and(eq(datasets.projectId, projectId), eq(datasets.kind, "cores")))
    .orderBy(asc(datasets.id));
  for (const d of coreSets) {
    const { rows: cores } = await getJson<{ rows: CoreRow[] }>(d.key);
    for (const c of cores) {
      let young = Infinity;
      let old = -Infinity;
      for (const dt of c.dates ?? []) {
        for (const v of [dt.calBpFrom, dt.calBpTo]) {
          if (typeof v !== "number" || !Number.isFinite(v)) continue;
          young = Math.min(young, v / 1000);
          old = Math.max(old, v / 1000);
        }
      }
      const material = hasArchaeologicalMaterial(c.archaeologicalIndicators);
      items.push({
        key: `core:${d.id}:${String(c.coreId)}`,
        kind: "core",
        siteId: null,
        label: String(c.coreId ?? "core"),
        context: material ? "core with archaeological material" : "core without archaeological material",
        x: Number(c.x),
        y: Number(c.y),
        precisionM: null,
        youngKa: Number.isFinite(young) ? young : null,
        oldKa: Number.isFinite(old) ? old : null,
        archaeologicalMaterial: material,
        heldOut: false,
        visibility: "normal",
        community: null,
      });
    }
  }
  items.push(...(await targetResultEvidence(projectId))); // cores recorded on published target lists
  const surveySets = await db()
    .select({ id: datasets.id, key: datasets.derivedKey, sha256: datasets.sha256, name: datasets.name })
    .from(datasets)
    .where(and(eq(datasets.projectId, projectId), eq(datasets.kind, "survey_area")))
    .orderBy(asc(datasets.id));
  return { items, coreSets, surveySets };
}

const CONTEXT_REASONS: Record<string, string> = {
  derived: "derived find: moved from where it was left — shown, never scored",
  trawled: "trawled find: moved from where it was left — shown, never scored",
  dredged: "dredged find: moved from where it was left — shown, never scored",
};

export interface GridGeometry {
  width: number;
  height: number;
  originX: number;
  originY: number;
  cellSizeX: number;
  cellSizeY: number;
}

/** Where each piece of evidence stands for this raster: scored in a cell, or left out with the reason. */
export interface PlacedEvidence {
  item: EvidenceItem;
  cell: number;
  reason: string | null;
}

/**
 * Common practice, no source (the filter design §5 asks for). Decides for each piece of evidence
 * whether it is scored on this raster, and if not, why: context (only in-situ sites; cores only with
 * archaeological material — a core without is not an absence), position precision ≤ `maxPrecisionM`
 * (cores are taken as exactly positioned), a date overlapping the window (AGE_RULE), inside the grid,
 * inside the surveyed area, and on a cell that was land at that age (a potential, or unassessed).
 * O(e) for e pieces of evidence.
 */
export function placeEvidence(
  items: readonly EvidenceItem[],
  grid: GridGeometry,
  window: AgeWindow,
  maxPrecisionM: number,
  potential: Float32Array,
  unassessed: Uint8Array | null,
  area: Uint8Array | null,
): PlacedEvidence[] {
  return items.map((item) => {
    const col = Math.floor((item.x - grid.originX) / grid.cellSizeX);
    const row = Math.floor((grid.originY - item.y) / grid.cellSizeY);
    const inGrid = Number.isFinite(col) && Number.isFinite(row) && col >= 0 && row >= 0 && col < grid.width && row < grid.height;
    const cell = inGrid ? row * grid.width + col : -1;
    let reason: string | null = null;
    if (item.kind === "site" && item.context !== "in_situ") reason = CONTEXT_REASONS[item.context] ?? "context unknown: cannot tell whether it lies where it was left — shown, never scored";
    else if (item.kind === "core" && !item.archaeologicalMaterial) reason = "core without archaeological material: not an absence (a core samples far less than a square metre) — never scored";
    else if (item.kind === "site" && item.precisionM === null) reason = "position precision not given";
    else if (item.kind === "site" && item.precisionM! > maxPrecisionM) reason = `position too imprecise (${+item.precisionM!.toFixed(1)} m > ${+maxPrecisionM.toFixed(1)} m)`;
    else if (item.youngKa === null || item.oldKa === null) reason = item.kind === "core" ? "no calibrated date: its age cannot be matched" : "undated: its age cannot be matched";
    else if (!(item.oldKa >= window.youngKa && item.youngKa <= window.oldKa)) reason = `dated ${+item.youngKa.toFixed(2)}–${+item.oldKa.toFixed(2)} ka: another age than this raster's`;
    else if (!inGrid) reason = "outside the grid";
    else if (area && area[cell] === 0) reason = "outside the surveyed area";
    else if (potential[cell] !== potential[cell] && !(unassessed && unassessed[cell] === 1)) reason = "not land at this age in the reconstruction (sea, lake or no data)";
    return { item, cell, reason };
  });
}

// ---- the computation ---------------------------------------------------------------------------

/** A number for JSON: −∞ as the string "-Infinity" (a class without sites), NaN as null. */
export type JsonNumber = number | "-Infinity" | "Infinity" | null;
const jn = (v: number): JsonNumber => (Number.isFinite(v) ? v : v === -Infinity ? "-Infinity" : v === Infinity ? "Infinity" : null);
const jInterval = (i: Interval) => ({ estimate: jn(i.estimate), lower: jn(i.lower), upper: jn(i.upper) });

export interface GainRow {
  label: string;
  /** potential range of the class; null for the unassessed class */
  from: number | null;
  to: number | null;
  cells: number;
  areaKm2: number;
  areaShare: number;
  sites: number;
  siteShare: number;
  gain: { estimate: JsonNumber; lower: JsonNumber; upper: JsonNumber };
  /** this class with all classes above it; null for the unassessed class */
  cumulative: { areaShare: number; siteShare: number; gain: { estimate: JsonNumber; lower: JsonNumber; upper: JsonNumber } } | null;
}

export interface ValidationFigures {
  status: "ok" | "no_sites";
  message: string | null;
  area: { landCells: number; classedCells: number; unassessedCells: number; landAreaKm2: number; cellAreaKm2: number };
  counts: { presences: number; sites: number; cores: number; inUnassessed: number; withScore: number };
  gain: { rows: GainRow[]; unassessed: GainRow | null } | null;
  capture: { points: { threshold: JsonNumber; areaShare: number; siteShare: number; gain: JsonNumber }[] } | null;
  auc: { estimate: number; lower: number; upper: number; standardError: number; presences: number; background: number; backgroundCells: number; sampled: boolean; replicates: number; seed: number; level: number } | null;
  /** per scored presence: its class (index into rows, or "unassessed") and score */
  scored: { key: string; classIndex: number | null; score: number | null }[];
}

/**
 * Kvamme (1988) gain; Hanley & McNeil (1982) AUC; Efron & Tibshirani (1993) bootstrap — through
 * app/scoring/validation.ts. The figures of one raster against its placed presences: class areas
 * over land cells (a potential, or unassessed) inside the area mask; unassessed cells as a class of
 * their own after the ordered classes (never low); gain per class and cumulative with bootstrap
 * intervals over the presences; the capture curve and AUC over cells with a potential (presences in
 * unassessed ground are left out of both, and counted); AUC against every such cell, or a seeded
 * sample of `maxBackground` of them.
 * Preconditions: arrays of one grid; presences' cells inside it. O(n·k + R·(s + b)).
 */
export function computeValidation(input: {
  potential: Float32Array;
  unassessed: Uint8Array | null;
  area: Uint8Array | null;
  classification: ProjectClassification;
  presences: readonly { key: string; kind: "site" | "core"; cell: number }[];
  cellAreaKm2: number;
  bootstrap?: { replicates: number; seed: number; level: number };
  maxBackground?: number;
}): ValidationFigures {
  const { potential, unassessed, area, classification, presences, cellAreaKm2 } = input;
  const boot = input.bootstrap ?? VALIDATION_BOOTSTRAP;
  const maxBackground = input.maxBackground ?? MAX_BACKGROUND_CELLS;
  const n = potential.length;
  const k = classification.thresholds.length + 1;
  const areas = classAreas(classification, potential, area);
  let unassessedCells = 0;
  let classedCells = 0;
  for (let c = 0; c < k; c++) classedCells += areas.cells[c];
  if (unassessed) for (let i = 0; i < n; i++) if (unassessed[i] === 1 && (!area || area[i] !== 0) && potential[i] !== potential[i]) unassessedCells++;
  const landCells = classedCells + unassessedCells;

  const scored: ValidationFigures["scored"] = [];
  const siteClass: number[] = [];
  const siteScores: number[] = [];
  let inUnassessed = 0;
  for (const p of presences) {
    const v = potential[p.cell];
    if (v === v) {
      const c = classOf(classification, v);
      scored.push({ key: p.key, classIndex: c, score: v });
      siteClass.push(c);
      siteScores.push(v);
    } else {
      scored.push({ key: p.key, classIndex: null, score: null });
      siteClass.push(k);
      inUnassessed++;
    }
  }
  const counts = {
    presences: presences.length,
    sites: presences.filter((p) => p.kind === "site").length,
    cores: presences.filter((p) => p.kind === "core").length,
    inUnassessed,
    withScore: siteScores.length,
  };
  const areaInfo = { landCells, classedCells, unassessedCells, landAreaKm2: landCells * cellAreaKm2, cellAreaKm2 };
  const empty = (message: string): ValidationFigures => ({ status: "no_sites", message, area: areaInfo, counts, gain: null, capture: null, auc: null, scored });
  if (landCells === 0) return empty("No land inside the surveyed area at these ages: nothing to validate against.");
  if (presences.length === 0) return empty("No in-situ site or core with archaeological material counts for these ages: nothing to validate. The list below says why each record was left out.");

  // gain: ordered classes, then unassessed as its own class when there is any
  const withUnassessed = unassessedCells > 0 || inUnassessed > 0;
  const classArea = Array.from(areas.cells);
  if (withUnassessed) classArea.push(unassessedCells);
  const classSites = new Array<number>(classArea.length).fill(0);
  for (const c of siteClass) classSites[c]++;
  const table = gainByClass(classArea, classSites);
  const gb = bootstrapGain(siteClass, classArea, boot);
  const row = (c: number, label: string, from: number | null, to: number | null, cumulative: boolean): GainRow => ({
    label,
    from,
    to,
    cells: classArea[c],
    areaKm2: classArea[c] * cellAreaKm2,
    areaShare: table.areaShare[c],
    sites: classSites[c],
    siteShare: table.siteShare[c],
    gain: jInterval(gb.gain[c]),
    cumulative: cumulative ? { areaShare: table.cumulativeAreaShare[c], siteShare: table.cumulativeSiteShare[c], gain: jInterval(gb.cumulativeGain[c]) } : null,
  });
  const t = classification.thresholds;
  const rows = classification.labels.map((label, c) => row(c, label, c === k - 1 ? 0 : t[c], c === 0 ? 1 : t[c - 1], true));
  const gain = { rows, unassessed: withUnassessed ? row(k, "unassessed", null, null, false) : null };

  // capture curve and AUC over cells with a potential inside the area
  let capture: ValidationFigures["capture"] = null;
  let auc: ValidationFigures["auc"] = null;
  if (siteScores.length > 0 && classedCells > 0) {
    const cells = new Float32Array(n);
    for (let i = 0; i < n; i++) cells[i] = !area || area[i] !== 0 ? potential[i] : NaN;
    const cc = siteCaptureCurve(cells, siteScores);
    // one point per step (the closing (1, 1) is dropped when the lowest site score already reached it)
    const points: NonNullable<ValidationFigures["capture"]>["points"] = [];
    for (let i = 0; i < cc.thresholds.length; i++) {
      const last = points[points.length - 1];
      if (last && last.areaShare === cc.areaShare[i] && last.siteShare === cc.siteShare[i]) continue;
      points.push({ threshold: jn(cc.thresholds[i]), areaShare: cc.areaShare[i], siteShare: cc.siteShare[i], gain: cc.siteShare[i] > 0 ? jn(1 - cc.areaShare[i] / cc.siteShare[i]) : null });
    }
    capture = { points };
    const background = new Float32Array(classedCells);
    for (let i = 0, j = 0; i < n; i++) if (cells[i] === cells[i]) background[j++] = cells[i];
    let sample: Float32Array = background;
    if (background.length > maxBackground) {
      const idx = sampleIndices(background.length, maxBackground, boot.seed);
      sample = Float32Array.from(idx, (i) => background[i]);
    }
    const a = bootstrapAuc(siteScores, sample, boot);
    auc = { estimate: a.estimate, lower: a.lower, upper: a.upper, standardError: a.standardError, presences: a.presences, background: a.background, backgroundCells: classedCells, sampled: sample !== background, replicates: a.replicates, seed: a.seed, level: boot.level };
  }
  return { status: "ok", message: siteScores.length === 0 ? "Every site counted lies in unassessed ground: no capture curve or AUC." : null, area: areaInfo, counts, gain, capture, auc, scored };
}

// ---- validating a raster -----------------------------------------------------------------------

export interface ValidationSubject {
  kind: "scoring" | "model";
  id: number;
  projectId: number;
  /** words for the page: "Estuary foragers v2, period Early Holocene coast (8–12 ka)" */
  label: string;
  /** the subject's own inputs hash: a subject computed afresh is validated afresh */
  inputsHash: string;
  grid: GridGeometry;
  /** the ages the raster stands for (ageWindowOf) */
  window: AgeWindow;
  /** reads the raster (potential or probability, NaN where not land) and the unassessed mask, only when no stored validation matches */
  load: () => Promise<{ potential: Float32Array; unassessed: Uint8Array | null }>;
}

export interface ValidationOptions {
  /** positions less precise than this are not scored (m); default the cell diagonal */
  maxPrecisionM?: number;
  /** team (held-out sites left out), holdout (only them) or all; holdout and all only once revealed */
  set?: EvidenceSet;
}

export const validationQuery = z.object({
  maxPrecisionM: z.coerce.number({ error: "maxPrecisionM must be a number of metres." }).positive("maxPrecisionM must be above 0 m.").max(100_000, "maxPrecisionM may be at most 100 km.").optional(),
  set: z.enum(["team", "holdout", "all"], { error: 'set is "team", "holdout" or "all".' }).optional(),
});

function sha256(v: unknown): string {
  return createHash("sha256").update(JSON.stringify(v)).digest("hex");
}

/**
 * Validates a raster (a scoring's potential, a model's probability) against the project's evidence
 * under the project classification — or returns the stored validation for identical inputs — and
 * shapes it for the viewer (coordinates only for records they see exactly; none for viewers).
 * Throws UserError (409) for the held-out set before it is revealed.
 */
export async function validateRaster(subject: ValidationSubject, viewer: Viewer, options: ValidationOptions = {}) {
  const [project] = await db().select().from(projects).where(eq(projects.id, subject.projectId));
  if (!project) throw new UserError(404, "no_such_project", "There is no such project.");
  const revealed = project.holdoutRevealedAt !== null;
  const set: EvidenceSet = options.set ?? (revealed ? "all" : "team");
  if (set !== "team" && !revealed) throw new UserError(409, "holdout_hidden", "The hold-out is hidden while the team tunes weights: a lead reveals it on the Validation page when the weights are settled.", "set");
  const diagonal = Math.hypot(subject.grid.cellSizeX, subject.grid.cellSizeY);
  const maxPrecisionM = options.maxPrecisionM ?? diagonal;
  const stored = storedClassification(project.classification);
  const classification = toProjectClassification(stored);

  const ev = await projectEvidence(subject.projectId);
  const heldOutTotal = ev.items.filter((i) => i.heldOut).length;
  const items = ev.items.filter((i) => (set === "team" ? !i.heldOut : set === "holdout" ? i.heldOut : true));
  const inputsHash = sha256({
    v: VALIDATION_VERSION,
    subject: { kind: subject.kind, id: subject.id, inputsHash: subject.inputsHash, window: subject.window },
    classification: { t: classification.thresholds, l: classification.labels },
    evidence: items.map((i) => [i.key, i.context, i.x, i.y, i.precisionM, i.youngKa, i.oldKa, i.archaeologicalMaterial, i.visibility]),
    cores: ev.coreSets.map((d) => d.sha256),
    survey: ev.surveySets.map((d) => d.sha256),
    set,
    revealed,
    maxPrecisionM,
    bootstrap: VALIDATION_BOOTSTRAP,
    maxBackground: MAX_BACKGROUND_CELLS,
  });

  const key = and(eq(validations.projectId, subject.projectId), eq(validations.subjectKind, subject.kind), eq(validations.subjectId, subject.id), eq(validations.inputsHash, inputsHash));
  let [row] = await db().select().from(validations).where(key);
  const reused = !!row;
  if (!row) {
    const result = await computeStored(subject, ev, items, set, maxPrecisionM, classification, stored, heldOutTotal, revealed);
    await db().insert(validations).values({ projectId: subject.projectId, subjectKind: subject.kind, subjectId: subject.id, inputsHash, result: result as unknown as Record<string, unknown> }).onConflictDoNothing();
    [row] = await db().select().from(validations).where(key);
  }
  return shapeForViewer(row.result as unknown as StoredValidation, { ...viewer, projectId: subject.projectId }, { inputsHash, reused, computedAt: row.createdAt.toISOString() });
}

interface StoredEvidenceRow {
  key: string;
  kind: "site" | "core";
  siteId: number | null;
  label: string;
  context: string;
  youngKa: number | null;
  oldKa: number | null;
  used: boolean;
  reason: string | null;
  className: string | null;
  score: number | null;
  heldOut: boolean;
  x: number;
  y: number;
  visibility: string;
  community: string | null;
}

export interface StoredValidation extends Omit<ValidationFigures, "scored"> {
  version: string;
  subject: { kind: string; id: number; label: string };
  window: AgeWindow;
  rule: string;
  set: EvidenceSet;
  maxPrecisionM: number;
  classification: ReturnType<typeof classificationView>;
  surveyArea: { datasets: string[]; note: string };
  holdout: { heldOut: number; revealed: boolean; note: string };
  bootstrap: typeof VALIDATION_BOOTSTRAP;
  evidence: StoredEvidenceRow[];
  caution: string;
}

async function computeStored(
  subject: ValidationSubject,
  ev: Awaited<ReturnType<typeof projectEvidence>>,
  items: EvidenceItem[],
  set: EvidenceSet,
  maxPrecisionM: number,
  classification: ProjectClassification,
  stored: StoredClassification,
  heldOutTotal: number,
  revealed: boolean,
): Promise<StoredValidation> {
  const g = subject.grid;
  const { potential, unassessed } = await subject.load();
  if (potential.length !== g.width * g.height) throw new Error(`validation: raster of ${potential.length} cells for a ${g.width}×${g.height} grid`);
  let area: Uint8Array | null = null;
  const names: string[] = [];
  if (ev.surveySets.length) {
    const geoms: ({ type?: string; coordinates?: unknown } | null)[] = [];
    for (const d of ev.surveySets) {
      const fc = await getJson<{ features?: { geometry: { type?: string; coordinates?: unknown } | null }[] }>(d.key);
      for (const f of fc.features ?? []) geoms.push(f.geometry);
      names.push(d.name);
    }
    area = polygonMask(g, polygonsOfGeometries(geoms).polygons);
  }
  const placed = placeEvidence(items, g, subject.window, maxPrecisionM, potential, unassessed, area);
  const presences = placed.filter((p) => p.reason === null).map((p) => ({ key: p.item.key, kind: p.item.kind, cell: p.cell }));
  const figures = computeValidation({ potential, unassessed, area, classification, presences, cellAreaKm2: (g.cellSizeX * g.cellSizeY) / 1e6 });
  const byKey = new Map(figures.scored.map((s) => [s.key, s]));
  const { scored: _s, ...rest } = figures;
  const heldOutNote = revealed
    ? `The hold-out (${heldOutTotal} site${heldOutTotal === 1 ? "" : "s"}) has been revealed: ${set === "team" ? "left out here" : set === "holdout" ? "only the held-out sites are used here" : "included here"}.`
    : `${heldOutTotal} site${heldOutTotal === 1 ? " is" : "s are"} held out and left out of these figures until a lead reveals the hold-out.`;
  return {
    version: VALIDATION_VERSION,
    subject: { kind: subject.kind, id: subject.id, label: subject.label },
    window: subject.window,
    rule: AGE_RULE,
    set,
    maxPrecisionM,
    classification: classificationView(stored),
    surveyArea: names.length
      ? { datasets: names, note: `Area shares over land cells inside the surveyed area (${names.join(", ")}).` }
      : { datasets: [], note: "The project has no survey-area dataset: area shares are taken over every land cell of the grid." },
    holdout: { heldOut: heldOutTotal, revealed, note: heldOutNote },
    bootstrap: VALIDATION_BOOTSTRAP,
    ...rest,
    evidence: placed.map((p) => {
      const s = byKey.get(p.item.key);
      return {
        key: p.item.key,
        kind: p.item.kind,
        siteId: p.item.siteId,
        label: p.item.label,
        context: p.item.context,
        youngKa: p.item.youngKa,
        oldKa: p.item.oldKa,
        used: p.reason === null,
        reason: p.reason,
        className: s ? (s.classIndex === null ? "unassessed" : classification.labels[s.classIndex]) : null,
        score: s?.score ?? null,
        heldOut: p.item.heldOut,
        x: p.item.x,
        y: p.item.y,
        visibility: p.item.visibility,
        community: p.item.community,
      };
    }),
    caution: CAUTION,
  };
}

/**
 * A stored validation as this viewer may see it: coordinates only on rows of records the viewer sees
 * exactly (sites.server.ts `sees`; cores for roles with exact site positions), never for viewers;
 * visibility and community fields dropped.
 */
export async function shapeForViewer(v: StoredValidation, viewer: Viewer & { projectId: number }, meta: { inputsHash: string; reused: boolean; computedAt: string }) {
  const community = await custodianFor(viewer.projectId, viewer.userId);
  const exactRole = can(viewer.role, "sites.readExact");
  const evidence = v.evidence.map((r) => {
    const { x, y, visibility, community: c, ...rest } = r;
    const exact = r.kind === "site" ? sees({ visibility: visibility as "normal" | "restricted" | "withheld", community: c }, viewer, community) === "exact" : exactRole;
    return exact ? { ...rest, x, y } : rest;
  });
  return { ...v, evidence, coordinates: exactRole ? "exact where you may see them" : "none (your role sees known sites only generalised)", inputsHash: meta.inputsHash, reused: meta.reused, computedAt: meta.computedAt };
}

export type ValidationView = Awaited<ReturnType<typeof shapeForViewer>>;

// ---- scorings ----------------------------------------------------------------------------------

async function publishedScoring(projectId: number, scoringId: number, field?: string): Promise<ScoringWithRun> {
  const s = await getScoring(scoringId);
  if (!s || s.projectId !== projectId) throw new UserError(field ? 422 : 404, "no_such_scoring", `Scoring ${scoringId} is not one of this project's scorings.`, field);
  if (s.status !== "published" || !s.layerPrefix || !s.result) throw new UserError(409, "not_published", `Scoring ${s.id} is not published (it is ${s.effectiveStatus}): validate it once it is.`, field);
  return s;
}

/** A published scoring's potential and unassessed rasters, read from storage. */
export async function loadScoringRasters(s: { layerPrefix: string | null; result: Record<string, unknown> | null }) {
  const files = ((s.result?.files ?? []) as Array<{ name: string; file: string }>);
  const read = async (name: string) => {
    const f = files.find((x) => x.name === name);
    if (!f) return null;
    return (await readGeoTiff(await store().getBytes(`${s.layerPrefix}/${f.file}`))).grid.data;
  };
  const potential = await read("potential");
  if (!potential) throw new Error("a published scoring without a potential raster");
  const u = await read("unassessed");
  return { potential, unassessed: u ? Uint8Array.from(u, (v) => (v === 1 ? 1 : 0)) : null };
}

/** The validation subject of a published scoring (its grid, window and loader). */
export async function scoringSubject(s: ScoringWithRun): Promise<ValidationSubject> {
  const result = s.result as { grid: GridGeometry };
  const target = s.target as unknown as ScoringTarget;
  const [rec] = await db().select({ manifest: reconstructions.manifest }).from(reconstructions).where(eq(reconstructions.id, s.reconstructionId));
  const agesKa = ((rec?.manifest ?? null) as unknown as Manifest | null)?.agesKa ?? [];
  return {
    kind: "scoring",
    id: s.id,
    projectId: s.projectId,
    label: `${s.version.setName} v${s.version.number}, ${targetLabel(target)}`,
    inputsHash: s.inputsHash,
    grid: { width: result.grid.width, height: result.grid.height, originX: result.grid.originX, originY: result.grid.originY, cellSizeX: result.grid.cellSizeX, cellSizeY: result.grid.cellSizeY },
    window: ageWindowOf(target, agesKa),
    load: () => loadScoringRasters(s),
  };
}

/** GET /api/scorings/:id/validation: the scoring validated (or its stored validation) for this viewer. */
export async function scoringValidation(projectId: number, scoringId: number, viewer: Viewer, options: ValidationOptions = {}) {
  const s = await publishedScoring(projectId, scoringId);
  return validateRaster(await scoringSubject(s), viewer, options);
}
