#!/bin/sh
# bench/run.sh times grantworth value end to end on invented ledgers
# (bench/ledger) and runs the lattice and auto-mode benchmarks; it prints
# one table in Markdown.
#
#   bench/run.sh                         # 1,000 10,000 50,000 100,000 grants, both kinds
#   SIZES="1000 10000" KINDS=adversarial bench/run.sh
#   PRIOR=10000 bench/run.sh             # also the rerun after one grant is corrected
#
# Environment:
#   SIZES      ledger sizes (default: 1000 10000 50000 100000)
#   KINDS      realistic and/or adversarial (default: both)
#   PRIOR      sizes at which the next quarter is closed after the first
#              (--prior) with one grant corrected (--correct): the other
#              grants keep their filed values without being valued again
#              (default: 10000; "" for none)
#   GOBENCH    go test -bench pattern for ./valuation (default: the lattice
#              and auto mode; "" to skip)
#   BENCHTIME  go test -benchtime (default: 100x: fewer runs are dominated by
#              the first, cold one)
#   WORK       scratch folder (default: a new one under /tmp, removed after)
#
# Each run is timed by /usr/bin/time -v: wall time, CPU time (user +
# system) and peak resident memory. The machine's load (uptime) is printed
# before and after: on a shared machine, wall time grows with the load and
# CPU time much less, so compare CPU times between runs.
set -eu

SIZES=${SIZES:-"1000 10000 50000 100000"}
KINDS=${KINDS:-"realistic adversarial"}
PRIOR=${PRIOR-10000}
GOBENCH=${GOBENCH-'BenchmarkLattice(Tranches|Auto)$|BenchmarkRunJobsAuto$'}
BENCHTIME=${BENCHTIME:-100x}

root=$(cd "$(dirname "$0")/.." && pwd)
if [ -z "${WORK:-}" ]; then
	WORK=$(mktemp -d /tmp/grantworth-bench.XXXXXX)
	trap 'rm -rf "$WORK"' EXIT INT TERM
fi
mkdir -p "$WORK"
[ -x /usr/bin/time ] || { echo "bench/run.sh: /usr/bin/time is needed (Debian: apt-get install time)" >&2; exit 1; }

(cd "$root" && go build -o "$WORK/grantworth" ./cmd/grantworth && go build -o "$WORK/ledger" ./bench/ledger)

echo "grantworth bench, $(date -u '+%Y-%m-%d %H:%M UTC'), $(go version | cut -d' ' -f3)"
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ *//'), $(free -g | awk '/Mem:/{print $2}') GiB"
echo "load before: $(uptime | sed 's/.*load average: //')"
echo

# timed LABEL LOG CMD...: runs CMD under /usr/bin/time -v, its output to
# LOG; sets wall, cpu and rss.
timed() {
	log=$2
	shift 2
	if ! /usr/bin/time -v -o "$log.time" "$@" >"$log" 2>&1; then
		echo "bench/run.sh: failed: $*" >&2
		cat "$log" >&2
		exit 1
	fi
	wall=$(awk -F': ' '/Elapsed \(wall clock\)/{n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; printf "%.1f", s}' "$log.time")
	cpu=$(awk -F': ' '/User time/{u=$2} /System time/{s=$2} END{printf "%.1f", u+s}' "$log.time")
	rss=$(awk -F': ' '/Maximum resident set size/{printf "%.0f", $2/1024}' "$log.time")
}

mb() { awk -v b="$(stat -c %s "$1")" 'BEGIN{printf "%.1f", b/1e6}'; }

echo "| grants | kind | run | wall s | CPU s | peak RSS MiB | tranches | valuation.xlsx MB | valuation.json MB | memo.pdf MB |"
echo "|---:|---|---|---:|---:|---:|---:|---:|---:|---:|"
for kind in $KINDS; do
	for n in $SIZES; do
		ledger="$WORK/$kind-$n.xlsx"
		"$WORK/ledger" -grants "$n" -kind "$kind" -out "$ledger" >/dev/null
		out="$WORK/$kind-$n"
		timed value "$WORK/$kind-$n.log" "$WORK/grantworth" value "$ledger" --out "$out" --force
		tranches=$(awk '/^  tranches/{print $2}' "$WORK/$kind-$n.log")
		echo "| $n | $kind | value | $wall | $cpu | $rss | $tranches | $(mb "$out/valuation.xlsx") | $(mb "$out/valuation.json") | $(mb "$out/memo.pdf") |"
		for p in $PRIOR; do
			[ "$p" = "$n" ] || continue
			fixed="$WORK/$kind-$n-corrected.xlsx"
			k=$((n / 2))
			"$WORK/ledger" -grants "$n" -kind "$kind" -correct $k -out "$fixed" >/dev/null
			# The ledger closes 2026-09-30 (bench/ledger); this is the
			# next quarter's close, grant k measured again.
			timed rerun "$WORK/$kind-$n-rerun.log" "$WORK/grantworth" value "$fixed" --out "$out-rerun" --force \
				--valuation-date 2026-12-31 --prior "$out" --correct "$(printf 'OQ-%06d' $k)"
			echo "| $n | $kind | next close, --prior, one grant corrected | $wall | $cpu | $rss | $tranches | $(mb "$out-rerun/valuation.xlsx") | $(mb "$out-rerun/valuation.json") | $(mb "$out-rerun/memo.pdf") |"
		done
		rm -rf "$out" "$out-rerun" "$ledger"
	done
done
echo
echo "load after: $(uptime | sed 's/.*load average: //')"

if [ -n "$GOBENCH" ]; then
	echo
	echo "Go benchmarks (go test ./valuation -bench '$GOBENCH' -benchtime $BENCHTIME):"
	echo
	echo "| benchmark | ns/op | other |"
	echo "|---|---:|---|"
	(cd "$root" && go test ./valuation -run '^$' -bench "$GOBENCH" -benchtime "$BENCHTIME" -benchmem) |
		awk '/^Benchmark/{name=$1; ns=$3; rest=""; for(i=5;i<=NF;i+=2) rest=rest (rest==""?"":", ") $i " " $(i+1); printf "| %s | %s | %s |\n", name, ns, rest}'
fi
