// Datasets: an upload becomes a validated, stored piece of evidence. The file is streamed to a
// temp file (uploads.server.ts), its type sniffed from its first bytes, read and checked by the
// evidence readers (app/evidence), then the original and a normalised form are stored under
// server-made keys and the row written. A refused upload leaves nothing behind.
import fs from "node:fs/promises";
import { createHash } from "node:crypto";
import { createReadStream } from "node:fs";
import { and, desc, eq, sql } from "drizzle-orm";
import { db } from "./db.server";
import { datasets, reconstructions, siteRecords, users } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { makeKey, store } from "./storage.server";
import type { ReceivedUpload } from "./uploads.server";
import { EVIDENCE_KINDS, EvidenceError, type EvidenceKind, type ParsedEvidence, type VerticalDeclaration } from "./evidence/types";
import { geotiffHeaderCheck, parseEvidence, sniffFormat } from "./evidence";
import { writeGeoTiff } from "./terrain/geotiff-write";
import { nodeDeflate } from "./terrain/geotiff-deflate-node";
import { z } from "zod";
import { can } from "./permissions";
import { KIND_LABELS, KINDS_WITH_HEIGHTS } from "./evidence-kinds";
import { referencedByReview } from "./reviews.server";

export { KIND_LABELS, KINDS_WITH_HEIGHTS };

const num = (label: string) =>
  z
    .string()
    .trim()
    .transform((v, ctx) => {
      const n = Number(v.replace(",", "."));
      if (v === "" || !Number.isFinite(n)) {
        ctx.addIssue({ code: "custom", message: `${label} must be a number (metres).` });
        return z.NEVER;
      }
      return n;
    });

/** Form fields left empty in a browser arrive as "": treat them as not given. */
const blankToUndefined = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);

export const uploadFields = z.preprocess((raw) => (raw && typeof raw === "object" ? Object.fromEntries(Object.entries(raw).map(([k, v]) => [k, blankToUndefined(v)])) : raw), z.object({
  kind: z.enum(EVIDENCE_KINDS, { error: `Choose what the file holds: ${EVIDENCE_KINDS.join(", ")}.` }),
  name: z.string().trim().max(160, "Dataset names are at most 160 characters.").refine((v) => !/[<>]/.test(v), "Dataset names cannot contain < or >.").optional(),
  sign: z.enum(["depth_positive_down", "elevation_positive_up"], { error: "Say whether the values are depths (positive down) or elevations (positive up)." }).optional(),
  datum: z.string().trim().max(80, "The datum name is at most 80 characters.").optional(),
  offset_to_msl_m: num("The offset to present mean sea level").optional(),
  declared_epsg: z.coerce.number().int().positive("The declared EPSG code must be a positive whole number.").optional(),
}));

export type UploadFields = z.infer<typeof uploadFields>;

function verticalFrom(kind: EvidenceKind, f: UploadFields): VerticalDeclaration | undefined {
  if (!KINDS_WITH_HEIGHTS.has(kind)) return undefined;
  if (!f.sign) throw new UserError(422, "vertical_required", "Say whether the grid holds depths (positive down) or elevations (positive up).", "sign");
  if (!f.datum) throw new UserError(422, "vertical_required", "Name the vertical datum the values refer to (e.g. LAT, MSL, a national datum).", "datum");
  if (f.offset_to_msl_m === undefined) {
    throw new UserError(422, "vertical_required", "Give the datum's offset to present mean sea level in metres (0 when the values are already relative to MSL).", "offset_to_msl_m");
  }
  return { sign: f.sign, datum: f.datum, offsetToMslM: f.offset_to_msl_m };
}

const EXT: Record<string, string> = { geotiff: "tif", "esri-ascii": "asc", xyz: "xyz", csv: "csv", geojson: "geojson", gpkg: "gpkg", "shapefile-zip": "zip", ags4: "ags" };

async function sha256File(p: string): Promise<string> {
  const h = createHash("sha256");
  for await (const c of createReadStream(p)) h.update(c as Buffer);
  return h.digest("hex");
}

