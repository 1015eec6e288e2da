// The invented demonstration evidence (design §11): a procedurally generated shelf, sub-bottom
// picks along invented survey lines, invented known sites (a first few and a 2026 campaign,
// demo-sites.ts) and cores, two lease blocks, a development footprint, an exclusion, the survey
// area and sea-level index points. Everything is made up and placed in WGS 84 / UTM zone 33S over
// open Southern Ocean, far from any real coast. Each file goes through the same readers as a
// user's upload.
import proj4 from "proj4";
import { writeGeoTiff } from "../../app/terrain/geotiff-write";
import { resolveCrs } from "../../app/terrain/crs";
import { syntheticGrid } from "../bench/synthetic-shelf";
import { DEMO_SITES, DEMO_SITES_2026_NAME, type DemoSite } from "./demo-sites";

export { DEMO_SITES, type DemoSite };

export const DEMO_EPSG = 32733;
export const DEMO_ORIGIN: [number, number] = [480_000, 5_030_000];
export const DEMO_SIZE = 512;
export const DEMO_CELL_M = 25;

export interface DemoFile {
  kind: string;
  name: string;
  fileName: string;
  fields?: Record<string, string>;
  bytes: Uint8Array;
  /** added to the demo after its first release: the seed also adds it to a demo seeded before (scripts/seed.ts) */
  addedLater?: boolean;
}

function sitesCsv(rows: DemoSite[]): string {
  const n = (v: number | null) => (v === null ? "" : String(v));
  return [
    "site_id,x,y,precision_m,kind,context,discovery_method,cal_bp_from,cal_bp_to,confidence,sensitivity,community",
    ...rows.map((d) => [d.id, d.x, d.y, d.precisionM, d.kind, d.context, d.method, n(d.calFrom), n(d.calTo), d.confidence, d.sensitivity, d.community].join(",")),
  ].join("\n");
}

const text = (s: string) => new TextEncoder().encode(s);

