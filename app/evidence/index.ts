/**
 * parseEvidence: one entry point for every kind of upload (design §2). Bytes in, a normalised and
 * validated result out, in the project CRS — or an EvidenceError the user can act on.
 */
import { parseGridEvidence } from "./grids";
import { describeUnknown, sniffFormat } from "./sniff";
import { parseTableEvidence } from "./tables";
import { parseVectorEvidence } from "./vectors";
import { EvidenceError, type EvidenceFormat, type EvidenceKind, EVIDENCE_KINDS, KIND_FORMATS, type ParseOptions, type ParsedEvidence, resolveLimits } from "./types";

export * from "./types"; // the types, EVIDENCE_KINDS and KIND_FORMATS: import them from "./types" in browser code
export { sniffFormat } from "./sniff";
export { geotiffHeaderCheck } from "./geotiff-header";

const FORMAT_NAMES: Record<EvidenceFormat, string> = {
  geotiff: "GeoTIFF",
  "esri-ascii": "ESRI ASCII grid",
  xyz: "XYZ points",
  csv: "CSV",
  geojson: "GeoJSON",
  gpkg: "GeoPackage",
  "shapefile-zip": "zipped Shapefile",
  ags4: "AGS4",
};

/**
 * Parses and validates an upload of `kind`. The format is sniffed from the bytes (the name only
 * breaks ties); a format the kind does not take is refused naming the ones it does. Throws
 * EvidenceError for anything the user can fix; other errors are bugs.
 */
export async function parseEvidence(kind: EvidenceKind, bytes: Uint8Array, opts: ParseOptions): Promise<ParsedEvidence> {
  if (!EVIDENCE_KINDS.includes(kind)) throw new EvidenceError(`"${kind}" is not a kind of evidence Lowstand takes`);
  if (bytes.length === 0) throw new EvidenceError("the file is empty (0 bytes)", { byte: 0 });
  const limits = resolveLimits(opts.limits);
  const sniffed = sniffFormat(bytes.subarray(0, 8192), opts.fileName);
  const allowed = KIND_FORMATS[kind];
  let format = sniffed;
  // a headerless table of numbers sniffs as XYZ; for a kind that takes CSV only, read it as CSV so the
  // message is about its missing header, not about XYZ
  if (format === "xyz" && !allowed.includes("xyz") && allowed.includes("csv")) format = "csv";
  if (format === null) {
    const claimed = /\.(tif|tiff)$/i.test(opts.fileName) ? " although its name ends .tif" : "";
    throw new EvidenceError(`${describeUnknown(bytes.subarray(0, 16))}${claimed}: a ${kind.replace(/_/g, " ")} upload must be ${allowed.map((f) => FORMAT_NAMES[f]).join(", ")}`, { byte: 0 });
  }
  if (!allowed.includes(format)) {
    throw new EvidenceError(
      `the file is ${FORMAT_NAMES[format]}, but a ${kind.replace(/_/g, " ")} upload must be ${allowed.map((f) => FORMAT_NAMES[f]).join(" or ")}`,
    );
  }
  switch (format) {
    case "geotiff":
    case "esri-ascii":
    case "xyz":
      return parseGridEvidence(kind, format, bytes, opts, limits);
    case "csv":
    case "ags4":
      return parseTableEvidence(kind, format, bytes, opts, limits);
    case "geojson":
    case "gpkg":
    case "shapefile-zip":
      return parseVectorEvidence(kind, format, bytes, opts, limits);
  }
}
