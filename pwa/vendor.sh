#!/usr/bin/env bash
# Copies the app's pinned front-end libraries from the npm registry into
# pwa/vendor/ with their licences. The app has no build step: the copied files
# are committed and embedded as they are. Re-run only to change a version.
set -euo pipefail

IDB=8.0.4
HTM=3.1.1
UPLOT=1.6.32

here="$(cd "$(dirname "$0")" && pwd)"
out="$here/vendor"
tmp="$(mktemp -d)"
trap 'rm -rf "$tmp"' EXIT

cd "$tmp"
npm pack --silent "idb@$IDB" "htm@$HTM" "uplot@$UPLOT" >/dev/null
for f in *.tgz; do
  d="${f%.tgz}"
  mkdir -p "$d"
  tar -xzf "$f" -C "$d"
done

rm -rf "$out"
mkdir -p "$out/idb" "$out/htm" "$out/uplot"

# idb: build/index.js is self-contained ESM (no imports; exports openDB, deleteDB, wrap, unwrap).
cp "idb-$IDB/package/build/index.js" "$out/idb/index.js"
cp "idb-$IDB/package/LICENSE" "$out/idb/LICENSE"

# htm: Preact + hooks + htm in one self-contained ES module.
cp "htm-$HTM/package/preact/standalone.module.js" "$out/htm/standalone.module.js"
cp "htm-$HTM/package/LICENSE" "$out/htm/LICENSE"

# uPlot: loaded lazily by the chart screens only.
cp "uplot-$UPLOT/package/dist/uPlot.esm.js" "$out/uplot/uPlot.esm.js"
cp "uplot-$UPLOT/package/dist/uPlot.min.css" "$out/uplot/uPlot.min.css"
cp "uplot-$UPLOT/package/LICENSE" "$out/uplot/LICENSE"

cat > "$out/VERSIONS" <<V
idb $IDB
htm $HTM (preact/standalone.module.js bundles Preact 10 and hooks)
uplot $UPLOT
V
echo "vendored into $out:"
(cd "$out" && find . -type f | sort)
