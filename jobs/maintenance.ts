// Housekeeping every worker does now and then: temporary upload files left by crashed requests,
// and stored objects no row refers to. Safe in several workers at once (deleting twice is harmless).
import { sweepUploadTemp } from "../app/uploads.server";
import { sweepUnreferencedObjects } from "../app/datasets.server";

export function startMaintenance(intervalMs = Number(process.env.LOWSTAND_MAINTENANCE_INTERVAL_MS ?? 3_600_000)): () => void {
  const run = async () => {
    try {
      const temps = await sweepUploadTemp();
      const objects = await sweepUnreferencedObjects();
      if (temps || objects) console.log(`[maintenance] removed ${temps} stale upload file(s) and ${objects} unreferenced stored object(s)`);
    } catch (err) {
      console.error("[maintenance] sweep failed:", err);
    }
  };
  const first = setTimeout(run, 60_000);
  const timer = setInterval(run, intervalMs);
  first.unref();
  timer.unref();
  return () => {
    clearTimeout(first);
    clearInterval(timer);
  };
}
