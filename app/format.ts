// Formatting shared by server and browser code.

/** A byte count for people: 512 bytes, 3.4 kB, 12.0 MB, 1.2 GB (powers of 1024). */
export function formatBytes(n: number): string {
  if (n >= 1024 ** 3) return `${(n / 1024 ** 3).toFixed(1)} GB`;
  if (n >= 1024 ** 2) return `${(n / 1024 ** 2).toFixed(1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(1)} kB`;
  return `${n} bytes`;
}

/** An ISO time as people read it in tables, in UTC: "2026-12-02 04:13" (with `seconds`, ":27" too). */
export function formatUtc(iso: string, seconds = false): string {
  return iso.replace("T", " ").slice(0, seconds ? 19 : 16);
}
