#!/usr/bin/env bash
# `npm test`: installs what is missing, starts the database (shared with `npm start`, but the tests
# use databases of their own), builds the app into build-test/ (leaving a running `npm start`'s
# build alone), then runs the unit and integration tests (Vitest) and the browser tests (Playwright).
# Extra arguments go to Vitest, e.g. `npm test -- app/terrain`; then the browser tests are skipped.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$LOWSTAND_ROOT"

t0=$SECONDS
bash scripts/bootstrap.sh test
bash scripts/db.sh start
node scripts/run-ts.mjs tests/support/prepare-template.ts
echo "[test] ready in $((SECONDS - t0)) s"

npx vitest run "$@"
echo "[test] unit and integration tests done at $((SECONDS - t0)) s"
[ $# -gt 0 ] && exit 0

export BUILD_DIR=build-test
npx react-router build >/dev/null
npx playwright test
echo "[test] all tests passed in $((SECONDS - t0)) s"