function derivedBytes(parsed: ParsedEvidence): { bytes: Uint8Array; format: string; ext: string; contentType: string } {
  if (parsed.grid) {
    return { bytes: writeGeoTiff(parsed.grid, { deflate: nodeDeflate, layout: "tiles" }), format: "geotiff-float32", ext: "tif", contentType: "image/tiff" };
  }
  const payload = parsed.features ?? { rows: parsed.rows ?? [] };
  return { bytes: new TextEncoder().encode(JSON.stringify(payload)), format: parsed.features ? "geojson" : "json-rows", ext: "json", contentType: "application/json" };
}

/**
 * Validates and stores one upload for a project. Throws UserError (4xx) for anything the user can
 * fix; in that case nothing is stored. The temp file is always discarded.
 */
export async function ingestUpload(
  project: { id: number; crsEpsg: number },
  userId: number,
  upload: ReceivedUpload,
  meta: { clientAddress?: string } = {},
) {
  const stored: string[] = [];
  try {
    const parsedFields = uploadFields.safeParse(upload.fields);
    if (!parsedFields.success) {
      const i = parsedFields.error.issues[0];
      throw new UserError(422, "invalid_fields", i.message, String(i.path[0] ?? ""));
    }
    const f = parsedFields.data;
    const vertical = verticalFrom(f.kind, f);
    const file = upload.file;
    if (!file) throw new UserError(422, "file_required", "Attach the file to upload (field \"file\").", "file");
    if (file.size === 0) throw new UserError(422, "empty_file", "The file is empty.", "file");

    const handle = await fs.open(file.path, "r");
    const head = new Uint8Array(Math.min(file.size, 64 * 1024));
    await handle.read(head, 0, head.length, 0);
    await handle.close();
    const format = sniffFormat(head, file.originalName);
    if (!format) {
      throw new UserError(415, "unknown_format", `"${file.originalName || "the file"}" is not a file Lowstand can read for ${KIND_LABELS[f.kind].toLowerCase()}: its first bytes are not GeoTIFF, ESRI ASCII grid, XYZ, CSV, GeoJSON, GeoPackage, zipped Shapefile or AGS4.`, "file");
    }

    let parsed: ParsedEvidence;
    try {
      // A small compressed GeoTIFF may declare gigabytes: check its header before decoding pixels.
      if (format === "geotiff") geotiffHeaderCheck(head, undefined, file.size);
      const bytes = new Uint8Array(await fs.readFile(file.path));
      parsed = await parseEvidence(f.kind, bytes, { fileName: file.originalName, projectEpsg: project.crsEpsg, vertical, declaredEpsg: f.declared_epsg });
    } catch (e) {
      if (e instanceof EvidenceError) throw new UserError(422, "invalid_file", sentence(e.message), "file");
      throw e;
    }

    const sha256 = await sha256File(file.path);
    const originalKey = makeKey("uploads", project.id, EXT[format] ?? "bin");
    await store().put(originalKey, { filePath: file.path });
    stored.push(originalKey);
    const derived = derivedBytes(parsed);
    const derivedKey = makeKey("datasets", project.id, derived.ext);
    await store().put(derivedKey, derived.bytes, derived.contentType);
    stored.push(derivedKey);

    const name = f.name || file.originalName.replace(/\.[^.]+$/, "") || KIND_LABELS[f.kind];
    const row = await db().transaction(async (tx) => {
      const [d] = await tx
        .insert(datasets)
        .values({
          projectId: project.id,
          kind: f.kind,
          name,
          format,
          originalKey,
          originalName: file.originalName,
          sizeBytes: file.size,
          sha256,
          derivedKey,
          derivedFormat: derived.format,
          crsEpsg: parsed.crsEpsg,
          vertical: vertical ? { ...vertical } : null,
          extent: parsed.extent ?? null,
          count: parsed.count,
          summary: parsed.summary,
          warnings: parsed.warnings,
          uploadedBy: userId,
        })
        .returning();
      if (f.kind === "known_sites") {
        const sites = siteRowsFrom(parsed);
        for (let i = 0; i < sites.length; i += 1000) {
          await tx.insert(siteRecords).values(sites.slice(i, i + 1000).map((s) => ({ ...s, projectId: project.id, datasetId: d.id })));
        }
      }
      await recordAudit(tx, { actorUserId: userId, projectId: project.id, action: "dataset.uploaded", detail: { datasetId: d.id, kind: f.kind, name, sizeBytes: file.size, sha256 }, clientAddress: meta.clientAddress });
      return d;
    });
    stored.length = 0; // committed: the objects now belong to the row
    return row;
  } finally {
    await Promise.all(stored.map((k) => store().delete(k).catch(() => undefined)));
    await upload.discard();
  }
}

