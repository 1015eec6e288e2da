// The invented demonstration scenario (design §11). Names, places and people are made up.
export const demoProject = {
  slug: "corrastan-shelf",
  name: "Corrastan Shelf",
  summary:
    "An invented drowned shelf off the invented Velmar coast: two drowned valleys, a terrace and " +
    "closed basins, surveyed along a few sub-bottom lines. Demonstration data only.",
  crsEpsg: 32733, // WGS 84 / UTM zone 33S — the demo grid lies over open ocean near 45° S, 15° E
  isDemo: true,
};
