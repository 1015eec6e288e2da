// Core results recorded on published target lists, as validation evidence (design §5, §6: "results
// flow into validation"). app/validations.server.ts calls targetResultEvidence() beside the cores of
// the project's datasets, so a recorded result changes the next validation (its key, position,
// dates and material are part of the validation's inputs hash).
import { and, asc, eq } from "drizzle-orm";
import { db } from "./db.server";
import { targetLists, targets } from "./db/schema";
import { hasArchaeologicalMaterial } from "./evidence/material";

/** Evidence as app/validations.server.ts EvidenceItem reads it (kept structural to avoid an import cycle). */
export interface TargetResultEvidence {
  key: string;
  kind: "core";
  siteId: null;
  label: string;
  context: string;
  x: number;
  y: number;
  precisionM: null;
  youngKa: number | null;
  oldKa: number | null;
  archaeologicalMaterial: boolean;
  heldOut: false;
  visibility: "normal";
  community: null;
}

interface StoredCore {
  coreId?: string;
  x?: number;
  y?: number;
  result?: { archaeologicalIndicators?: string | null; dates?: Array<{ calBpFrom?: number; calBpTo?: number }> };
}

/**
 * The targets of the project's published lists whose result is recorded (status "result"), each as
 * a core: at the achieved position (else the planned one), dated by the union of its calibrated
 * ranges, with archaeological material when the indicators say anything. Cores without material
 * are included (validation shows them and never scores them: not an absence). O(targets).
 */
export async function targetResultEvidence(projectId: number): Promise<TargetResultEvidence[]> {
  const rows = await db()
    .select({ id: targets.id, waypoint: targets.waypoint, x: targets.x, y: targets.y, core: targets.core, list: targetLists.name })
    .from(targets)
    .innerJoin(targetLists, eq(targetLists.id, targets.listId))
    .where(and(eq(targetLists.projectId, projectId), eq(targetLists.status, "published"), eq(targets.status, "result")))
    .orderBy(asc(targets.id));
  return rows.map((r) => {
    const c = (r.core ?? {}) as StoredCore;
    let young = Infinity;
    let old = -Infinity;
    for (const d of c.result?.dates ?? [])
      for (const v of [d.calBpFrom, d.calBpTo])
        if (typeof v === "number" && Number.isFinite(v)) {
          young = Math.min(young, v / 1000);
          old = Math.max(old, v / 1000);
        }
    const material = hasArchaeologicalMaterial(c.result?.archaeologicalIndicators);
    return {
      key: `target:${r.id}`,
      kind: "core",
      siteId: null,
      label: `${c.coreId ?? r.waypoint} (${r.list})`,
      context: material ? "core with archaeological material" : "core without archaeological material",
      x: typeof c.x === "number" ? c.x : r.x,
      y: typeof c.y === "number" ? c.y : r.y,
      precisionM: null,
      youngKa: Number.isFinite(young) ? young : null,
      oldKa: Number.isFinite(old) ? old : null,
      archaeologicalMaterial: material,
      heldOut: false,
      visibility: "normal",
      community: null,
    };
  });
}
