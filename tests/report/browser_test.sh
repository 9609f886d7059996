#!/usr/bin/env bash
# The report in a real browser (Debian's headless Chromium): a small synth run, its report with a
# compared plan on A4 and on Letter, then for each: printed to PDF (written, non-trivial, the page
# size asked for, a page per section at least), a PNG screenshot kept in ARTIFACTS, no console
# message, and, by a probe script added to a test copy only (the report itself has no script):
# every figure laid out inside the page with drawn shapes, and no resource loaded or tried at all
# (performance.getEntriesByType("resource") lists failed loads too).
# Usage: browser_test.sh PLANMILL_BINARY ARTIFACTS_DIR
set -euo pipefail
bin=$1
artifacts=$2
mkdir -p "$artifacts"
if ! command -v chromium >/dev/null; then
  if [ "$(id -u)" -ne 0 ]; then echo "chromium is missing; install it: apt-get install chromium" >&2; exit 1; fi
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends chromium >/dev/null
fi
work=$(mktemp -d "${TMPDIR:-/tmp}/planmill-browser.XXXXXX")
trap 'rm -rf "$work"' EXIT
export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1

"$bin" synth --units 200 --districts 4 --seed 5 --out "$work/state" >/dev/null
printf '[sampler]\nchains = 2\nsteps = 240\nburn_in = 20\nseed = 4\n[output]\ncheckpoint_seconds = 300\n' >>"$work/state/job.toml"
"$bin" run "$work/state/job.toml" --output "$work/run" --quiet >/dev/null 2>&1
"$bin" export "$work/run" --out "$work/csv" --plans 1:37 >/dev/null 2>&1
"$bin" merge "$work/run" >/dev/null
plan="$work/csv/plans/chain-1-record-37.csv"

chrome=(chromium --headless --no-sandbox --disable-gpu --no-first-run --no-pdf-header-footer)
fail() { echo "FAIL: $*" >&2; exit 1; }

for paper in a4 letter; do
  html="$work/report-$paper.html"
  status=0
  "$bin" report "$work/run" --plan "$plan" --out "$html" --paper "$paper" >/dev/null || status=$?
  [ "$status" -eq 0 ] || [ "$status" -eq 3 ] || fail "planmill report exited $status"
  sections=$(grep -o '<section id=' "$html" | wc -l)
  figures=$(grep -o '<figure>' "$html" | wc -l)
  [ "$figures" -ge 5 ] || fail "only $figures figures in the report"

  pdf="$work/report-$paper.pdf"
  timeout 120 "${chrome[@]}" --print-to-pdf="$pdf" "file://$html" 2>/dev/null || true
  [ -s "$pdf" ] || fail "$paper: no PDF written"
  size=$(stat -c %s "$pdf")
  [ "$size" -gt 50000 ] || fail "$paper: the PDF has only $size bytes"
  pages=$(grep -a -c '/Type /Page$\|/Type /Page[^s]' "$pdf" || true)
  [ "$pages" -ge "$sections" ] || fail "$paper: $pages pages for $sections sections (each starts a page)"
  box=$(grep -a -o 'MediaBox \[[^]]*\]' "$pdf" | head -1)
  case $paper in
    a4) [[ $box =~ \[0\ 0\ 59[45]\.[0-9]+\ 84[12]\.[0-9]+\] ]] || fail "a4: page is $box, not 595 x 842 pt" ;;
    letter) [[ $box == "MediaBox [0 0 612 792]" ]] || fail "letter: page is $box, not 612 x 792 pt" ;;
  esac
  cp "$pdf" "$artifacts/"

  png="$artifacts/report-$paper.png"
  rm -f "$png"
  timeout 120 "${chrome[@]}" --window-size=1280,2400 --screenshot="$png" "file://$html" 2>/dev/null || true
  [ -s "$png" ] || fail "$paper: no screenshot"
  [ "$(stat -c %s "$png")" -gt 20000 ] || fail "$paper: the screenshot is nearly empty"

  # Console errors and failed loads of the report as it is.
  log="$work/console-$paper.log"
  timeout 120 "${chrome[@]}" --enable-logging=stderr --v=0 --dump-dom "file://$html" >"$work/dom-$paper.html" 2>"$log" || true
  if grep -E 'INFO:CONSOLE|Failed to load resource|net::ERR_' "$log"; then fail "$paper: console messages above"; fi
  [ "$(grep -o '<svg' "$work/dom-$paper.html" | wc -l)" -eq "$figures" ] || fail "$paper: the DOM lost figures"

  # Every figure drawn: a test copy with a probe that logs what it finds (sed: \& is a literal &).
  probe="$work/probe-$paper.html"
  sed 's#</body>#<script>addEventListener("load",function(){var w=document.documentElement.scrollWidth,bad=[],n=0;'\
'document.querySelectorAll("figure svg").forEach(function(s,i){n++;var r=s.getBoundingClientRect(),'\
'b=s.getBBox(),k=s.querySelectorAll("rect,line,polyline,polygon,path,circle").length;'\
'if(!(r.width>100\&\&r.height>50\&\&r.left>=0\&\&r.right<=w+1\&\&b.width>0\&\&b.height>0\&\&k>3))bad.push(i);});'\
'console.log("PROBE figures="+n+" empty="+bad.length+" ["+bad.join(",")+"] loads="+'\
'performance.getEntriesByType("resource").length);});</script></body>#' "$html" >"$probe"
  timeout 120 "${chrome[@]}" --enable-logging=stderr --v=0 --dump-dom "file://$probe" >/dev/null 2>"$log.probe" || true
  line=$(grep -o 'PROBE figures=[0-9]* empty=[0-9]* \[[0-9,]*\] loads=[0-9]*' "$log.probe" || true)
  [ "$line" = "PROBE figures=$figures empty=0 [] loads=0" ] || fail "$paper: probe says '${line:-nothing}' for $figures figures"
  echo "$paper: $sections sections, $figures figures, PDF $size bytes, $pages pages, $box; screenshot $png"
done
