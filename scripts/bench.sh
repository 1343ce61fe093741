#!/usr/bin/env bash
# Throughput benchmark of huesolve solve (see DEVELOPERS.md, "Benchmarks").
#
#   scripts/bench.sh [OUTDIR]        (default OUTDIR: bench-out, git-ignored)
#
# Builds huesolve, generates invented input with scripts/benchgen (a
# reference set calibrated from generated standards; a wide table of
# 20,000 scans x 401 wavelengths; folders of 1,000 and 5,000 two-column
# files), then times `huesolve solve` on each with /usr/bin/time -v, next
# to `huesolve solve --check-only` (reading and checking only) measured in
# the same run as the reference step, and prints spectra per second and
# peak memory. The wide table is solved with the default (--baseline
# auto), a fixed --baseline offset, --weighted and --shift, and the
# same-run ratios between them close the table. The cases run in REPEAT
# rounds (default 5), each round running every case once, so that load
# from other jobs on a shared machine falls on all cases alike; the
# fastest time and the largest peak memory of each are shown. The
# machine (cores, CPU model) heads the table. When Debian's python3-numpy and python3-scipy
# are installed, scripts/peer/numpy_pipeline.py (a NumPy/SciPy yardstick,
# benchmark only) is timed on the wide table too; otherwise a note says
# it was skipped.
# Environment: WIDE (20000), FILES ("1000 5000"), JOBS (solve -j; default
# all cores), REPEAT.
set -euo pipefail
cd "$(dirname "$0")/.."

out=${1:-bench-out}
wide=${WIDE:-20000}
files=${FILES:-"1000 5000"}
repeat=${REPEAT:-5}
jobs=${JOBS:-}
points=401 # wavelengths per scan (350-750 nm at 1 nm, set by benchgen)

missing=()
command -v go >/dev/null || missing+=("go (the Go toolchain, https://go.dev/dl/)")
if [ ! -x /usr/bin/time ] || ! /usr/bin/time -v true >/dev/null 2>&1; then
	missing+=("/usr/bin/time with -v (GNU time: Debian/Ubuntu package 'time')")