const str = (v: unknown) => (v === null || v === undefined ? "" : String(v));
const optNum = (v: unknown) => (v === null || v === undefined || v === "" ? null : Number.isFinite(Number(v)) ? Number(v) : null);
const pick = (o: Record<string, unknown>, ...names: string[]) => {
  for (const n of names) if (o[n] !== undefined && o[n] !== null && o[n] !== "") return o[n];
  return undefined;
};

/** Known-site rows (CSV rows or point features) in the shape of the site_records table. */
export function siteRowsFrom(parsed: ParsedEvidence) {
  const source: Record<string, unknown>[] = parsed.rows
    ? parsed.rows
    : (parsed.features?.features ?? []).map((ft) => ({ ...ft.properties, x: ft.geometry?.coordinates?.[0], y: ft.geometry?.coordinates?.[1] }));
  return source.map((r, i) => {
    const visibilityRaw = str(pick(r, "visibility", "sensitivity")).toLowerCase();
    const visibility = visibilityRaw === "withheld" ? "withheld" : visibilityRaw === "restricted" || visibilityRaw === "sensitive" ? "restricted" : "normal";
    const known = new Set(["x", "y", "row", "rowNumber", "siteId", "label", "site_id", "id", "name", "precision_m", "precisionM", "kind", "site_kind", "context", "discovery_method", "discoveryMethod", "cal_bp_from", "calBpFrom", "cal_bp_to", "calBpTo", "confidence", "community", "sensitivity", "visibility"]);
    return {
      rowNumber: Number(pick(r, "row", "rowNumber") ?? i + 1),
      label: str(pick(r, "siteId", "label", "site_id", "name", "id")).slice(0, 200),
      x: Number(r.x),
      y: Number(r.y),
      precisionM: optNum(pick(r, "precision_m", "precisionM")),
      siteKind: str(pick(r, "kind", "site_kind")),
      context: str(pick(r, "context")) || "in_situ",
      discoveryMethod: str(pick(r, "discovery_method", "discoveryMethod")),
      calBpFrom: optNum(pick(r, "cal_bp_from", "calBpFrom")),
      calBpTo: optNum(pick(r, "cal_bp_to", "calBpTo")),
      confidence: str(pick(r, "confidence")),
      community: str(pick(r, "community")) || null,
      visibility: visibility as "normal" | "restricted" | "withheld",
      attributes: Object.fromEntries(Object.entries(r).filter(([k]) => !known.has(k))),
    };
  });
}

export async function listDatasets(projectId: number) {
  return db()
    .select({
      id: datasets.id,
      kind: datasets.kind,
      name: datasets.name,
      format: datasets.format,
      sizeBytes: datasets.sizeBytes,
      crsEpsg: datasets.crsEpsg,
      vertical: datasets.vertical,
      extent: datasets.extent,
      count: datasets.count,
      createdAt: datasets.createdAt,
      uploadedBy: users.name,
    })
    .from(datasets)
    .leftJoin(users, eq(users.id, datasets.uploadedBy))
    .where(eq(datasets.projectId, projectId))
    .orderBy(desc(datasets.createdAt), desc(datasets.id));
}

export async function getDataset(projectId: number, datasetId: number) {
  const [row] = await db()
    .select({ dataset: datasets, uploadedByName: users.name })
    .from(datasets)
    .leftJoin(users, eq(users.id, datasets.uploadedBy))
    .where(and(eq(datasets.id, datasetId), eq(datasets.projectId, projectId)));
  return row ?? null;
}

