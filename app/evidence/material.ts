// One rule, used wherever a core's "archaeological indicators" text decides whether it found
// archaeological material: the cores reader, validation, the trained model and target results.

/** Words that say "nothing found" in an indicators column. */
const NOTHING = /^(none|no|nil|n\/a|-|—)$/i;

/**
 * The indicators as stored: trimmed text, or null when empty or when it says nothing was found
 * ("none", "no", "nil", "n/a", "-"). Common practice, no source. O(length).
 */
export function indicatorsOrNull(text: unknown): string | null {
  if (typeof text !== "string") return null;
  const t = text.trim();
  return t === "" || NOTHING.test(t) ? null : t;
}

/** True when the indicators name any archaeological material (see {@link indicatorsOrNull}). */
export function hasArchaeologicalMaterial(text: unknown): boolean {
  return indicatorsOrNull(text) !== null;
}
