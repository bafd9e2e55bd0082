#!/bin/sh
# browser_render.sh OUTDIR [WIDTH HEIGHT]
# Renders OUTDIR/report.html in headless chromium, offline and with a
# throw-away profile, into OUTDIR/report.png (screenshot of the top
# WIDTH x HEIGHT pixels, default 1200 x 1800) and OUTDIR/report.dom.html
# (the DOM after parsing). Used to look at a report by eye; the Go test
# browser_test.go runs the same browser with the same flags and asserts.
set -eu
out=${1:?usage: browser_render.sh OUTDIR [WIDTH HEIGHT]}
w=${2:-1200}
h=${3:-1800}
bin=${FGAUGE_CHROMIUM:-/usr/bin/chromium}
[ -f "$out/report.html" ] || { echo "no $out/report.html (run: fgauge report $out)" >&2; exit 2; }
profile=$(mktemp -d)
trap 'rm -rf "$profile"' EXIT
url="file://$(cd "$out" && pwd)/report.html"
flags="--headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking --disable-component-update --disable-sync --hide-scrollbars --user-data-dir=$profile"
# shellcheck disable=SC2086
"$bin" $flags --window-size="$w,$h" --screenshot="$out/report.png" "$url" 2>/dev/null
# shellcheck disable=SC2086
"$bin" $flags --dump-dom "$url" > "$out/report.dom.html" 2>/dev/null
echo "wrote $out/report.png and $out/report.dom.html"
