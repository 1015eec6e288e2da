import type { Config } from "@react-router/dev/config";

// Server-side rendering: pages render on the server first, so tables and printable views work
// before client JavaScript arrives, and every loader checks roles on the server.
// BUILD_DIR lets the test suite build beside a running `npm start` without touching its files.
export default {
  ssr: true,
  buildDirectory: process.env.BUILD_DIR ?? "build",
} satisfies Config;
