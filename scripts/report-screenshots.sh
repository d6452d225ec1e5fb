#!/usr/bin/env bash
# report-screenshots.sh: renders the HTML reports of the demo cards, and of
# one card that fails, in headless Chromium: a PNG of the first screen and
# one of the first 9000 pixels of the page of each, and a PDF as printed
# (A4) with its page count.
# Installs the Debian packages chromium and poppler-utils when missing.
#
#   scripts/report-screenshots.sh [OUTDIR]    # default /tmp/matgate-screenshots
#
# The failing card is testdata/misread/gutter-misread.yaml (a demo of a
# tangent modulus misread as a plastic modulus; see its comments).
set -euo pipefail
cd "$(dirname "$0")/.."
export GOFLAGS=-buildvcs=false
out=${1:-/tmp/matgate-screenshots}
mkdir -p "$out"

need=()
command -v chromium >/dev/null || need+=(chromium)
command -v pdfinfo >/dev/null || need+=(poppler-utils)
if ((${#need[@]})); then
  echo "installing ${need[*]}" >&2
  apt-get install -y "${need[@]}" >/dev/null
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/matgate-shots.XXXXXX")
trap 'rm -rf "$work"' EXIT
go build -o "$work/matgate" ./cmd/matgate

# The records are signed with a throwaway key, so the reports show a
# signature.
"$work/matgate" record keygen "$work/demo" >/dev/null
set +e
"$work/matgate" verify --report --sign-key "$work/demo.key" --out "$work/out" testdata/cards testdata/misread/gutter-misread.yaml >"$work/verify.txt"
code=$?
set -e
if ((code > 1)); then
  cat "$work/verify.txt" >&2
  echo "verify exited $code" >&2
  exit 1
fi

for html in "$work"/out/*.report.html; do
  name=$(basename "$html" .report.html)
  chromium --headless --no-sandbox --disable-gpu --hide-scrollbars \
    --screenshot="$out/$name.first-screen.png" --window-size=1280,1000 "file://$html" 2>/dev/null
  chromium --headless --no-sandbox --disable-gpu --hide-scrollbars \
    --screenshot="$out/$name.page.png" --window-size=1280,9000 "file://$html" 2>/dev/null
  chromium --headless --no-sandbox --disable-gpu --no-pdf-header-footer \
    --print-to-pdf="$out/$name.pdf" "file://$html" 2>/dev/null
  cp "$html" "$out/"
  echo "$name: $(pdfinfo "$out/$name.pdf" | awk '/^Pages:/ { print $2 }') printed pages"
done
echo "screenshots and PDFs in $out"
