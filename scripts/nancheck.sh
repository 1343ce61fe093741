#!/usr/bin/env bash
# Mutation check of the tests against outside sources (see DEVELOPERS.md,
# "Testing").
#
#   bash scripts/nancheck.sh [FILTER]
#
# For each entry of the table below, copies the working tree (without .git,
# uncommitted changes included) to a temporary folder once, forces NaN into
# one output that a test checks against NIST StRD, SciPy, mpmath or a
# published table (one perl substitution in one production file), runs that
# test alone and puts the file back. The mutant must be killed: a test that
# still passes with NaN in its compared output is a failure of this script.
# An entry whose pattern does not match exactly once, or whose mutant does
# not compile, is an error too, and so is a test that fails on the unmutated
# copy. FILTER (a regular expression) limits the run to entries whose line
# matches it. Exit status: 0 when every mutant was killed, 1 otherwise.
# Not part of .ci/run (it takes a minute or two).
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
filter=${1:-}

# NAN is a NaN that needs no import in the mutated file.
NAN='(func() float64 { z := 0.0; return z / z }())'

# The table: package directory | file in it | Perl regular expression that
# matches one assignment or return of a checked output, exactly once in the
# file | replacement (NAN stands for a NaN expression) | test name.
# Fields are separated by " | "; a pattern must not contain " | ".
table=$(
	cat <<'EOF'
unmix/lsq | solve.go | dst\.Coef\[j\] = bs\[k\] / f\.d\[j\] | dst.Coef[j] = NAN * bs[k] / f.d[j] | TestNISTLinear
unmix/lsq | solve.go | dst\.SE\[j\] = se\b | dst.SE[j] = NAN * se | TestNISTLinear
unmix/lsq | solve.go | dst\.R2 = 1 - rss/tss | dst.R2 = NAN * (1 - rss/tss) | TestNISTLinear
unmix/lsq | solve.go | dst\.DW = dw / wrss | dst.DW = NAN * dw / wrss | TestNorrisDurbinWatson
unmix/lsq | solve.go | dst\.Coef\[j\] = bs\[k\] / f\.d\[j\] | dst.Coef[j] = NAN * bs[k] / f.d[j] | TestSciPyNNLS
unmix/lsq | solve.go | dst\.RSS = rss\b | dst.RSS = NAN * rss | TestSciPyNNLS
unmix/lsq | cond.go | return sv\[0\] / sv\[p-1\], nil | return NAN * sv[0] / sv[p-1], nil | TestDesignCond
unmix/lsq | cond.go | return sv\[0\] / sv\[p-1\], nil | return NAN * sv[0] / sv[p-1], nil | TestHilbertCond
unmix/lsq | fit.go | lf\.chiSqLimit = distuv | lf.chiSqLimit = NAN * distuv | TestLackOfFit
baseline | sg.go | return f\.WeightsAt\(0\), nil | w := f.WeightsAt(0); w[len(w)/2] = NAN; return w, nil | TestWeightsPublished
baseline | sg.go | return f\.WeightsAt\(0\), nil | w := f.WeightsAt(0); w[len(w)/2] = NAN; return w, nil | TestSciPy
baseline | sg.go | dst\[j\] = dot\(centre, | dst[j] = NAN * dot(centre, | TestSciPy
baseline | sg.go | dst\[j\] = dot\(f\.weights\[j\*w | dst[j] = NAN * dot(f.weights[j*w | TestSciPy
baseline | als.go | return dst, it, nil | dst[len(dst)/2] = NAN; return dst, it, nil | TestALSSciPy
baseline | model.go | col\[i\] = legendre\(d, t\) | col[i] = NAN * legendre(d, t) | TestColumnsValues
calibration | linearity.go | f\.coef\[q\] = b\.At\(q, 0\) / p | f.coef[q] = NAN * b.At(q, 0) / p | TestLineNorris
calibration | linearity.go | f\.se\[q\] = math\.Sqrt\(s2\*sum\) / p | f.se[q] = NAN * math.Sqrt(s2*sum) / p | TestLineNorris
calibration | linearity.go | lin\.ResidualSD = math\.Sqrt | lin.ResidualSD = NAN * math.Sqrt | TestLineNorris
calibration | linearity.go | lin\.R2 = 1 - f\.rss/t | lin.R2 = NAN * (1 - f.rss/t) | TestLineNorris
calibration | linearity.go | f\.coef\[q\] = b\.At\(q, 0\) / p | f.coef[q] = NAN * b.At(q, 0) / p | TestBuildNorris
calibration | linearity.go | \bf = ds2 / s22 | f = NAN * ds2 / s22 | TestLineTests
calibration | linearity.go | p = distuv\.F\{D1: 1, D2: float64\(l2\.dof\)\}\.Survival\(f\) | p = NAN * distuv.F{D1: 1, D2: float64(l2.dof)}.Survival(f) | TestLineTests
calibration | linearity.go | p = distuv\.F\{D1: 1, D2: float64\(l2\.dof\)\}\.Survival\(f\) | p = NAN * distuv.F{D1: 1, D2: float64(l2.dof)}.Survival(f) | TestMandelCritical
calibration | linearity.go | \bf = \(lof / float64\(m-2\)\) | f = NAN * (lof / float64(m-2)) | TestLineTests
calibration | linearity.go | return f, distuv\.F\{D1: float64\(m - 2\) | return f, NAN * distuv.F{D1: float64(m - 2) | TestLineTests
unmix | fill.go | Conc:\s+coef \* f\.scale, | Conc: NAN * coef * f.scale, | TestAgainstSciPy
unmix | fill.go | SE:\s+se \* f\.scale, | SE: NAN * se * f.scale, | TestAgainstSciPy
unmix | fill.go | LOD:\s+LODFactor \* s0 \* f\.scale, | LOD: NAN * LODFactor * s0 * f.scale, | TestAgainstSciPy
unmix | fill.go | Free:\s+res\.Unconstrained\[k\] \* f\.scale, | Free: NAN * res.Unconstrained[k] * f.scale, | TestAgainstSciPy
spectrum | asdf.go | d\.ys = append\(d\.ys, v\) | d.ys = append(d.ys, NAN * v) | TestASDFLines
spectrum | asdf.go | d\.ys = append\(d\.ys, cur\) | d.ys = append(d.ys, NAN * cur) | TestASDFLines
spectrum | grid.go | dst\[i\] = p\.Predict\( | dst[i] = NAN * p.Predict( | TestResampleCubic
EOF
)

command -v go >/dev/null || { echo "nancheck: go not found" >&2; exit 2; }
command -v perl >/dev/null || { echo "nancheck: perl not found" >&2; exit 2; }

tmp=$(mktemp -d "${TMPDIR:-/tmp}/nancheck.XXXXXX")
trap 'rm -rf "$tmp"' EXIT
tar -C "$root" --exclude=./.git -cf - . | tar -C "$tmp" -xf -
cd "$tmp"
export GOFLAGS=-mod=readonly GOPROXY=off

# substitute FILE RE REPL: replaces the single match of RE in FILE with
# REPL (literal text); exit status 3 when RE matches other than once.
substitute() {
	MUT_RE=$2 MUT_REPL=$3 perl -0777 -i -pe '
		my $n = () = /$ENV{MUT_RE}/g;
		if ($n != 1) { print STDERR "$n matches\n"; exit 3 }
		s/$ENV{MUT_RE}/$ENV{MUT_REPL}/;
	' "$1"
}

trim() { sed -e 's/^[[:space:]]*//' -e 's/[[:space:]]*$//' <<<"$1"; }

killed=0 survived=0 errors=0
declare -A clean
while IFS= read -r line; do
	[ -z "$line" ] && continue
	if [ -n "$filter" ] && ! grep -Eq -- "$filter" <<<"$line"; then
		continue
	fi
	IFS='|' read -r pkg file re repl test <<<"${line// | /|}"
	pkg=$(trim "$pkg") file=$(trim "$file") re=$(trim "$re") repl=$(trim "$repl") test=$(trim "$test")
	repl=${repl//NAN/$NAN}
	path=$pkg/$file
	name="$test <- $path: $re"
	if [ ! -f "$path" ]; then
		echo "ERROR    $name: no file $path"
		errors=$((errors + 1))
		continue
	fi
	# The test must pass on the unmutated tree first.
	if [ -z "${clean[$pkg $test]:-}" ]; then
		if go test -count=1 -run "^${test}\$" "./$pkg" >"$tmp/.out" 2>&1; then
			clean[$pkg $test]=pass
		else
			clean[$pkg $test]=fail
			echo "ERROR    $test fails on the unmutated tree:"
			sed 's/^/    /' "$tmp/.out" | tail -20
		fi
	fi
	if [ "${clean[$pkg $test]}" != pass ]; then
		errors=$((errors + 1))
		continue
	fi
	cp "$path" "$tmp/.orig"
	if ! substitute "$path" "$re" "$repl" 2>"$tmp/.out"; then
		echo "ERROR    $name: pattern must match exactly once ($(cat "$tmp/.out"))"
		errors=$((errors + 1))
		cp "$tmp/.orig" "$path"
		continue
	fi
	if ! go test -count=1 -run '^$' "./$pkg" >"$tmp/.out" 2>&1; then
		echo "ERROR    $name: the mutant does not compile:"
		sed 's/^/    /' "$tmp/.out" | tail -10
		errors=$((errors + 1))
	elif go test -count=1 -run "^${test}\$" "./$pkg" >"$tmp/.out" 2>&1; then
		echo "SURVIVED $name"
		survived=$((survived + 1))
	else
		echo "killed   $name"
		killed=$((killed + 1))
	fi
	cp "$tmp/.orig" "$path"
done <<<"$table"

echo "nancheck: $killed killed, $survived survived, $errors errors"
[ "$survived" -eq 0 ] && [ "$errors" -eq 0 ] && [ "$killed" -gt 0 ]
