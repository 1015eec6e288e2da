#!/usr/bin/env node
// Generates app/terrain/data/epsg-projected-metre.json: the EPSG → proj4 table the terrain engine
// uses to recognise projected CRSs in metres (proj4js itself only knows WGS84, Web Mercator and UTM).
//
//   node scripts/make-epsg-table.mjs            (needs Debian's `proj-bin` for `projinfo`)
//
// What goes in (see docs/decisions/102-epsg-table.md):
//   - every non-deprecated EPSG projected CRS whose PROJ string has +units=m, exported by
//     `projinfo EPSG:n -o PROJ -q --boundcrs-to-wgs84` (so a Helmert +towgs84 is kept where PROJ
//     has a single one), skipping strings that need grid files (+nadgrids/+geoidgrids) and strings
//     proj4js cannot parse;
//   - the codes of geographic 2D CRSs and of projected CRSs in other units, only as code lists, so
//     the engine can tell a user "this is geographic, project it first" or "this is in feet".
// The output is sorted and deterministic; re-running on the same PROJ release gives the same file.
import { execFileSync } from "node:child_process";
import { writeFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import proj4 from "proj4";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const out = path.join(root, "app/terrain/data/epsg-projected-metre.json");

function run(args) {
  return execFileSync("projinfo", args, { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
}
function listCodes(filter) {
  const text = run(["--list-crs", filter, "--authority", "EPSG"]);
  const codes = [];
  for (const line of text.split("\n")) {
    const m = /^EPSG:(\d+) /.exec(line);
    if (m) codes.push(Number(m[1]));
  }
  return codes.sort((a, b) => a - b);
}

let projVersion = "unknown";
try {
  projVersion = (execFileSync("projinfo", [], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] }) || "").trim();
} catch (e) {
  projVersion = String(e.stdout || e.stderr || "").split("\n")[0].trim();
}

const projected = listCodes("projected");
const geographic = listCodes("geographic_2d");
const table = {};
const otherUnits = [];
const skipped = [];
let done = 0;
for (const code of projected) {
  let str;
  try {
    str = run([`EPSG:${code}`, "-o", "PROJ", "-q", "--boundcrs-to-wgs84"]).trim().split("\n")[0].trim();
  } catch {
    skipped.push(code);
    continue;
  }
  done++;
  if (done % 500 === 0) process.stderr.write(`${done}/${projected.length}\n`);
  if (!/\+units=m(\s|$)/.test(str)) {
    otherUnits.push(code);
    continue;
  }
  if (/\+(nadgrids|geoidgrids)=/.test(str)) {
    skipped.push(code);
    continue;
  }
  str = str.replace(/\s*\+type=crs/, "").replace(/\s*\+no_defs/, "").trim();
  try {
    proj4(str, "WGS84");
  } catch {
    skipped.push(code);
    continue;
  }
  table[code] = str;
}

const doc = {
  generatedBy: "scripts/make-epsg-table.mjs",
  source: `EPSG dataset as shipped with PROJ (${projVersion}), exported with projinfo`,
  note: "Projected CRSs with metre units only; generated file, do not edit by hand.",
  projectedMetre: table,
  projectedOtherUnits: otherUnits,
  geographic2d: geographic,
  skippedNeedGridsOrUnparsable: skipped.sort((a, b) => a - b),
};
writeFileSync(out, JSON.stringify(doc, null, 0).replace(/,"(\d+)":/g, ',\n"$1":') + "\n");
process.stderr.write(
  `wrote ${out}: ${Object.keys(table).length} projected metre CRSs, ${otherUnits.length} in other units, ${geographic.length} geographic, ${skipped.length} skipped\n`,
);
