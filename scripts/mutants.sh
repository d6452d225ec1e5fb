#!/usr/bin/env bash
# mutants.sh: shows that `matgate verify` on the demo cards fails wrong
# models. Each mutant is a small patch that puts a known model error into a
# copy of the repository; the copy is built and verified on testdata/cards
# and the temperature-dependent demo card in testdata/temperature.
# A mutant is killed when verify exits 1 (a failed verification); exit 0
# (every card passes), 3 (internal error, no verdict) or any other code
# means it survived; so does a verify that runs longer than MUTANT_TIMEOUT
# seconds (default 300; exit 124). Not part of `go test`; takes a few
# minutes.
#
#   scripts/mutants.sh            # every mutant, then the kill table
#   scripts/mutants.sh NAME...    # only the named mutants
#
# Every substitution is literal and must match exactly once: when the code
# it patches has moved, the script stops with an error naming the mutant,
# the file and the text, instead of reporting a mutant that was never
# applied. The unpatched copy must pass first.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)
export GOFLAGS=-buildvcs=false

work=$(mktemp -d "${TMPDIR:-/tmp}/matgate-mutants.XXXXXX")
trap 'rm -rf "$work"' EXIT

# sub MUTANT FILE FROM TO: replace the one occurrence of FROM by TO in the
# copy's FILE, or fail.
sub() {
  local name=$1 file=$2
  FROM=$3 TO=$4 perl -0777 -i -pe '
    $n = 0 + s/\Q$ENV{FROM}\E/$ENV{TO}/g;
    END { if ($n != 1) { print STDERR "found $n times (want 1)\n"; exit 3 } }
  ' "$work/src/$file" || {
    echo "mutants.sh: mutant $name: $file: the text to patch is not there exactly once:" >&2
    printf '  %s\n' "$3" >&2
    exit 2
  }
}

# atReturnMap MUTANT CODE: insert CODE at the start of the 3D return
# mapping (returnMap, which every 3D step goes through).
atReturnMap() {
  local head='func (m *Material) returnMap(dst, src *State3D, dEps *[6]float64, D *[6][6]float64, alg Algorithm, maxIter int, project bool) (StepInfo, error) {'
  sub "$1" checks/plastic/step3d.go "$head" "$head
$2"
}

# The mutants: name, what it breaks, and the patch (a shell function).
names=()
declare -A what
mutant() { names+=("$1"); what[$1]=$2; }

mutant 3d-one-for-two-thirds "3D return mapping: dX = C d eps_p instead of (2/3) C d eps_p (every C of the return scaled by 3/2, consistently), with the matching 3/2 of the dissipation dropped"
p_3d-one-for-two-thirds() {
  atReturnMap "$1" '	mm := *m
	for i := 0; i < mm.N; i++ {
		mm.Terms[i].C *= 1.5
	}
	for j := 0; j < mm.nAF; j++ {
		mm.afC[j] *= 1.5
		mm.afA[j] *= 1.5
	}
	mm.hLin *= 1.5
	m = &mm'
  sub "$1" checks/plastic/step3d.go 'd += 1.5 * t.Gamma / t.C * Contract' 'd += t.Gamma / t.C * Contract'
}

mutant 3d-no-substepping "3D Exact algorithm: a single return on non-proportional increments (error-controlled substepping switched off)"
p_3d-no-substepping() {
  sub "$1" checks/plastic/step3d.go 'if alg == BackwardEuler || m.proportional(src, &dEps) {' 'if true {'
}

mutant 1d-linear-sign-on-reversal "1D return mapping with Armstrong-Frederick terms: on reversal (flow in compression) the linear terms' hardening H enters the consistency condition with the wrong sign (E - H instead of E + H); the update is right"
p_1d-linear-sign-on-reversal() {
  sub "$1" checks/plastic/step1d.go 'k0 := m.E + m.hLin + kLin' 'k0 := m.E + m.hLin + kLin
	kr := k0 - (1-n)*m.hLin'
  sub "$1" checks/plastic/step1d.go 'ld := k0 * dp
			g = f - ld' 'ld := kr * dp
			g = f - ld'
  sub "$1" checks/plastic/step1d.go 'g1 = -k0' 'g1 = -kr'
}

