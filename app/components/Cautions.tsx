/** The standing cautions of design §10, shown wherever results may be acted on. */
export function Cautions({ compact = false }: { compact?: boolean }) {
  const items = [
    "Model output is a planning aid: a low score is not evidence of absence.",
    "Fieldwork and reporting follow local heritage law and licensed archaeological practice.",
    "Seabed work needs an unexploded-ordnance risk assessment before any coring.",
    "Human remains mean stopping work and notifying the competent authority.",
    "Descendant and Indigenous communities are consulted under the applicable rules.",
  ];
  return (
    <aside
      aria-label="Cautions"
      className={`border-l-4 border-caution-600 bg-caution-100/60 text-sediment-800 ${compact ? "p-3 text-xs" : "p-4 text-sm"}`}
    >
      <p className="font-semibold text-caution-800">Before acting on any result</p>
      <ul className="mt-1 list-disc space-y-0.5 pl-5">
        {items.map((t) => (
          <li key={t}>{t}</li>
        ))}
      </ul>
    </aside>
  );
}
