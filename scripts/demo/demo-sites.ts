// The demo's known sites (design §11): every one invented, on the invented Corrastan Shelf. Kept
// apart from demo-files.ts, which writes them into the demo's CSV files, so browser tests can read
// the positions a viewer must never receive without loading the shelf generator.

/** A known site of the demo, as its CSV row says (all invented). */
export interface DemoSite {
  id: string;
  x: number;
  y: number;
  precisionM: number;
  kind: string;
  context: "in_situ" | "derived" | "trawled";
  method: string;
  calFrom: number | null;
  calTo: number | null;
  confidence: "high" | "medium" | "low";
  sensitivity: "normal" | "restricted";
  community: string;
  /** which file: the first sites of 2025, or the 2026 campaign */
  set: "2025" | "2026";
}

export const DEMO_SITES_2026_NAME = "Velmar known sites, 2026 campaign";

const site = (set: DemoSite["set"], id: string, x: number, y: number, precisionM: number, kind: string, context: DemoSite["context"], method: string, calFrom: number | null, calTo: number | null, confidence: DemoSite["confidence"], sensitivity: DemoSite["sensitivity"] = "normal", community = ""): DemoSite => ({ set, id, x, y, precisionM, kind, context, method, calFrom, calTo, confidence, sensitivity, community });

/**
 * The demo's known sites. The 2026 campaign's in-situ sites were placed (by hand, once) on cells
 * that are land at the reconstructed age nearest their dates in the seeded demo reconstruction
 * (12 ka for VEL-007…012, 10 ka for VEL-013…018): most near that age's coast, a river mouth or a
 * stream, a few inland, most within the horizon's assessed band along the survey lines.
 * demo-sites.test.ts holds them to it. Positions are never on round hundreds (the
 * survey fixes are), so the browser tests can look for them in what a viewer receives.
 */
export const DEMO_SITES: DemoSite[] = [
  site("2025", "VEL-001", 483410, 5026150, 5, "shell midden", "in_situ", "vibrocore", 10900, 10400, "high"),
  site("2025", "VEL-002", 485020, 5022880, 10, "lithic scatter", "in_situ", "grab sample", 11800, 11200, "medium"),
  site("2025", "VEL-003", 486760, 5020330, 5, "wooden stake weir", "in_situ", "diver survey", 9600, 9300, "high", "restricted", "Velmar shore families"),
  site("2025", "VEL-004", 482150, 5019420, 25, "hearth", "in_situ", "vibrocore", 12400, 11900, "medium"),
  site("2025", "VEL-005", 488300, 5025600, 250, "worked flint", "trawled", "fishing catch", null, null, "low"),
  site("2025", "VEL-006", 484900, 5027900, 100, "antler tool", "derived", "beach find", null, null, "low"),
  // the 2026 campaign: the 12 ka coast and its valleys
  site("2026", "VEL-007", 486741, 5023768, 5, "shell midden", "in_situ", "vibrocore", 12350, 11950, "high"),
  site("2026", "VEL-008", 487617, 5027083, 10, "lithic scatter", "in_situ", "diver survey", 12250, 11850, "medium"),
  site("2026", "VEL-009", 486661, 5018709, 5, "hearth", "in_situ", "vibrocore", 12400, 12050, "high"),
  site("2026", "VEL-010", 485869, 5020857, 25, "lithic scatter", "in_situ", "grab sample", 12100, 11700, "medium"),
  site("2026", "VEL-011", 485517, 5018718, 15, "butchered bone", "in_situ", "vibrocore", 12300, 11900, "medium"),
  site("2026", "VEL-012", 485508, 5026167, 10, "knapping floor", "in_situ", "diver survey", 11950, 11650, "medium"),
  // … and the 10 ka coast, river mouths and streams
  site("2026", "VEL-013", 485467, 5023984, 5, "shell midden", "in_situ", "vibrocore", 10350, 9950, "high"),
  site("2026", "VEL-014", 485392, 5027091, 10, "hearth", "in_situ", "diver survey", 10200, 9800, "high"),
  site("2026", "VEL-015", 484583, 5023759, 20, "lithic scatter", "in_situ", "grab sample", 10500, 10100, "medium"),
  site("2026", "VEL-016", 484817, 5020868, 5, "hearth", "in_situ", "vibrocore", 10100, 9700, "medium"),
  site("2026", "VEL-017", 483791, 5024193, 10, "charcoal spread", "in_situ", "vibrocore", 10400, 10000, "medium"),
  site("2026", "VEL-018", 483467, 5028716, 25, "lithic scatter", "in_situ", "diver survey", 9950, 9600, "low"),
];
