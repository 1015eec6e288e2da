import { describe, expect, it } from "vitest";
import { readAgs4Groups } from "./ags4";
import { parseEvidence } from "./index";
import { EvidenceError, type ParseOptions } from "./types";
import { PROJECT_EPSG, evidenceFixture, utf8, refusal } from "./test-support";

const base = (o: Partial<ParseOptions> = {}): ParseOptions => ({ fileName: "cores.ags", projectEpsg: PROJECT_EPSG, declaredEpsg: PROJECT_EPSG, ...o });

describe("AGS4 cores and boreholes (LOCA positions, GEOL units)", () => {
  it("splits the file into groups with their headings and data rows", () => {
    const g = readAgs4Groups(new TextDecoder().decode(evidenceFixture("cores.ags")), 1000);
    expect([...g.keys()]).toEqual(["PROJ", "LOCA", "GEOL"]);
    expect(g.get("LOCA")!.rows).toHaveLength(3);
    expect(g.get("GEOL")!.headings).toEqual(["LOCA_ID", "GEOL_TOP", "GEOL_BASE", "GEOL_DESC", "GEOL_LEG", "GEOL_GEOL"]);
  });

  it("reads locations as cores with ground level as seabed and the GEOL units under each", async () => {
    const res = await parseEvidence("cores", evidenceFixture("cores.ags"), base({ vertical: { sign: "elevation_positive_up", datum: "LAT", offsetToMslM: -2 } }));
    expect(res.format).toBe("ags4");
    expect(res.count).toBe(3);
    const vc01 = res.rows![0] as Record<string, unknown> & { units: { description: string }[] };
    expect(vc01).toMatchObject({ coreId: "VC01", locationType: "VC", x: 496000, y: 6675000, groundLevelM: -32.4, waterDepthM: 32.4, penetrationM: 5.2, horizonReached: "unknown" });
    expect(vc01.seabedElevationM).toBeCloseTo(-34.4, 10);
    expect(vc01.units.map((u) => u.description)).toEqual(["Grey shelly medium SAND", "Dark brown fibrous PEAT with wood fragments", "Stiff grey silty CLAY"]);
    expect(res.summary).toMatchObject({ cores: 3, units: 4 });
    expect(res.extent).toEqual([496000, 6675000, 497000, 6676000]);
  });

  it("refuses files without LOCA, DATA rows of the wrong width, bad numbers and GEOL rows for unknown locations", async () => {
    expect((await refusal(parseEvidence("cores", utf8('"GROUP","PROJ"\n"HEADING","PROJ_ID"\n"DATA","X"\n'), base()))).message).toMatch(/no LOCA group.*it has: PROJ/);
    const bad = [
      '"GROUP","LOCA"',
      '"HEADING","LOCA_ID","LOCA_NATE","LOCA_NATN"',
      '"DATA","A","496000","6675000"',
      '"DATA","B","49600O","6675000"',
      '"DATA","C","496000"',
      "",
      '"GROUP","GEOL"',
      '"HEADING","LOCA_ID","GEOL_TOP","GEOL_BASE"',
      '"DATA","Z","0","1"',
    ].join("\n");
    const e1 = await refusal(parseEvidence("cores", utf8(bad), base()));
    expect(e1.message).toMatch(/line 5: 2 values in a LOCA row with 3 headings/);
    const e2 = await refusal(parseEvidence("cores", utf8(bad.replace('"DATA","C","496000"\n', "")), base()));
    expect(e2.message).toMatch(/line 4: LOCA_NATE is '49600O', not a number/);
    expect(e2.message).toMatch(/GEOL row for LOCA_ID 'Z', which is not in the LOCA group/);
  });
});
