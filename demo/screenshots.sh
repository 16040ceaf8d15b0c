#!/bin/sh
# screenshots.sh OUT IMG -- pictures of the demo's QC pages as a browser shows
# them, for docs/qc-report.md: headless Chromium (Debian's chromium) loads each
# page from file:// and saves a PNG. Exits 1 when chromium is missing.
set -eu
O=$1
IMG=$2
CHROMIUM=$(command -v chromium || command -v chromium-browser || true)
[ -n "$CHROMIUM" ] || exit 1
mkdir -p "$IMG"
PROFILE=$(mktemp -d "${TMPDIR:-/tmp}/tzero-chromium.XXXXXX")
trap 'rm -rf "$PROFILE"' EXIT INT TERM
shot() { # page.html out.png height
  "$CHROMIUM" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --hide-scrollbars --user-data-dir="$PROFILE" --window-size="1180,$3" \
    --screenshot="$2" "file://$(cd "$(dirname "$1")" && pwd)/$(basename "$1")$4" \
    >/dev/null 2>&1
  echo "screenshot: $2"
}
shot "$O/index.html" "$IMG/survey_page.png" 900 ""
shot "$O/dx04_qc.html" "$IMG/line_page.png" 2200 "#cmp=140"
shot "$O/dx04_compare.html" "$IMG/compare_page.png" 1700 ""
