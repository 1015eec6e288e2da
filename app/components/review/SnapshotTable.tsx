// What a review froze, as a table: each referenced row with its id and hash, and the files' SHA-256s.
import type { ReviewSnapshot } from "~/reviews.server";

function Hash({ value }: { value: string | null | undefined }) {
  if (!value) return <span className="text-sediment-600">—</span>;
  return (
    <span className="font-mono text-[11px] break-all" title={value}>
      {value}
    </span>
  );
}

export function SnapshotTable({ snapshot: s, compact = false }: { snapshot: ReviewSnapshot; compact?: boolean }) {
  const rows: { what: string; detail: string; hash: string | null; files?: { name: string; sha256: string }[] }[] = [
    {
      what: "Reconstruction",
      detail: `#${s.reconstruction.id} ${s.reconstruction.name} · ages ${s.reconstruction.agesKa.join(", ")} ka · ${s.reconstruction.layers} layers · engine ${s.reconstruction.engineVersion}`,
      hash: s.reconstruction.inputsHash,
    },
    { what: "Reconstruction manifest (canonical JSON)", detail: "layer files and statistics", hash: s.reconstruction.manifestSha256 },
  ];
  if (s.subject.kind === "weights") rows.push({ what: "Weight-set version", detail: `#${s.subject.version.id} “${s.subject.weightSet.name}” version ${s.subject.version.number}`, hash: s.subject.version.contentHash });
  else rows.push({ what: "Model", detail: `#${s.subject.model.id} ${s.subject.model.name}`, hash: s.subject.model.inputsHash, files: s.subject.model.files });
  if (s.scoring) rows.push({ what: "Scoring", detail: `#${s.scoring.id} · ${s.scoring.targetLabel}`, hash: s.scoring.inputsHash, files: s.scoring.files });
  rows.push({ what: "Classification", detail: `${String(s.classification.kind ?? "")} thresholds ${JSON.stringify(s.classification.thresholds ?? [])} · ${JSON.stringify(s.classification.labels ?? [])}`, hash: null });
  rows.push(s.uncertaintyRun ? { what: "Uncertainty run", detail: `#${s.uncertaintyRun.id}`, hash: s.uncertaintyRun.inputsHash, files: s.uncertaintyRun.files } : { what: "Uncertainty run", detail: "none in this review", hash: null });
  rows.push({ what: "Exclusion buffers", detail: s.exclusionBuffersM ? Object.entries(s.exclusionBuffersM).map(([k, v]) => `${k.replace(/_/g, " ")} ${v} m`).join(", ") || "none set" : "none set (defaults)", hash: null });
  rows.push({ what: "Datasets", detail: `${s.datasets.length} (listed with their checksums in the report)`, hash: null });
  return (
    <table className={`mt-2 w-full ${compact ? "text-xs" : "text-sm"}`} data-testid="snapshot-table">
      <thead className="border-b border-sand-300 text-left text-xs uppercase tracking-wide text-sediment-600">
        <tr>
          <th className="py-1 pr-4">Frozen</th>
          <th className="py-1 pr-4">Which</th>
          <th className="py-1">Hash (SHA-256)</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.what} className="border-b border-sand-100 align-top">
            <td className="py-1 pr-4 font-medium">{r.what}</td>
            <td className="py-1 pr-4">
              {r.detail}
              {r.files?.length ? (
                <ul className="mt-0.5 space-y-0.5">
                  {r.files.map((f) => (
                    <li key={f.name} className="text-xs">
                      {f.name}: <Hash value={f.sha256} />
                    </li>
                  ))}
                </ul>
              ) : null}
            </td>
            <td className="py-1">
              <Hash value={r.hash} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
