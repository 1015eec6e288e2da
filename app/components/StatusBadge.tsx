/** A run's status in words, with a shape as well as a colour (never colour alone). */
export function StatusBadge({ status, progress }: { status: string; progress?: number }) {
  const styles: Record<string, string> = {
    running: "border-deep-500 text-deep-800",
    queued: "border-deep-500 text-deep-800",
    published: "border-sediment-600 text-sediment-800",
    succeeded: "border-sediment-600 text-sediment-800",
    failed: "border-caution-600 text-caution-800",
    cancelled: "border-sand-500 text-sand-700",
  };
  const glyph: Record<string, string> = { running: "◐", queued: "○", published: "●", succeeded: "●", failed: "✕", cancelled: "◌" };
  const words: Record<string, string> = { running: "running", queued: "waiting", published: "ready", succeeded: "done", failed: "failed", cancelled: "cancelled" };
  return (
    <span className={`inline-flex items-center gap-1 rounded-sm border px-1.5 py-0.5 text-xs ${styles[status] ?? ""}`}>
      <span aria-hidden="true">{glyph[status] ?? "·"}</span>
      {words[status] ?? status}
      {status === "running" && progress !== undefined ? <span className="tabular-nums">{Math.round(progress * 100)} %</span> : null}
    </span>
  );
}
