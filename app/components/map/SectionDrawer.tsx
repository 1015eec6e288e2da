// The cross-section drawer, opened above the strip after two clicks on the map.
import { useQuery } from "@tanstack/react-query";
import { sectionQuery } from "./queries";

export function SectionDrawer({ reconstructionId, from, to, ageKa, onClose }: { reconstructionId: number; from: [number, number]; to: [number, number]; ageKa: number; onClose: () => void }) {
  const q = useQuery(sectionQuery(reconstructionId, from, to, 250));
  return (
    <section aria-label="Cross-section" data-testid="section-drawer" className="border-t border-deep-800 bg-sand-50 px-3 py-2">
      <div className="flex items-center gap-2">
        <h2 className="text-sm font-semibold">Cross-section A–B</h2>
        <span className="text-xs text-sediment-600 tabular-nums">{q.data ? `${(q.data.lengthM / 1000).toFixed(2)} km · ${ageKa} ka BP highlighted` : q.isError ? q.error.message : "Loading…"}</span>
        <span className="flex-1" />
        <button type="button" onClick={onClose} className="rounded-sm border border-sand-300 bg-white px-2 py-0.5 text-sm">
          Close
        </button>
      </div>
    </section>
  );
}
