// What the validation pages read from the API (app/validations.server.ts shapes them).
import type { JsonNumber, ValidationView } from "~/validations.server";

export type { ValidationView, JsonNumber };

/** One thing that can be validated: a published scoring, or (added by the models page) a trained model. */
export interface ValidationSubjectOption {
  kind: "scoring" | "model";
  id: number;
  label: string;
  /** where its validation is read (JSON `{ validation }`); default /api/scorings/:id/validation */
  validationHref?: string;
}

export function validationHref(s: ValidationSubjectOption): string {
  return s.validationHref ?? (s.kind === "scoring" ? `/api/scorings/${s.id}/validation` : `/api/models/${s.id}/validation`);
}

export const subjectKey = (s: { kind: string; id: number }) => `${s.kind}:${s.id}`;

/** A JSON number as a number (−∞ kept as −Infinity, null as NaN). */
export function num(v: JsonNumber | undefined): number {
  if (v === "-Infinity") return -Infinity;
  if (v === "Infinity") return Infinity;
  return v === null || v === undefined ? NaN : v;
}

/** A gain, a share or an AUC for people: "0.833", "−∞", "—". */
export function fmt(v: JsonNumber | number | undefined, digits = 3): string {
  const n = typeof v === "number" ? v : num(v);
  if (n === -Infinity) return "−∞";
  if (n === Infinity) return "∞";
  if (Number.isNaN(n)) return "—";
  return n.toFixed(digits).replace("-", "−");
}

export const pct = (v: number) => `${(v * 100).toFixed(1)} %`;

/** Two series, told apart by colour AND symbol (look.md: never colour alone). */
export const SERIES_STYLE = [
  { stroke: "var(--color-deep-700)", symbol: "circle" },
  { stroke: "var(--color-ember-700)", symbol: "triangle" },
] as const;
