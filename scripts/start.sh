#!/usr/bin/env bash
# `npm start`: on a fresh clone, installs what is missing, starts the database, migrates, seeds the
# demo into an empty database, builds when the sources are newer than the build, and serves.
# Honours PORT, HOST and PUBLIC_URL (see scripts/env.sh for the rest).
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$LOWSTAND_ROOT"

bash scripts/bootstrap.sh start
bash scripts/db.sh start
node scripts/run-ts.mjs scripts/migrate.ts
node scripts/run-ts.mjs scripts/seed.ts

export BUILD_DIR="${BUILD_DIR:-build}"
marker="$BUILD_DIR/server/index.js"
if [ ! -f "$marker" ] || [ -n "$(find app public react-router.config.ts vite.config.ts package-lock.json -newer "$marker" -print -quit 2>/dev/null)" ]; then
  echo "[start] building the app"
  npx react-router build >/dev/null
fi

cat <<MSG

  Lowstand is starting at $PUBLIC_URL
  Health: $PUBLIC_URL/healthz
  Demo project: Corrastan Shelf (invented)
  Stop with Ctrl-C; the database keeps running until \`npm run db:down\`.

MSG
export NODE_ENV=production
exec node server.mjs