fi
command -v awk >/dev/null || missing+=("awk")
if [ ${#missing[@]} -gt 0 ]; then
	echo "bench.sh: missing, please install:" >&2
	printf '  %s\n' "${missing[@]}" >&2
	exit 1
fi

mkdir -p "$out"
bin="$out/huesolve"
echo "building $bin"
go build -o "$bin" ./cmd/huesolve

# Input, generated once (delete OUTDIR to regenerate).
gen=()
[ -f "$out/standards/standards.csv" ] || gen+=(-standards)
[ -f "$out/wide.csv" ] && [ "$(head -1 "$out/wide.csv" | awk -F, '{print NF-1}')" = "$wide" ] || gen+=(-wide "$wide")
if [ ${#gen[@]} -gt 0 ]; then
	echo "generating ${gen[*]} into $out"
	go run ./scripts/benchgen -dir "$out" "${gen[@]}"
fi
for n in $files; do
	if [ "$(find "$out/files-$n" -name '*.csv' 2>/dev/null | wc -l)" != "$n" ]; then
		echo "generating $n files into $out/files-$n"
		go run ./scripts/benchgen -dir "$out" -files "$n"
	fi
done
SOURCE_DATE_EPOCH=0 "$bin" calibrate "$out/standards/standards.csv" -o "$out/refs.json" >/dev/null 2>"$out/calibrate.log" ||
	{ cat "$out/calibrate.log" >&2; exit 1; }

jflag=()
[ -n "$jobs" ] && jflag=(-j "$jobs")

# The cases: a label and a command each. Every round runs each case
# once, in this order, and the rounds are repeated REPEAT times, so that
# a burst of load from another job on a shared machine slows one run of
# every case rather than all runs of one case (the ratios below compare
# cases measured side by side). Per case: the fastest wall time and the
# largest peak resident set. Exit codes 0 and 4 (some samples flagged)
# count as done.
labels=()
cmds=()
# case LABEL COMMAND...: adds a case (the command as one quoted line).
case_() {
	labels+=("$1")
	shift
	cmds+=("$(printf '%q ' "$@")")
}
# row LABEL SCANS ARGS...: the --check-only and the full solve of ARGS.
rowcases=()
row() {
	local label=$1 scans=$2
	shift 2
	case_ "$label (check only)" "$bin" solve "$out/refs.json" "$@" --check-only "${jflag[@]}"
	case_ "$label" "$bin" solve "$out/refs.json" "$@" --format csv -o "$out/results.csv" "${jflag[@]}"
	rowcases+=("$label|$scans")
}
row "wide table" "$wide" "$out/wide.csv"
row "wide --baseline offset" "$wide" "$out/wide.csv" --baseline offset
row "wide --weighted" "$wide" "$out/wide.csv" --weighted
row "wide --shift" "$wide" "$out/wide.csv" --shift
for n in $files; do
	row "folder of $n files" "$n" "$out/files-$n"
done
# The NumPy/SciPy yardstick on the wide table, in the same rounds.
peer=0
if /usr/bin/python3 -c 'import numpy, scipy' 2>/dev/null; then
	peer=1
	for mode in plain best; do
		case_ "numpy $mode" /usr/bin/python3 scripts/peer/numpy_pipeline.py "$mode" "$out/refs.json" "$out/wide.csv" "$out/peer.csv"
	done
fi

declare -A best rss
for ((r = 0; r < repeat; r++)); do
	echo "round $((r + 1)) of $repeat" >&2
	for i in "${!labels[@]}"; do
		code=0
		eval "/usr/bin/time -v -o \"\$out/time.txt\" ${cmds[$i]}" >/dev/null 2>"$out/run.log" || code=$?
		if [ "$code" != 0 ] && [ "$code" != 4 ]; then
			echo "bench.sh: ${labels[$i]}: exit $code" >&2
			cat "$out/run.log" >&2
			exit 1
		fi
		t=$(awk -F': ' '/Elapsed \(wall clock\)/ {n = split($2, p, ":"); s = 0; for (k = 1; k <= n; k++) s = s * 60 + p[k]; print s}' "$out/time.txt")
		m=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$out/time.txt")
		l=${labels[$i]}
		if [ -z "${best[$l]:-}" ] || awk -v a="$t" -v b="${best[$l]}" 'BEGIN {exit !(a < b)}'; then
			best[$l]=$t
		fi
		if [ -z "${rss[$l]:-}" ] || ((m > ${rss[$l]})); then
			rss[$l]=$m
		fi
	done
done

rows=()
for rc in "${rowcases[@]}"; do
	label=${rc%|*}
	n=${rc##*|}
	rows+=("$(awk -v l="$label" -v n="$n" -v ps="${best[$label (check only)]}" -v pr="${rss[$label (check only)]}" -v s="${best[$label]}" -v r="${rss[$label]}" -v pts="$points" 'BEGIN {
		mb = n * pts * 8 / 1048576
		printf "%-22s %7d %9.2f %9.0f %8.0f %9.2f %9.0f %8.0f %7.2f %9.1f %8.2f\n",
			l, n, ps, n / ps, pr / 1024, s, n / s, r / 1024, s / ps, mb, (r / 1024) / mb
	}')")
done
auto_s=${best["wide table"]}
offset_s=${best["wide --baseline offset"]}
weighted_s=${best["wide --weighted"]}
shift_s=${best["wide --shift"]}

cpu=$(awk -F': ' '/^model name/ {print $2; exit}' /proc/cpuinfo 2>/dev/null || true)
[ -n "$cpu" ] || cpu=$(sysctl -n machdep.cpu.brand_string 2>/dev/null || echo "CPU model unknown")
echo
echo "machine: $(nproc) cores, $cpu ($(go env GOOS)/$(go env GOARCH), $(go env GOVERSION))"
echo "huesolve solve, fastest of $repeat rounds (each round runs every case once); memory is peak RSS"
printf '%-22s %7s %9s %9s %8s %9s %9s %8s %7s %9s %8s\n' "" "scans" "check s" "check/s" "check MB" "solve s" "solve/s" "solve MB" "ratio" "values MB" "MB/vals"
printf '%s\n' "${rows[@]}"
cat <<'TXT'

check: solve --check-only (read and check, no fit); solve: the full run writing CSV.
ratio: solve time over check time. values MB: the parsed numbers (scans x 401 x 8 bytes);
MB/vals: solve's peak memory over that. Targets on 2 cores: wide table ratio <= 1.25 and
MB/vals <= 1.4 for the check; --weighted <= 2x and --shift <= 1.5x the default solve;
folders of 20,000 files <= 0.6 s with memory flat in the number of files.
TXT
awk -v a="$auto_s" -v o="$offset_s" -v w="$weighted_s" -v s="$shift_s" 'BEGIN {
	printf "same-run solve ratios: default (--baseline auto) / --baseline offset %.2f (target <= 1.5);\n", a / o
	printf "  --weighted / default %.2f (target <= 2); --shift / default %.2f (target <= 1.5)\n", w / a, s / a
}'
echo
if [ "$peer" = 1 ]; then
	printf '%-22s %7s %9s %9s %8s %9s\n' "peer (same rounds)" "scans" "check s" "peer s" "peer MB" "peer/solve"
	for mode in plain best; do
		awk -v l="numpy/scipy $mode" -v n="$wide" -v c="${best["wide table (check only)"]}" -v p="${best["numpy $mode"]}" -v m="${rss["numpy $mode"]}" -v s="$auto_s" 'BEGIN {
			printf "%-22s %7d %9.2f %9.2f %8.0f %9.2f\n", l, n, c, p, m / 1024, p / s
		}'
	done
	echo "check: huesolve solve --check-only on the same table; peer/solve: the peer's time over huesolve's default solve."
else
	echo "peer: skipped (needs Debian's python3-numpy and python3-scipy for scripts/peer/numpy_pipeline.py)"
fi
