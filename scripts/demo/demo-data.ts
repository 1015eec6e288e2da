// The invented demonstration scenario (design §11). Names, places and people are made up; the
// e-mail domain is the reserved .example top-level domain, so no message can reach anyone.
import type { Role } from "../../app/permissions";

export const demoProject = {
  slug: "corrastan-shelf",
  name: "Corrastan Shelf",
  summary:
    "An invented drowned shelf off the invented Velmar coast: two drowned valleys, a terrace and " +
    "closed basins, surveyed along a few sub-bottom lines. Demonstration data only.",
  crsEpsg: 32733, // WGS 84 / UTM zone 33S — the demo grid lies over open ocean near 45° S, 15° E
  isDemo: true,
};

export interface DemoUser {
  email: string;
  name: string;
  password: string;
  role: Role;
  mayCreateProjects: boolean;
}

/** README lists these logins; keep the two in step. */
export const demoUsers: DemoUser[] = [
  { email: "owner@corrastan.example", name: "Dagny Ellerow", password: "lowstand-owner", role: "owner", mayCreateProjects: true },
  { email: "lead@corrastan.example", name: "Ilsa Marrowby", password: "lowstand-lead", role: "lead", mayCreateProjects: true },
  { email: "analyst@corrastan.example", name: "Teo Vantrell", password: "lowstand-analyst", role: "analyst", mayCreateProjects: false },
  { email: "reviewer@corrastan.example", name: "Runa Haskeld", password: "lowstand-reviewer", role: "reviewer", mayCreateProjects: false },
  { email: "viewer@corrastan.example", name: "Ossian Brack", password: "lowstand-viewer", role: "viewer", mayCreateProjects: false },
];
