import { CAUTIONS } from "../cautions";

/** The standing cautions of design §10, shown wherever results may be acted on. */
export function Cautions({ compact = false }: { compact?: boolean }) {
  const items = CAUTIONS;
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
