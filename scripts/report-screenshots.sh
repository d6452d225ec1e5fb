#!/usr/bin/env bash
# report-screenshots.sh: renders the HTML reports of the demo cards, and of
# one card that fails, in headless Chromium: a PNG of the first screen and
# one of the first 9000 pixels of the page of each, and a PDF as printed
# (A4) with its page count.
# Installs the Debian packages chromium and poppler-utils when missing.
#
#   scripts/report-screenshots.sh [OUTDIR]    # default /tmp/matgate-screenshots
#
# The failing card is a demo of the classic slip (Lakeside tram depot
# canopy scenario, invented): its linear term is written as a tangent
# modulus, but its solver curve was computed with that number as the
# plastic modulus. Its points follow the bilinear closed form
# sigma = sigmaY + Et (eps - sigmaY/E) with Et = E H/(E + H) (Lubliner,
# Plasticity Theory, 1990, sec. 3.3), E 70000 MPa, sigmaY 250 MPa,
# H 14000 MPa, rounded to 0.01 MPa.
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

points=$(awk 'BEGIN { E = 70000; sy = 250; H = 14000; Et = E * H / (E + H)
  for (k = 0; k <= 30; k++) { e = 0.001 * k; s = (e <= sy / E) ? E * e : sy + Et * (e - sy / E)
    printf "%s[%g, %.2f]", (k ? ", " : ""), e, s } }')
cat >"$work/misread.yaml" <<CARD
# Demo card for the report screenshots: invented data (Lakeside tram depot
# canopy scenario). Not measured; not for design.
format: matgate.card/1
id: demo-canopy-gutter-misread
revision: 1
title: Canopy gutter brackets, aluminium, tangent modulus misread (demo data)
source: Invented for the matgate demo (Lakeside tram depot canopy scenario); the solver curve was computed with 14000 MPa as the plastic modulus.
units: {stress: MPa, temperature: C}
temperature: 20
elastic: {youngs_modulus: 70000, poisson_ratio: 0.33}
plasticity:
  yield_stress: 250
  kinematic:
    - {model: linear, tangent_modulus: 14000}
verification:
  references:
    - {name: solver-tension, kind: solver, points: [$points]}
CARD

# The records are signed with a throwaway key, so the reports show a
# signature.
"$work/matgate" record keygen "$work/demo" >/dev/null
set +e
"$work/matgate" verify --report --sign-key "$work/demo.key" --out "$work/out" testdata/cards "$work/misread.yaml" >"$work/verify.txt"
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
