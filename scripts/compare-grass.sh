#!/usr/bin/env bash
# Compares our D8 accumulation and streams with GRASS GIS `r.watershed -s` on our own filled grid
# (check-values.md, "reference library"). Run by hand, not by the tests; needs Debian's grass-core:
#   apt-get install -y grass-core
#   bash scripts/compare-grass.sh [width height cellX cellY seed thresholdCells margin]
set -euo pipefail
here="$(cd "$(dirname "$0")/.." && pwd)"
command -v grass >/dev/null || { echo "GRASS GIS is not installed: apt-get install -y grass-core" >&2; exit 1; }
w=${1:-400}; h=${2:-300}; dx=${3:-25}; dy=${4:-25}; seed=${5:-7}; thr=${6:-100}; margin=${7:-10}
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
cd "$here"
node scripts/run-ts.mjs scripts/compare-grass.ts prepare "$work" "$w" "$h" "$dx" "$dy" "$seed"
cat > "$work/grass.sh" <<GRASS
set -e
r.in.gdal --quiet input="$work/filled.tif" output=dem
g.region raster=dem
r.watershed -s --quiet elevation=dem accumulation=acc drainage=dir
r.out.gdal --quiet -f input=dir output="$work/grass-dir.tif" type=Int32 format=GTiff
r.out.gdal --quiet -f input=acc output="$work/grass-acc.tif" type=Float64 format=GTiff
GRASS
grass --tmp-location "$work/filled.tif" --exec bash "$work/grass.sh" >"$work/grass.log" 2>&1 || { cat "$work/grass.log" >&2; exit 1; }
node scripts/run-ts.mjs scripts/compare-grass.ts compare "$work" "$thr" "$margin"
