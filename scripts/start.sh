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
  Demo project: Corrastan Shelf (invented). Sign in as (e-mail / password):
    owner@corrastan.example     lowstand-owner
    lead@corrastan.example      lowstand-lead
    analyst@corrastan.example   lowstand-analyst
    reviewer@corrastan.example  lowstand-reviewer
    viewer@corrastan.example    lowstand-viewer
  Mail goes to the local catcher unless SMTP_URL is set: read it at $PUBLIC_URL/dev/outbox
  Stop with Ctrl-C; the database keeps running until \`npm run db:down\`.

MSG
export NODE_ENV=production
# Without a real relay (SMTP_URL), mail goes to the local catcher in this process, readable at /dev/outbox.
if [ -z "${SMTP_URL:-}" ]; then
  export SMTP_PORT="${SMTP_PORT:-2525}" LOWSTAND_MAIL_CATCHER_PORT="${SMTP_PORT:-2525}" LOWSTAND_DEV_OUTBOX=1
fi
# One job worker beside the server (`npm run worker` starts more, here or on other machines with the
# same DATABASE_URL and storage settings); it stops when the server stops.
node scripts/run-ts.mjs jobs/worker.ts &
worker_pid=$!
node server.mjs &
server_pid=$!
stop_both() { kill -TERM "$server_pid" "$worker_pid" 2>/dev/null || true; }
trap stop_both INT TERM
status=0
wait "$server_pid" || status=$?
stop_both
# A signal interrupts `wait`: wait again for the server's own exit status.
if [ "$status" -gt 128 ]; then status=0; wait "$server_pid" || status=$?; fi
wait "$worker_pid" || true
exit "$status"
