// Runs a TypeScript entry on Node 20, which cannot load .ts itself:
//   node scripts/run-ts.mjs path/to/entry.ts [args...]
// tsx is registered as an ESM loader first, then the entry is imported. Also usable as a
// worker_threads entry: new Worker(new URL("./run-ts.mjs", import.meta.url), { argv: [entry] }).
import { register } from "tsx/esm/api";
import { pathToFileURL } from "node:url";
import path from "node:path";
import { workerData, isMainThread } from "node:worker_threads";

register();
const entry = isMainThread ? process.argv[2] : (workerData?.entry ?? process.argv[2]);
if (!entry) {
  console.error("usage: node scripts/run-ts.mjs <entry.ts> [args...]");
  process.exit(2);
}
if (isMainThread) process.argv.splice(2, 1); // the entry sees its own arguments from argv[2]
await import(pathToFileURL(path.resolve(entry)).href);