mutant 3d-linear-sign-on-reversal "3D return mapping: on reversal (trial relative stress against the linear back stress) the linear terms move against the flow (sign error), with the consistency condition to match"
p_3d-linear-sign-on-reversal() {
  sub "$1" checks/plastic/step3d.go 'k0 := 3*G + m.hLin + kLin' 'lsg := 1.0
	var xl [6]float64
	for j := 0; j < m.nLin; j++ {
		for k := 0; k < 6; k++ {
			xl[k] += src.X[m.lin[j]][k]
		}
	}
	if Contract(xiTr, xl) < 0 {
		lsg = -1
	}
	k0 := 3*G + lsg*m.hLin + kLin'
  sub "$1" checks/plastic/step3d.go 'c := s23 * m.Terms[i].C * dp' 'c := lsg * s23 * m.Terms[i].C * dp'
}

mutant convert-tangent-as-plastic "convert: a tangent modulus Et taken as the plastic modulus (H = Et instead of E Et / (E - Et))"
p_convert-tangent-as-plastic() {
  sub "$1" convert/units.go 'func TangentToPlastic(E, Et float64) float64 { return E * Et / (E - Et) }' 'func TangentToPlastic(E, Et float64) float64 { return Et }'
}

mutant 1d-voce-sign "1D return mapping: Voce's R(p + dp) - R(p) with the wrong sign (and its derivative, so that the iteration still converges)"
p_1d-voce-sign() {
  sub "$1" checks/plastic/step1d.go 'dR := -m.Iso.Q * eP * wm
				g -= dR' 'dR := m.Iso.Q * eP * wm
				g -= dR'
  sub "$1" checks/plastic/step1d.go 'qb := m.Iso.Q * m.Iso.B * eP * (1 + wm)' 'qb := -m.Iso.Q * m.Iso.B * eP * (1 + wm)'
}

mutant 3d-gamma-dropped-from-recall "3D Exact return: gamma dropped from the recall term of Armstrong-Frederick terms (dX = (2/3) C d eps_p - X dp, saturation C/gamma kept), consistently in the scalar equation and the update"
p_3d-gamma-dropped-from-recall() {
  sub "$1" checks/plastic/step3d.go 'phiM[j] = moveExpm1(phiM[j], gam, dp, delta)' 'phiM[j] = moveExpm1(phiM[j], 1, dp, delta)'
  sub "$1" checks/plastic/step3d.go 'dph = gam * (1 + pm)' 'dph = 1 + pm'
  sub "$1" checks/plastic/step3d.go 'dr += c * (1 + pm)' 'dr += m.afA[j] * (1 + pm)'
}

mutant 3d-missing-sqrt-two-thirds "3D return mapping: a linear term's back stress grows by C dp n instead of sqrt(2/3) C dp n, with the consistency condition to match"
p_3d-missing-sqrt-two-thirds() {
  sub "$1" checks/plastic/step3d.go 'c := s23 * m.Terms[i].C * dp' 'c := m.Terms[i].C * dp'
  sub "$1" checks/plastic/step3d.go 'k0 := 3*G + m.hLin + kLin' 'k0 := 3*G + s32*m.hLin + kLin'
}

mutant shear-modulus-one-minus-nu "material: G = E / (2 (1 - nu)) instead of E / (2 (1 + nu))"
p_shear-modulus-one-minus-nu() {
  sub "$1" checks/plastic/material.go 'm.g = E / (2 * (1 + nu))' 'm.g = E / (2 * (1 - nu))'
}

mutant 3d-yield-without-three-halves "3D return mapping: the von Mises yield function without its factor sqrt(3/2) (|s - X| <= sigmaY + R), consistently in the elastic test and the scalar equation"
p_3d-yield-without-three-halves() {
  atReturnMap "$1" '	mm := *m
	mm.SigmaY *= math.Sqrt(1.5)
	mm.Iso.Q *= math.Sqrt(1.5)
	mm.Iso.K *= math.Sqrt(1.5)
	m = &mm'
}