/** Deletes a dataset, its site records and its stored objects. */
export async function deleteDataset(projectId: number, datasetId: number, actorUserId: number, meta: { clientAddress?: string } = {}) {
  const row = await db().transaction(async (tx) => {
    await referencedByReview("dataset", datasetId, tx);
    // Refused while a reconstruction was made from it (its provenance would point at nothing).
    const users = await tx
      .select({ id: reconstructions.id, name: reconstructions.name })
      .from(reconstructions)
      .where(
        and(
          eq(reconstructions.projectId, projectId),
          sql`${datasetId} in ((${reconstructions.params}->>'bathymetryDatasetId')::int, (${reconstructions.params}->>'horizonDatasetId')::int, (${reconstructions.params}->>'surveyLinesDatasetId')::int)`,
        ),
      );
    if (users.length) {
      const names = users.slice(0, 5).map((u) => u.name || `reconstruction ${u.id}`).join(", ");
      throw new UserError(409, "dataset_in_use", `This dataset is kept: ${users.length === 1 ? "a reconstruction was" : `${users.length} reconstructions were`} made from it (${names}), and their provenance must stay whole.`);
    }
    const [d] = await tx.delete(datasets).where(and(eq(datasets.id, datasetId), eq(datasets.projectId, projectId))).returning();
    if (!d) throw new UserError(404, "no_such_dataset", "There is no such dataset in this project.");
    await recordAudit(tx, { actorUserId, projectId, action: "dataset.deleted", detail: { datasetId, kind: d.kind, name: d.name }, clientAddress: meta.clientAddress });
    return d;
  });
  await Promise.all([row.originalKey, row.derivedKey].map((k) => store().delete(k).catch(() => undefined)));
  return row;
}

/**
 * Stored objects no row refers to, older than `graceMs`, are removed: uploads and normalised files
 * of deleted or never-committed datasets, and reconstruction layers outside a published prefix
 * (attempts that lost, were killed or failed). Returns how many objects went.
 */
export async function sweepUnreferencedObjects(graceMs = 24 * 3600_000): Promise<number> {
  const referenced = new Set<string>();
  for (const r of await db().select({ a: datasets.originalKey, b: datasets.derivedKey }).from(datasets)) {
    referenced.add(r.a);
    referenced.add(r.b);
  }
  const prefixes = (await db().select({ p: reconstructions.layerPrefix }).from(reconstructions)).map((r) => r.p).filter((p): p is string => !!p);
  const published = (key: string) => prefixes.some((p) => key.startsWith(`${p}/`));
  let removed = 0;
  for (const area of ["uploads/", "datasets/", "runs/"]) {
    for await (const o of store().list(area)) {
      if (referenced.has(o.key) || published(o.key) || Date.now() - o.modified.getTime() <= graceMs) continue;
      // A run still in progress writes under its own attempt prefix: leave any prefix of a running reconstruction alone.
      if (area === "runs/" && (await runStillWriting(o.key))) continue;
      await store().delete(o.key);
      removed++;
    }
  }
  return removed;
}

async function runStillWriting(key: string): Promise<boolean> {
  const m = /^runs\/p\d+\/r(\d+)\//.exec(key);
  if (!m) return false;
  const [r] = await db().select({ status: reconstructions.status }).from(reconstructions).where(eq(reconstructions.id, Number(m[1])));
  return r?.status === "running";
}

/**
 * A dataset as a caller may see it. Known-site datasets carry exact positions in their extent and
 * summary, so those are left out for anyone who may not read exact site positions (design §9).
 */
export function datasetView(d: typeof datasets.$inferSelect, role: import("./permissions").Role, uploadedByName: string | null) {
  const confidential = d.kind === "known_sites" && !can(role, "sites.readExact");
  return {
    id: d.id,
    projectId: d.projectId,
    kind: d.kind,
    kindLabel: KIND_LABELS[d.kind as EvidenceKind] ?? d.kind,
    name: d.name,
    format: d.format,
    originalName: confidential ? "" : d.originalName,
    sizeBytes: d.sizeBytes,
    sha256: d.sha256,
    crsEpsg: d.crsEpsg,
    vertical: d.vertical,
    extent: confidential ? null : d.extent,
    count: d.count,
    summary: confidential ? { note: "Known-site positions are confidential: see the project's Sites page for what your role may see." } : d.summary,
    warnings: confidential ? [] : d.warnings,
    uploadedBy: uploadedByName,
    createdAt: d.createdAt.toISOString(),
    confidential,
  };
}


/** Messages from the readers start in lower case (they are also used mid-sentence): capitalise for display. */
function sentence(message: string): string {
  return message.charAt(0).toUpperCase() + message.slice(1);
}
