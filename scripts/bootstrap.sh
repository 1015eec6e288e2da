#!/usr/bin/env bash
# Installs what is missing, and nothing else; fast when nothing is missing.
# Bash and Node built-ins only: a fresh clone has no node_modules yet.
#   scripts/bootstrap.sh start   — what `npm start` needs (PostgreSQL, npm dependencies)
#   scripts/bootstrap.sh test    — also Chromium for browser tests and GDAL for reference checks
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
cd "$LOWSTAND_ROOT"
mode="${1:-start}"

say() { printf '\033[2m[bootstrap]\033[0m %s\n' "$*"; }

# --- Debian packages ---------------------------------------------------------------------------
missing=()
compgen -G "/usr/lib/postgresql/*/bin/initdb" >/dev/null || missing+=(postgresql)
if [ "$mode" = test ]; then
  command -v chromium >/dev/null || missing+=(chromium)
  command -v gdalinfo >/dev/null || missing+=(gdal-bin)
fi
if [ ${#missing[@]} -gt 0 ]; then
  if [ "$(id -u)" -ne 0 ] && ! command -v sudo >/dev/null; then
    echo "Lowstand needs these Debian packages: ${missing[*]}. Install them (apt-get install -y ${missing[*]}) and run again." >&2
    exit 1
  fi
  sudo=""; [ "$(id -u)" -ne 0 ] && sudo="sudo"
  say "installing Debian packages: ${missing[*]}"
  export DEBIAN_FRONTEND=noninteractive
  $sudo apt-get update -qq
  $sudo apt-get install -y -qq "${missing[@]}" >/dev/null
  # Debian's package starts a cluster of its own on 5432; ours is separate and this one is not used.
fi

# --- npm dependencies --------------------------------------------------------------------------
# Install when node_modules is absent or older than the lock (npm writes node_modules/.package-lock.json).
if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  say "installing npm dependencies from the lock"
  npm ci --no-audit --no-fund --loglevel=error
fi
