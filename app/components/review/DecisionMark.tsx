/** A review's state in words with a glyph (never colour alone): open, accepted, with conditions, changes requested. */
export function DecisionMark({ decision }: { decision: "accepted" | "accepted_with_conditions" | "changes_requested" | null }) {
  const words = { accepted: "accepted", accepted_with_conditions: "accepted with conditions", changes_requested: "changes requested" } as const;
  const glyph = { accepted: "✓", accepted_with_conditions: "✓…", changes_requested: "↺" } as const;
  if (!decision)
    return (
      <span className="inline-flex items-center gap-1 rounded-sm border border-deep-500 px-1.5 py-0.5 text-xs text-deep-800" data-decision="open">
        <span aria-hidden="true">○</span> open
      </span>
    );
  return (
    <span
      className={`inline-flex items-center gap-1 rounded-sm border px-1.5 py-0.5 text-xs ${decision === "changes_requested" ? "border-caution-600 text-caution-800" : "border-sediment-600 text-sediment-800"}`}
      data-decision={decision}
    >
      <span aria-hidden="true">{glyph[decision]}</span> {words[decision]}
    </span>
  );
}
