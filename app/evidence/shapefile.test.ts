import { unzipSync, zipSync } from "fflate";
import { describe, expect, it } from "vitest";
import { parseEvidence } from "./index";
import { EvidenceError, type ParseOptions } from "./types";
import { PROJECT_EPSG, evidenceFixture, refusal } from "./test-support";

const base = (o: Partial<ParseOptions> = {}): ParseOptions => ({ fileName: "t.zip", projectEpsg: PROJECT_EPSG, ...o });

/** The members of GDAL's turbines Shapefile, to change one at a time. */
const members = () => unzipSync(evidenceFixture("turbines-shp.zip"));

describe("zipped Shapefile details", () => {
  it("takes the CRS from GDAL's ESRI-style .prj (no EPSG code in it) by its UTM zone name", async () => {
    const res = await parseEvidence("development_footprint", zipSync(members()), base());
    expect(res.summary.crsSource).toBe(".prj ESRI name (EPSG:32731)");
  });

  it("leaves out records marked deleted in the .dbf (dBASE deletion flag '*')", async () => {
    const m = members();
    const dbf = m["turbines.dbf"].slice();
    const v = new DataView(dbf.buffer);
    const headerLen = v.getUint16(8, true);
    const recLen = v.getUint16(10, true);
    dbf[headerLen + recLen] = 0x2a; // the second record
    m["turbines.dbf"] = dbf;
    const res = await parseEvidence("development_footprint", zipSync(m), base());
    expect(res.features!.features.map((f) => f.properties.assetId)).toEqual(["T-01", "T-03"]);
  });

  it("refuses a .dbf that does not match the .shp, and a zip without .dbf", async () => {
    const m = members();
    const dbf = m["turbines.dbf"].slice();
    new DataView(dbf.buffer).setUint32(4, 2, true);
    const e = await refusal(parseEvidence("development_footprint", zipSync({ ...m, "turbines.dbf": dbf }), base()));
    expect(e.message).toMatch(/turbines\.shp has 3 shapes but turbines\.dbf has 2 records/);
    const { "turbines.dbf": _drop, ...noDbf } = m;
    expect((await refusal(parseEvidence("development_footprint", zipSync(noDbf), base()))).message).toMatch(/no matching \.dbf/);
  });

  it("needs a .prj or a declared EPSG code", async () => {
    const { "turbines.prj": _drop, ...noPrj } = members();
    expect((await refusal(parseEvidence("development_footprint", zipSync(noPrj), base()))).message).toMatch(/no \.prj file.*declare the EPSG code/);
    const ok = await parseEvidence("development_footprint", zipSync(noPrj), base({ declaredEpsg: PROJECT_EPSG }));
    expect(ok.summary.crsSource).toMatch(/declared EPSG:32731/);
  });

  it("refuses projected coordinates under a .prj that says WGS 84", async () => {
    const m = members();
    m["turbines.prj"] = new TextEncoder().encode('GEOGCS["GCS_WGS_1984",DATUM["D_WGS_1984",SPHEROID["WGS_1984",6378137.0,298.257223563]],PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]]');
    const e = await refusal(parseEvidence("development_footprint", zipSync(m), base()));
    expect(e.message).toMatch(/feature 1: position \(\d+\.?\d*, \d+\.?\d*\) is not longitude\/latitude, but \.prj \(EPSG:4326 \(WGS 84\)\) says it should be/);
  });

  it("refuses a cut .shp and a zip declaring a huge unpacked size before unpacking it", async () => {
    const m = members();
    const cut = await refusal(parseEvidence("development_footprint", zipSync({ ...m, "turbines.shp": m["turbines.shp"].subarray(0, 130) }), base()));
    expect(cut.message).toMatch(/the \.shp header says the file is 184 bytes, but it has 130: the file is truncated/);
    // set the uncompressed size in the local header (offset 22) and the central directory (offset 24) to 2 GiB − 1
    const z = zipSync({ "big.shp": new Uint8Array(10) }, { level: 0 });
    const v = new DataView(z.buffer);
    v.setUint32(22, 0x7fffffff, true);
    const cd = z.length - 22 - 46 - "big.shp".length;
    expect(v.getUint32(cd, true)).toBe(0x02014b50); // central directory signature (PKWARE APPNOTE)
    v.setUint32(cd + 24, 0x7fffffff, true);
    expect((await refusal(parseEvidence("lease_blocks", z, base()))).message).toMatch(/unpacks to more than 1024 MiB/);
  });
});
