#!/bin/sh
# Headless-browser check of the HTML report (registered by tests/plot.cmake).
#   sh tests/report_chromium.sh DRIVER OUTDIR PLOTS_DIR
# Exit 0 pass, 1 fail, 77 skipped (no chromium).
set -u
DRIVER=$1
OUT=$2
PLOTS=$3

CHROME=""
for c in chromium chromium-browser; do
  if command -v "$c" >/dev/null 2>&1; then CHROME=$(command -v "$c"); break; fi
done
if [ -z "$CHROME" ]; then
  echo "SKIP: chromium is not installed (Debian: apt-get install chromium)"
  exit 77
fi

fail() { echo "FAIL: $*"; exit 1; }

rm -rf "$OUT"
mkdir -p "$OUT" || fail "cannot create $OUT"
OUT=$(cd "$OUT" && pwd)
PROFILE=$(mktemp -d "${TMPDIR:-/tmp}/sp_chromium_XXXXXX") || fail "mktemp"
trap 'rm -rf "$PROFILE"' EXIT INT TERM

# chromium FILE MODE...: runs the browser on FILE with the flags every run
# shares; its log (stderr) goes to $OUT/chromium.log.
run_chromium() {
  file=$1
  shift
  timeout 90 "$CHROME" --headless --no-sandbox --disable-gpu --disable-quic \
    --no-first-run --disable-background-networking --disable-component-update \
    --disable-sync --user-data-dir="$PROFILE" --enable-logging=stderr --v=0 \
    "$@" "file://$file" 2>"$OUT/chromium.log"
}

# 1. The harness can see console messages at all: a probe page that logs
#    and throws must show up in the log, or a quiet log would prove nothing.
cat >"$OUT/probe.html" <<'PROBE'
<!DOCTYPE html><html><head><meta charset="utf-8"><title>probe</title></head>
<body><script>console.log("sp-probe"); sp_undefined_function();</script></body></html>
PROBE
run_chromium "$OUT/probe.html" --dump-dom >/dev/null || fail "chromium did not run on the probe page"
grep -q 'CONSOLE.*sp-probe' "$OUT/chromium.log" || fail "console messages do not reach the log"
grep -q 'Uncaught' "$OUT/chromium.log" || fail "uncaught errors do not reach the log"

# 2. The sample report.
"$DRIVER" "$OUT" "$PLOTS" >/dev/null || fail "the driver could not write the report"
REPORT="$OUT/report.html"
[ -s "$REPORT" ] || fail "no report written"

run_chromium "$REPORT" --dump-dom >"$OUT/dom.html" || fail "chromium failed on the report"
cp "$OUT/chromium.log" "$OUT/chromium-dom.log"
if grep -E 'CONSOLE|Uncaught' "$OUT/chromium-dom.log"; then
  fail "the report logged to the console (see above)"
fi

DOM="$OUT/dom.html"
has() { grep -qF -- "$1" "$DOM" || fail "the DOM lacks: $1"; }
has "CAUTION: these are statistical estimates"
has "3f79bb7b435b05321651daefd374cdc681dc06faa65e374e38337b88ca046dea"
has "20261201"
has "650.02"
has "0.00747"
has "Figure 9."
has "Figure 10."
has "Table 6."
has "&lt;script&gt;alert(1)&lt;/script&gt;"
has "&gt;&lt;img src=x onerror=alert(1)&gt;"
# Nine charts were embedded as inline SVG.
n=$(grep -o '<svg class="chart"' "$DOM" | wc -l)
[ "$n" -eq 9 ] || fail "expected 9 inline charts in the DOM, found $n"
# No hostile text became markup: there is no script or img element at all,
# and no event attribute.
if grep -qi '<script' "$DOM"; then fail "a <script> element is in the DOM"; fi
if grep -qi '<img' "$DOM"; then fail "an <img> element is in the DOM"; fi
if grep -qiE '<[^>]* on[a-z]+=' "$DOM"; then fail "an event attribute is in the DOM"; fi
# Nothing external is referenced.
if grep -qiE '(src|href)="(https?:|//|file:)' "$DOM"; then fail "an external reference is in the DOM"; fi

# 3. A screenshot (for a look) and a print to PDF (the print style sheet).
run_chromium "$REPORT" --screenshot="$OUT/report.png" --window-size=1000,1400 \
  --hide-scrollbars || fail "no screenshot"
if grep -E 'CONSOLE|Uncaught' "$OUT/chromium.log"; then fail "console output while painting"; fi
[ -s "$OUT/report.png" ] || fail "the screenshot is empty"
head -c 8 "$OUT/report.png" | od -An -c | grep -q 'P   N   G' || fail "the screenshot is not a PNG"
run_chromium "$REPORT" --print-to-pdf="$OUT/report.pdf" --no-pdf-header-footer \
  || fail "no PDF"
head -c 5 "$OUT/report.pdf" | grep -q '%PDF-' || fail "the print is not a PDF"

echo "PASS: report loads cleanly in $("$CHROME" --version 2>/dev/null | head -n 1)"
exit 0