/** The demo files, deterministic: the same bytes every time. */
export function demoFiles(): DemoFile[] {
  const crs = resolveCrs(DEMO_EPSG);
  const grid = syntheticGrid(DEMO_SIZE, 20260, DEMO_CELL_M);
  grid.spec = { ...grid.spec, originX: DEMO_ORIGIN[0], originY: DEMO_ORIGIN[1], crs: { epsg: crs.epsg, proj4: crs.proj4 } };
  const [x0, y1] = DEMO_ORIGIN;
  const x1 = x0 + DEMO_SIZE * DEMO_CELL_M;
  const y0 = y1 - DEMO_SIZE * DEMO_CELL_M;
  const toLonLat = (x: number, y: number) => proj4(crs.proj4, "WGS84", [x, y]).map((v) => Math.round(v * 1e7) / 1e7);
  const ring = (xa: number, ya: number, xb: number, yb: number) => [[xa, ya], [xb, ya], [xb, yb], [xa, yb], [xa, ya]].map(([x, y]) => toLonLat(x, y));
  const fc = (features: unknown[]) => text(JSON.stringify({ type: "FeatureCollection", features }));

  // Four east–west sub-bottom lines of the invented 2025 Velmar chirp survey.
  const lineYs = [5_027_200, 5_024_300, 5_021_400, 5_018_600];
  const lines: string[] = ["line_id,fix_id,x,y,system,vertical_resolution_m"];
  const picks: string[] = ["line_id,fix_id,x,y,depth_below_seabed_m"];
  lineYs.forEach((y, li) => {
    const id = `VC25-${li + 1}`;
    for (let x = x0 + 400, fix = 1000; x <= x1 - 400; x += 100, fix += 2) {
      const yy = y + 40 * Math.sin(x / 700 + li);
      lines.push(`${id},${fix},${x.toFixed(1)},${yy.toFixed(1)},chirp,0.3`);
      const depth = Math.max(0.2, 2.2 + 1.3 * Math.sin(x / 950 + li * 0.7) + 0.6 * Math.cos(x / 330));
      picks.push(`${id},${fix},${x.toFixed(1)},${yy.toFixed(1)},${depth.toFixed(2)}`);
    }
  });

  const sites = sitesCsv(DEMO_SITES.filter((d) => d.set === "2025"));
  const sites2026 = sitesCsv(DEMO_SITES.filter((d) => d.set === "2026"));

  const cores = [
    "core_id,x,y,water_depth_m,penetration_m,recovery_m,horizon_reached,preserved_land_surface,archaeological_indicators,unit_top_m,unit_base_m,unit_description,lab_code,c14_age,c14_sigma,cal_from,cal_to,material,sample_depth_m",
    // the dates' calibrated ranges (cal BP, 95 %) are invented, as everything here
    "VC25-07,483380,5026120,38.5,4.2,3.6,yes,yes,charcoal; burnt flint,0,1.9,shelly sand,,,,,,,",
    "VC25-07,,,,,,,,,1.9,2.6,peat,VLM-2281,9420,45,10740,10560,peat,2.2",
    "VC25-07,,,,,,,,,2.6,4.2,grey clay with roots,,,,,,,",
    "VC25-11,487900,5023300,52.0,3.0,2.4,yes,yes,none,0,2.1,medium sand,,,,,,,",
    "VC25-11,,,,,,,,,2.1,3.0,palaeosol,VLM-2290,10150,50,11980,11630,organic silt,2.3",
    "VC25-14,490600,5019800,71.3,1.4,1.1,refused,unknown,none,0,1.4,gravel lag,,,,,,,",
    "VC25-16,481900,5021700,31.2,5.1,4.4,yes,no,none,0,4.1,stratified sand,,,,,,,",
    "VC25-16,,,,,,,,,4.1,5.1,truncated till surface,,,,,,,",
  ].join("\n");

  const indexPoints = [
    "id,age_ka,age_sigma_ka,height_m,height_sigma_m,kind,lab_code,indicator",
    "VIP-1,10.65,0.09,-41.8,1.5,index_point,VLM-2281,basal peat",
    "VIP-2,11.80,0.18,-49.6,2.0,terrestrial_limiting,VLM-2290,palaeosol",
    "VIP-3,8.20,0.12,-18.9,1.2,index_point,VLM-2302,salt-marsh peat",
    "VIP-4,11.60,0.15,-58.0,3.0,marine_limiting,VLM-2311,shell hash",
  ].join("\n");

  return [
    { kind: "bathymetry", name: "Velmar multibeam 2025 (25 m)", fileName: "velmar-multibeam-25m.tif", fields: { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" }, bytes: writeGeoTiff(grid) },
    { kind: "survey_lines", name: "Velmar chirp lines 2025", fileName: "velmar-chirp-lines.csv", bytes: text(lines.join("\n")) },
    { kind: "horizon_picks", name: "Transgressive surface picks", fileName: "velmar-ts-picks.csv", bytes: text(picks.join("\n")) },
    { kind: "known_sites", name: "Velmar known sites", fileName: "velmar-sites.csv", bytes: text(sites) },
    { kind: "known_sites", name: DEMO_SITES_2026_NAME, fileName: "velmar-sites-2026.csv", bytes: text(sites2026), addedLater: true },
    { kind: "cores", name: "Velmar vibrocores 2025", fileName: "velmar-cores.csv", bytes: text(cores) },
    { kind: "sea_level_index_points", name: "Velmar index points", fileName: "velmar-index-points.csv", bytes: text(indexPoints) },
    {
      kind: "survey_area",
      name: "Velmar survey area",
      fileName: "velmar-survey-area.geojson",
      bytes: fc([{ type: "Feature", properties: { name: "Velmar 2025 survey area" }, geometry: { type: "Polygon", coordinates: [ring(x0 + 300, y0 + 300, x1 - 300, y1 - 300)] } }]),
    },
    {
      // An invented aggregate licence worked before the survey: finds reported from its cargoes are
      // dredged (never scored), but it is searched ground for the trained model's background.
      kind: "dredging_areas",
      name: "Velmar aggregate area VA-4",
      fileName: "velmar-dredging-va4.geojson",
      addedLater: true,
      bytes: fc([{ type: "Feature", properties: { name: "Area VA-4", method: "aggregate dredging", years: "1998–2014" }, geometry: { type: "Polygon", coordinates: [ring(480_600, 5_017_500, 483_600, 5_018_500)] } }]),
    },
    {
      kind: "lease_blocks",
      name: "Offshore lease blocks",
      fileName: "velmar-lease-blocks.geojson",
      bytes: fc([
        { type: "Feature", properties: { name: "Block VM-12" }, geometry: { type: "Polygon", coordinates: [ring(481_000, 5_019_000, 486_000, 5_025_000)] } },
        { type: "Feature", properties: { name: "Block VM-13" }, geometry: { type: "Polygon", coordinates: [ring(486_000, 5_019_000, 491_000, 5_025_000)] } },
      ]),
    },
    {
      kind: "development_footprint",
      name: "Velmar Bank wind farm, phase 1",
      fileName: "velmar-wind-phase1.geojson",
      bytes: fc([
        ...[[487_200, 5_020_200], [488_400, 5_020_200], [487_200, 5_021_600], [488_400, 5_021_600], [489_600, 5_021_600]].map(([x, y], i) => ({
          type: "Feature",
          properties: { asset_id: `T${i + 1}`, kind: "turbine monopile", impact_depth_m: 32, buffer_m: 50 },
          geometry: { type: "Point", coordinates: toLonLat(x, y) },
        })),
        { type: "Feature", properties: { asset_id: "EC-1", kind: "export cable", impact_depth_m: 2.5, buffer_m: 25 }, geometry: { type: "LineString", coordinates: [[487_200, 5_020_200], [484_000, 5_019_600], [480_600, 5_019_500]].map(([x, y]) => toLonLat(x, y)) } },
      ]),
    },
    {
      kind: "exclusions",
      name: "Known wreck",
      fileName: "velmar-wreck.geojson",
      bytes: fc([{ type: "Feature", properties: { kind: "wreck", buffer_m: 100, name: "Unnamed steel wreck" }, geometry: { type: "Point", coordinates: toLonLat(489_050, 5_023_750) } }]),
    },
  ];
}
