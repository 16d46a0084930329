#!/bin/sh
# Benchmarks for coterie fit. Prints figures; asserts nothing (STYLE.md 5:
# "A benchmark measures; it does not assert a wall-clock time").
#
#   make bench                      (sets COTERIE_BIN)
#   tests/bench/run.sh [a b c d]    run only some parts
#
# (a) fit email-Enron  -k 100 -j 2 to a plateau (or the default sweep limit)
# (b) fit cond-mat-2005 likewise
# (c) load throughput: a synthetic edge list of 5 million lines, fitted
#     with -k 1 --max-sweeps 0 (load, seed, write; no sweep)
# (d) scaling: sweeps/s on email-Enron, -k 100, 20 sweeps (one start),
#     -j 1 vs -j 2
#
# Environment: COTERIE_BIN (binary), COTERIE_DATASETS (folder holding
# email-Enron/ and cond-mat-2005/; default ../shared/datasets next to the
# repository), BENCH_K (100), BENCH_THREADS (2), BENCH_BIG_EDGES (5000000),
# BENCH_BIG_NODES (1000000), BENCH_KEEP=1 keeps the result folders.
# See tests/bench/README.md for what each figure means.
set -u

here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
BIN=${COTERIE_BIN:-$root/coterie}
if [ -x /usr/bin/python3 ]; then PY=/usr/bin/python3; else PY=python3; fi
K=${BENCH_K:-100}
J=${BENCH_THREADS:-2}
BIG_M=${BENCH_BIG_EDGES:-5000000}
BIG_N=${BENCH_BIG_NODES:-1000000}
BIG_SEED=42
parts=${*:-a b c d}

if [ -n "${COTERIE_DATASETS:-}" ]; then
	datasets=$COTERIE_DATASETS
else
	top=$(git -C "$root" rev-parse --show-toplevel 2>/dev/null || echo "$root")
	datasets=$top/../shared/datasets
fi
[ -d "$datasets" ] && datasets=$(cd "$datasets" && pwd)

if [ ! -x "$BIN" ]; then
	echo "bench: no binary at $BIN (run make first)" >&2
	exit 1
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/coterie-bench.XXXXXX") || exit 1
if [ "${BENCH_KEEP:-0}" = 1 ]; then
	trap 'echo "bench: results kept in $work"' EXIT
else
	trap 'rm -rf "$work"' EXIT
fi
trap 'exit 130' INT TERM HUP
rows=$work/rows.tsv
: >"$rows"

# One start is enough to time sweeps, and a third of the work.
one_start=
"$BIN" fit --help 2>/dev/null | grep -q -e '--starts' && one_start="--starts 1"

have_time=0
[ -x /usr/bin/time ] && /usr/bin/time -v true 2>/dev/null && have_time=1

# measure LABEL NAME ARGS...: run `coterie fit ARGS -o DIR`, add a row.
measure()
{
	m_label=$1
	m_name=$2
	shift 2
	m_out=$work/$m_name
	echo "bench: $m_label: coterie fit $*" >&2
	if [ "$have_time" = 1 ]; then
		"$PY" "$here/timed.py" "$work/$m_name.log" -- \
			/usr/bin/time -v -o "$work/$m_name.time" "$BIN" fit "$@" -o "$m_out"
	else
		"$PY" "$here/timed.py" "$work/$m_name.log" -- "$BIN" fit "$@" -o "$m_out"
	fi
	m_rc=$?
	if [ "$m_rc" -ne 0 ] || [ ! -s "$m_out/run.json" ]; then
		echo "bench: $m_label failed (exit $m_rc); its stderr:" >&2
		cut -f2- "$work/$m_name.log" | tail -n 5 >&2
		return 1
	fi
	"$PY" "$here/figures.py" row "$m_label" "$m_out" "$work/$m_name.log" \
		"$work/$m_name.time" >>"$rows"
	tail -n 1 "$rows" | cut -f1-12 | tr '\t' ' ' | sed 's/^/bench:   /' >&2
}

# col LABEL N: field N of the row labelled LABEL.
col() { awk -F '\t' -v l="$1" -v n="$2" '$1 == l { print $n }' "$rows"; }

