/**
 * The standing cautions of design §10, as plain text, so pages (components/Cautions.tsx) and exports
 * (app/exports/: CSV header comments, GeoJSON `cautions`, the GeoPackage `cautions` table) carry the
 * same words.
 */
export const CAUTIONS: readonly string[] = [
  "Model output is a planning aid: a low score is not evidence of absence.",
  "Fieldwork and reporting follow local heritage law and licensed archaeological practice.",
  "Seabed work needs an unexploded-ordnance risk assessment before any coring.",
  "Human remains mean stopping work and notifying the competent authority.",
  "Descendant and Indigenous communities are consulted under the applicable rules.",
];
