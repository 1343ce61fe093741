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
# same-run ratios between them close the table. Each run is repeated REPEAT times (default 5); the fastest
# time and the largest peak memory are shown. The machine (cores, CPU
# model) heads the table. When Debian's python3-numpy and python3-scipy
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

# measure LABEL ARGS...: runs huesolve ARGS REPEAT times under
# /usr/bin/time -v; sets secs (fastest wall time) and rss_kb (largest peak
# resident set). Exit codes 0 and 4 (some samples flagged) count as done.
measure() {
	local label=$1
	shift
	measure_cmd "$label" "$bin" "$@"
}

# measure_cmd LABEL COMMAND...: as measure, for any command.
measure_cmd() {
	local label=$1
	shift
	local times=() rss=0 i code
	for ((i = 0; i < repeat; i++)); do
		code=0
		/usr/bin/time -v -o "$out/time.txt" "$@" >/dev/null 2>"$out/run.log" || code=$?
		if [ "$code" != 0 ] && [ "$code" != 4 ]; then
			echo "bench.sh: $label: huesolve exit $code" >&2
			cat "$out/run.log" >&2
			exit 1
		fi
		times+=("$(awk -F': ' '/Elapsed \(wall clock\)/ {n = split($2, p, ":"); s = 0; for (k = 1; k <= n; k++) s = s * 60 + p[k]; print s}' "$out/time.txt")")
		local r
		r=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$out/time.txt")
		((r > rss)) && rss=$r
	done
	secs=$(printf '%s\n' "${times[@]}" | sort -g | head -1)
	rss_kb=$rss
}

rows=()
# row LABEL SCANS: measures --check-only and solve on the remaining args.
row() {
	local label=$1 scans=$2
	shift 2
	measure "$label (check only)" solve "$out/refs.json" "$@" --check-only "${jflag[@]}"
	local psecs=$secs prss=$rss_kb
	measure "$label" solve "$out/refs.json" "$@" --format csv -o "$out/results.csv" "${jflag[@]}"
	rows+=("$(awk -v l="$label" -v n="$scans" -v ps="$psecs" -v pr="$prss" -v s="$secs" -v r="$rss_kb" -v pts="$points" 'BEGIN {
		mb = n * pts * 8 / 1048576
		printf "%-22s %7d %9.2f %9.0f %8.0f %9.2f %9.0f %8.0f %7.2f %9.1f %8.2f\n",
			l, n, ps, n / ps, pr / 1024, s, n / s, r / 1024, s / ps, mb, (r / 1024) / mb
	}')")
}

row "wide table" "$wide" "$out/wide.csv"
auto_s=$secs
row "wide --baseline offset" "$wide" "$out/wide.csv" --baseline offset
offset_s=$secs
row "wide --weighted" "$wide" "$out/wide.csv" --weighted
weighted_s=$secs
row "wide --shift" "$wide" "$out/wide.csv" --shift
shift_s=$secs
for n in $files; do
	row "folder of $n files" "$n" "$out/files-$n"
done

# The NumPy/SciPy yardstick on the wide table, beside the same run's
# check-only time of huesolve on it.
peer=()
if /usr/bin/python3 -c 'import numpy, scipy' 2>/dev/null; then
	measure "wide table (check only)" solve "$out/refs.json" "$out/wide.csv" --check-only "${jflag[@]}"
	ref=$secs
	for mode in plain best; do
		measure_cmd "numpy $mode" /usr/bin/python3 scripts/peer/numpy_pipeline.py "$mode" "$out/refs.json" "$out/wide.csv" "$out/peer.csv"
		peer+=("$(printf '%-22s %7d %9.2f %9.2f %8.0f' "numpy/scipy $mode" "$wide" "$ref" "$secs" "$((rss_kb / 1024))")")
	done
fi

cpu=$(awk -F': ' '/^model name/ {print $2; exit}' /proc/cpuinfo 2>/dev/null || true)
[ -n "$cpu" ] || cpu=$(sysctl -n machdep.cpu.brand_string 2>/dev/null || echo "CPU model unknown")
echo
echo "machine: $(nproc) cores, $cpu ($(go env GOOS)/$(go env GOARCH), $(go env GOVERSION))"
echo "huesolve solve, fastest of $repeat runs; memory is peak RSS"
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
if [ ${#peer[@]} -gt 0 ]; then
	printf '%-22s %7s %9s %9s %8s\n' "peer (same run)" "scans" "check s" "peer s" "peer MB"
	printf '%s\n' "${peer[@]}"
	echo "check: huesolve solve --check-only on the same table, measured just before the peer."
else
	echo "peer: skipped (needs Debian's python3-numpy and python3-scipy for scripts/peer/numpy_pipeline.py)"
fi
