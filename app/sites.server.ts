// Who sees which known sites, how exactly (design §9). Every page, API route and export of
// site positions goes through here.
//   - exact positions: owner, lead, analyst, reviewer (the "sites.readExact" capability);
//   - everyone else: positions generalised to the project's cell size, small counts suppressed;
//   - a record marked "restricted" by its community's custodian is exact only for that custodian
//     and the project's owners and leads, generalised for everyone else;
//   - a record "withheld" by its community's custodian is shown only to that custodian;
//   - whether a record is in the validation hold-out is told to owners and leads only (project.edit),
//     who keep it: the team tuning weights must not know which sites are held out (design §5).
import { and, asc, eq } from "drizzle-orm";
import { db } from "./db.server";
import { memberships, siteRecords } from "./db/schema";
import { can, type Role } from "./permissions";
import { generaliseSites, type Generalised } from "./sites";
import { recordAudit } from "./audit.server";
import { UserError } from "./errors";

export const PRIVATE_HEADERS = { "Cache-Control": "private, no-store", Vary: "Cookie, Authorization" } as const;

type SiteRow = typeof siteRecords.$inferSelect;

export interface Viewer {
  userId: number;
  role: Role;
}

/** The community this member is custodian for in the project, or null. */
export async function custodianFor(projectId: number, userId: number): Promise<string | null> {
  const [m] = await db().select({ c: memberships.custodianFor }).from(memberships).where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
  return m?.c ?? null;
}

/** How exactly this viewer sees a record (the one rule; validation and every other reader use it). */
export function sees(row: Pick<SiteRow, "visibility" | "community">, viewer: Viewer, community: string | null): "exact" | "generalised" | "none" {
  const isCustodian = community !== null && row.community !== null && community === row.community;
  if (row.visibility === "withheld") return isCustodian ? "exact" : "none";
  if (row.visibility === "restricted") return isCustodian || viewer.role === "owner" || viewer.role === "lead" ? "exact" : "generalised";
  return can(viewer.role, "sites.readExact") || isCustodian ? "exact" : "generalised";
}

export interface SiteView {
  /** `heldOut` only for owners and leads (project.edit); absent for everyone else */
  exact: Array<Omit<SiteRow, "projectId" | "attributes" | "heldOut"> & { attributes: Record<string, unknown>; heldOut?: boolean }>;
  generalised: Generalised;
  custodianFor: string | null;
}

/** The sites this viewer may see: exact records and a generalised remainder. */
export async function sitesFor(project: { id: number; siteGeneralisationM: number; siteMinCount: number }, viewer: Viewer): Promise<SiteView> {
  const community = await custodianFor(project.id, viewer.userId);
  const rows = await db().select().from(siteRecords).where(eq(siteRecords.projectId, project.id)).orderBy(asc(siteRecords.id));
  const knowsHoldout = can(viewer.role, "project.edit");
  const exact: SiteView["exact"] = [];
  const rest: { x: number; y: number }[] = [];
  for (const r of rows) {
    const s = sees(r, viewer, community);
    if (s === "exact") {
      const { projectId: _p, heldOut, ...rest2 } = r;
      exact.push(knowsHoldout ? { ...rest2, heldOut } : rest2);
    } else if (s === "generalised") rest.push({ x: r.x, y: r.y });
  }
  return { exact, generalised: generaliseSites(rest, project.siteGeneralisationM, project.siteMinCount), custodianFor: community };
}

/**
 * Exact positions for export: leads and owners only, every export audit-logged in the same
 * transaction that reads the rows. Withheld records are never exported.
 */
export async function exportExactSites(project: { id: number }, viewer: Viewer, format: string, meta: { clientAddress?: string } = {}) {
  if (!can(viewer.role, "sites.export")) throw new UserError(403, "may_not_export", "Only the project's leads and owners may export exact site positions.");
  return db().transaction(async (tx) => {
    const rows = await tx.select().from(siteRecords).where(eq(siteRecords.projectId, project.id)).orderBy(asc(siteRecords.id));
    const out = rows.filter((r) => r.visibility !== "withheld");
    await recordAudit(tx, { actorUserId: viewer.userId, projectId: project.id, action: "sites.exported", detail: { format, records: out.length, withheldLeftOut: rows.length - out.length }, clientAddress: meta.clientAddress });
    return out;
  });
}

/** A custodian (or nobody else) sets the visibility of a record their community contributed. */
export async function setSiteVisibility(projectId: number, viewer: Viewer, siteId: number, visibility: "normal" | "restricted" | "withheld", meta: { clientAddress?: string } = {}) {
  const community = await custodianFor(projectId, viewer.userId);
  if (!community) throw new UserError(403, "not_custodian", "Only a custodian may change who sees a community's records.");
  await db().transaction(async (tx) => {
    const rows = await tx
      .update(siteRecords)
      .set({ visibility })
      .where(and(eq(siteRecords.id, siteId), eq(siteRecords.projectId, projectId), eq(siteRecords.community, community)))
      .returning({ id: siteRecords.id });
    if (!rows.length) throw new UserError(404, "no_such_record", `No record contributed by ${community} has that id.`);
    await recordAudit(tx, { actorUserId: viewer.userId, projectId, action: "sites.visibility_changed", detail: { siteId, visibility, community }, clientAddress: meta.clientAddress });
  });
}

export function sitesCsv(rows: SiteRow[]): string {
  const head = ["id", "label", "x", "y", "precision_m", "kind", "context", "discovery_method", "cal_bp_from", "cal_bp_to", "confidence", "community", "visibility"];
  const q = (v: unknown) => {
    const s = v === null || v === undefined ? "" : String(v);
    return /[",\n;]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  return [head.join(","), ...rows.map((r) => [r.id, r.label, r.x, r.y, r.precisionM, r.siteKind, r.context, r.discoveryMethod, r.calBpFrom, r.calBpTo, r.confidence, r.community, r.visibility].map(q).join(","))].join("\r\n") + "\r\n";
}
