// Project sea-level curves: copies of the shipped curve, edited tables, imported CSV.
import { and, asc, eq } from "drizzle-orm";
import { db } from "./db.server";
import { datasets, seaLevelCurves } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { getJson } from "./storage.server";
import { defaultGlobalCurve, parseSeaLevelCsv, type SeaLevelCurve } from "./terrain/sea-level";
import { TerrainInputError } from "./terrain/grid";

export type CurvePoint = { ageKa: number; rslM: number; sigmaM: number | null };

export function pointsOf(curve: SeaLevelCurve): CurvePoint[] {
  return Array.from(curve.ageKa, (a, i) => ({ ageKa: a, rslM: curve.levelM[i], sigmaM: Number.isFinite(curve.sigmaM[i]) ? curve.sigmaM[i] : null }));
}

/** A project curve's row as the engine's curve (σ missing → NaN, as parseSeaLevelCsv gives it). */
export function curveFromRow(c: { name: string; source: string; points: CurvePoint[] }): SeaLevelCurve {
  return {
    name: c.name,
    label: `project curve: ${c.name}`,
    citation: c.source,
    ageKa: Float64Array.from(c.points, (p) => p.ageKa),
    levelM: Float64Array.from(c.points, (p) => p.rslM),
    sigmaM: Float64Array.from(c.points, (p) => (p.sigmaM === null || p.sigmaM === undefined ? NaN : p.sigmaM)),
    warnings: [],
  };
}

export function curveCsv(points: CurvePoint[]): string {
  return ["age_ka,rsl_m,sigma_m", ...points.map((p) => `${p.ageKa},${p.rslM},${p.sigmaM ?? ""}`)].join("\n") + "\n";
}

/** Parses an edited or imported table; a problem becomes a 422 naming the line. */
export function parseCurveTable(text: string): CurvePoint[] {
  if (text.length > 200_000) throw new UserError(413, "table_too_large", "The table is larger than 200 kB.");
  try {
    return pointsOf(parseSeaLevelCsv(text.replace(/^\uFEFF/, "").replace(/;/g, ","), { name: "project curve" }));
  } catch (e) {
    if (e instanceof TerrainInputError) throw new UserError(422, "invalid_curve", e.message.charAt(0).toUpperCase() + e.message.slice(1), "table");
    throw e;
  }
}

export async function listCurves(projectId: number) {
  return db().select().from(seaLevelCurves).where(eq(seaLevelCurves.projectId, projectId)).orderBy(asc(seaLevelCurves.name));
}

export async function createCurve(projectId: number, userId: number, name: string, source: string, points: CurvePoint[], meta: { clientAddress?: string } = {}) {
  return db().transaction(async (tx) => {
    const [c] = await tx.insert(seaLevelCurves).values({ projectId, name, source, points, createdBy: userId }).returning();
    await recordAudit(tx, { actorUserId: userId, projectId, action: "sea_level_curve.created", detail: { curveId: c.id, name, source, points: points.length }, clientAddress: meta.clientAddress });
    return c;
  });
}

export async function updateCurve(projectId: number, userId: number, curveId: number, points: CurvePoint[], meta: { clientAddress?: string } = {}) {
  await db().transaction(async (tx) => {
    const rows = await tx
      .update(seaLevelCurves)
      .set({ points, updatedAt: new Date() })
      .where(and(eq(seaLevelCurves.id, curveId), eq(seaLevelCurves.projectId, projectId)))
      .returning({ id: seaLevelCurves.id });
    if (!rows.length) throw new UserError(404, "no_such_curve", "That curve is not one of this project's.");
    await recordAudit(tx, { actorUserId: userId, projectId, action: "sea_level_curve.edited", detail: { curveId, points: points.length }, clientAddress: meta.clientAddress });
  });
}

export function shippedCurve() {
  const c = defaultGlobalCurve();
  return { name: c.name, label: c.label, citation: c.citation, points: pointsOf(c) };
}

/** Sea-level index points from the project's datasets, for plotting against the curves. */
export async function indexPoints(projectId: number) {
  const rows = await db().select({ key: datasets.derivedKey, name: datasets.name }).from(datasets).where(and(eq(datasets.projectId, projectId), eq(datasets.kind, "sea_level_index_points")));
  const out: Array<{ dataset: string; ageKa: number; ageSigmaKa: number; heightM: number; heightSigmaM: number; kind: string | null }> = [];
  for (const r of rows) {
    const json = await getJson<{ rows?: Array<Record<string, unknown>> }>(r.key);
    for (const p of json.rows ?? []) {
      if (p.heightM === null || p.ageKa === null) continue;
      out.push({ dataset: r.name, ageKa: Number(p.ageKa), ageSigmaKa: Number(p.ageSigmaKa ?? 0), heightM: Number(p.heightM), heightSigmaM: Number(p.heightSigmaM ?? 0), kind: (p.kind as string) ?? null });
    }
  }
  return out;
}