enron=$datasets/email-Enron/edges.tsv
condmat=$datasets/cond-mat-2005/edges.tsv
notes=""
note() { notes="$notes
  $*"; }

echo "coterie benchmarks"
echo "  binary   $BIN ($("$BIN" --version 2>/dev/null))"
echo "  commit   $(git -C "$root" rev-parse --short HEAD 2>/dev/null || echo unknown)"
echo "  machine  $(nproc) cores, $(sed -n 's/^model name[[:space:]]*: //p' /proc/cpuinfo | head -n 1)"
echo "  load     $(cut -d' ' -f1-3 /proc/loadavg) (1, 5, 15 min; other work on the machine skews every figure)"
echo "  date     $(date -u '+%Y-%m-%d %H:%M UTC')"
echo "  timing   $([ "$have_time" = 1 ] && echo '/usr/bin/time -v' || echo 'run.json (no /usr/bin/time)')"
echo

for part in $parts; do
	case $part in
	a)
		if [ -f "$enron" ]; then
			measure "a email-Enron -j $J" enron "$enron" -k "$K" -j "$J"
		else
			note "a: skipped, $enron not found (set COTERIE_DATASETS)"
		fi
		;;
	b)
		if [ -f "$condmat" ]; then
			measure "b cond-mat-2005 -j $J" condmat "$condmat" -k "$K" -j "$J"
		else
			note "b: skipped, $condmat not found (set COTERIE_DATASETS)"
		fi
		;;
	c)
		big=${TMPDIR:-/tmp}/coterie-bench-edges-$BIG_N-$BIG_M-$BIG_SEED.tsv
		if [ ! -s "$big" ]; then
			echo "bench: writing $big ($BIG_M edges, seed $BIG_SEED)" >&2
			"$PY" "$here/gen_edges.py" "$BIG_N" "$BIG_M" "$BIG_SEED" >"$big.part" &&
				mv "$big.part" "$big"
		fi
		if [ -s "$big" ]; then
			measure "c load synthetic -j $J" big "$big" \
				-k 1 --max-sweeps 0 -j "$J" && {
				bytes=$(wc -c <"$big")
				ck=$(wc -c <"$work/big/checkpoint.cot")
				lbl="c load synthetic -j $J"
				load=$(col "$lbl" 4)
				wall=$(col "$lbl" 2)
				note "$(awk -v l="$BIG_M" -v s="$load" -v w="$wall" -v b="$bytes" -v c="$ck" 'BEGIN {
					printf "c: %.0f input lines/s loading (%.1f MB/s); %.0f lines/s end to end; checkpoint %.1f MB", l / s, b / s / 1e6, l / w, c / 1e6 }')"
			}
		else
			note "c: skipped, could not write $big"
		fi
		;;
	d)
		if [ -f "$enron" ]; then
			measure "d email-Enron 20 sweeps -j 1" scale1 "$enron" -k "$K" -j 1 \
				--max-sweeps 20 --past-plateau $one_start
			measure "d email-Enron 20 sweeps -j 2" scale2 "$enron" -k "$K" -j 2 \
				--max-sweeps 20 --past-plateau $one_start
			r1=$(col "d email-Enron 20 sweeps -j 1" 9)
			r2=$(col "d email-Enron 20 sweeps -j 2" 9)
			if [ -n "$r1" ] && [ -n "$r2" ]; then
				note "$(awk -v a="$r1" -v b="$r2" 'BEGIN { printf "d: -j 2 runs %.2fx the sweeps/s of -j 1 (%.2f vs %.2f)", b / a, b, a }')"
			fi
		else
			note "d: skipped, $enron not found (set COTERIE_DATASETS)"
		fi
		;;
	*)
		echo "bench: unknown part '$part' (a, b, c or d)" >&2
		;;
	esac
done

echo
echo "a, b: coterie fit GRAPH -k $K -j $J (to a plateau or the default sweep limit)"
echo "c:    coterie fit SYNTHETIC -k 1 --max-sweeps 0 -j $J ($BIG_M lines, $BIG_N node ids, seed $BIG_SEED)"
echo "d:    coterie fit email-Enron -k $K --max-sweeps 20 --past-plateau $one_start -j 1 / -j 2"
echo
"$PY" "$here/figures.py" table "$rows"
echo
awk -F '\t' '{ printf "  %s: %s nodes, %s edges from %s input lines\n", $1, $13, $14, $15 }' "$rows"
[ -n "$notes" ] && echo "$notes"
exit 0
