# browser.sh -- headless Chromium for the page tests (sourced after lib.sh).
# CHROMIUM is empty when no browser is installed; tests then print TAP skips
# ("ok - NAME # SKIP no chromium"), which count as skipped, not passed.
CHROMIUM=$(command -v chromium || command -v chromium-browser || true)
BROWSER_PROFILE="$T/chromium-profile"
browser() { # args... ; fresh profile per run, nothing from the network
  rm -rf "$BROWSER_PROFILE"
  "$CHROMIUM" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync \
    --disable-default-apps --hide-scrollbars --user-data-dir="$BROWSER_PROFILE" \
    --enable-logging=stderr --v=0 "$@"
}
# dump_dom URL OUT.html LOG  -- the DOM after the page's scripts ran
dump_dom() {
  browser --virtual-time-budget=3000 --dump-dom "$1" >"$2" 2>"$3"
}
# screenshot URL OUT.png WIDTH HEIGHT
screenshot() {
  browser --window-size="$3,$4" --screenshot="$2" "$1" >/dev/null 2>&1
}
skip() { echo "ok - $* # SKIP no chromium"; }
file_url() { echo "file://$(cd "$(dirname "$1")" && pwd)/$(basename "$1")"; }