mutant temperature-rate-term-dropped "anisothermal 1D step: the back stress without Chaboche's temperature-rate term (alpha_i kept when C_i changes with temperature)"
p_temperature-rate-term-dropped() {
  sub "$1" checks/plastic/anisothermal.go 's.Alpha[i] *= m1.Terms[i].C / m0.Terms[i].C' 's.Alpha[i] *= 1 + 0*m0.Terms[i].C'
}

mutant temperature-interpolation-extrapolates "temperature table: every parameter between neighbours as (1 + w) p_k - w p_k+1 (extrapolated away from the upper neighbour) instead of (1 - w) p_k + w p_k+1"
p_temperature-interpolation-extrapolates() {
  sub "$1" checks/plastic/anisothermal.go 'return (1-w)*x + w*y' 'return (1+w)*x - w*y'
}

mutant temperature-step-recomputes-stress "anisothermal 1D step: an increment without a temperature change also recomputes the stress as E (eps - eps_p) instead of being the isothermal increment"
p_temperature-step-recomputes-stress() {
  sub "$1" checks/plastic/anisothermal.go 'if err != nil || T1 == src.T {' 'if err != nil {'
}

if [ $# -gt 0 ]; then
  for n in "$@"; do
    [ -n "${what[$n]+x}" ] || { echo "mutants.sh: no mutant $n (have: ${names[*]})" >&2; exit 2; }
  done
  names=("$@")
fi

# run LABEL: build the copy in $work/src and verify the demo cards; sets
# code and first (the first failed check or error line).
run() {
  (cd "$work/src" && go build -o "$work/matgate" ./cmd/matgate) || { echo "mutants.sh: $1: build failed" >&2; exit 2; }
  rm -rf "$work/out"
  set +e
  (cd "$work/src" && timeout -k 10 "${MUTANT_TIMEOUT:-300}" "$work/matgate" verify --out "$work/out" testdata/cards testdata/temperature) >"$work/log" 2>&1
  code=$?
  if [ "$code" -eq 124 ]; then
    echo "timed out after ${MUTANT_TIMEOUT:-300} s" >>"$work/log"
  fi
  set -e
  first=$(grep -m1 -E 'failed: |error|internal|timed out' "$work/log" | sed -e 's/^ *//' -e 's/^failed: //' | cut -c1-90 || true)
  cards=$(grep -E '^fail ' "$work/log" | awk '{print $2}' | sed 's/^demo-canopy-//' | paste -sd, - || true)
}

fresh() {
  rm -rf "$work/src"
  rsync -a --exclude .git --exclude matgate-out "$root/" "$work/src/"
}

fresh
run baseline
if [ "$code" -ne 0 ]; then
  echo "mutants.sh: the unpatched copy does not pass verify (exit $code):" >&2
  cat "$work/log" >&2
  exit 2
fi

declare -A codes firsts failed
for n in "${names[@]}"; do
  fresh
  "p_$n" "$n"
  echo "mutants.sh: $n ..." >&2
  run "$n"
  codes[$n]=$code
  firsts[$n]=$first
  failed[$n]=${cards:--}
done

survivors=0
printf '\n%-30s %-4s %-8s %-34s %s\n' mutant exit result "cards failed (demo-canopy-...)" "first failed check"
for n in "${names[@]}"; do
  c=${codes[$n]}
  r=killed
  if [ "$c" -ne 1 ]; then
    r=SURVIVED
    survivors=$((survivors + 1))
  fi
  printf '%-30s %-4s %-8s %-34s %s\n' "$n" "$c" "$r" "${failed[$n]}" "${firsts[$n]}"
done
echo
for n in "${names[@]}"; do
  printf '  %s: %s\n' "$n" "${what[$n]}"
done
echo "${#names[@]} mutants, $((${#names[@]} - survivors)) killed, $survivors survived"
[ "$survivors" -eq 0 ]
