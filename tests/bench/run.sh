#!/bin/sh
# Benchmarks for the fitting engine. Prints a table and writes it to
# tests/bench/results.md; asserts nothing (STYLE.md 5: "A benchmark
# measures; it does not assert a wall-clock time").
#
#   make bench               planted graphs of 10^4, 10^5 and 10^6 nodes,
#                            email-Enron and cond-mat-2005 (about 20 min)
#   BENCH=quick make bench   the 10^4-node graph only, and one graph with
#                            mixing (10^4 nodes, share 0.2) (about a minute)
#
# For each graph: one fit to its plateau with -j 2 (load, seeding, seconds
# per sweep, sweeps, total, peak RSS, ONMI against the planted cover), a
# few sweeps with -j 1 and with -j 2 (speed-up, ns per neighbour visit and
# the bare-loop yardstick), and igraph's Leiden on the same graph. Then
# loading the largest planted graph plain and gzip-compressed, beside
# zlib's own inflate speed. Then planted graphs whose communities leak
# (coterie simulate --mixing X, power-law sizes 20 to 2000; issues 12, 13):
# one fit with the defaults of coterie fit, ONMI, and Leiden, in a second
# table; at mixing 0.2, -k auto against one fit at the planted k and one
# at the chosen k (wall and CPU time, chosen k, ONMI), in a third. tests/bench/README.md explains every column.
#
# Environment: COTERIE_BIN, BENCH_TOOLS (folder with benchtool and
# gen_planted; make bench sets both), BENCH (full|quick), COTERIE_DATASETS
# (default ../shared/datasets), BENCH_CACHE (where generated graphs are
# kept, default $TMPDIR/coterie-bench), BENCH_RESULTS (the markdown file;
# tests/bench/results.md, or $TMPDIR/coterie-bench-quick.md for quick),
# BENCH_BIG_SWEEPS (sweep limit of the 10^6-node fit, default 40),
# BENCH_SIZES / BENCH_SETS (override the planted sizes / the datasets),
# BENCH_REPEAT (runs of each of -j 1 and -j 2 for the speed-up, best taken;
# default 3, quick 1), BENCH_MIX_SIZES / BENCH_MIXES (the nodes and shares
# of the graphs with mixing; "" for none), BENCH_MIX_OPTS (more simulate
# options for them; default --even-degrees, "" for none), BENCH_MIX_SWEEPS (their sweep
# limit, default 500 as coterie fit), BENCH_KAUTO_SIZES (the graphs with
# mixing 0.2 on which -k auto is timed beside one fit at the planted and
# at the chosen k; full: "10000 100000 1000000", quick: ""),
# BENCH_MODEL_SIZES (the nodes of the weighted and the directed planted
# graphs whose time per sweep is set beside the undirected, unweighted fit
# of the same lines; full: "1000000", quick: ""), BENCH_MODEL_SWEEPS (the
# sweeps timed there, default 5), BENCH_MPI_SIZES (the planted graphs,
# from gen_planted, on which coterie-mpi is timed at BENCH_MPI_RANKS
# processes, default "1 2 4", beside coterie fit -j 2; full: "1000000",
# quick: ""; skipped without coterie-mpi or mpirun), BENCH_MPI_SWEEPS (the
# sweeps timed there, default 3).
set -u

here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
BIN=${COTERIE_BIN:-$root/coterie}
TOOLS=${BENCH_TOOLS:-$root/build/bench}
tool=$TOOLS/benchtool
gen=$TOOLS/gen_planted
mode=${BENCH:-full}
results_default=$here/results.md
[ "$mode" = quick ] && results_default=${TMPDIR:-/tmp}/coterie-bench-quick.md
results=${BENCH_RESULTS:-$results_default}
cache=${BENCH_CACHE:-${TMPDIR:-/tmp}/coterie-bench}
big_sweeps=${BENCH_BIG_SWEEPS:-40}

if [ -n "${COTERIE_DATASETS:-}" ]; then
	datasets=$COTERIE_DATASETS
else
	top=$(git -C "$root" rev-parse --show-toplevel 2>/dev/null || echo "$root")
	datasets=$top/../shared/datasets
fi

for x in "$tool" "$gen"; do
	if [ ! -x "$x" ]; then
		echo "bench: no $x (run make bench, or make $x)" >&2
		exit 1
	fi
done
mkdir -p "$cache" || exit 1
work=$(mktemp -d "${TMPDIR:-/tmp}/coterie-bench.XXXXXX") || exit 1
trap 'rm -rf "$work"' EXIT
trap 'exit 130' INT TERM HUP

case $mode in
quick) sizes=10000 sets= repeat=1 mixsizes=10000 mixes=0.2 kautosizes= modelsizes= mpisizes= ;;
*) sizes="10000 100000 1000000" sets="email-Enron cond-mat-2005" repeat=3
	mixsizes="10000 100000 1000000" mixes="0.1 0.2 0.3" kautosizes="10000 100000 1000000"
	modelsizes=1000000 mpisizes=1000000 ;;
esac
modelsizes=${BENCH_MODEL_SIZES-$modelsizes}
mpisizes=${BENCH_MPI_SIZES-$mpisizes}
mpiranks=${BENCH_MPI_RANKS:-"1 2 4"}
mpisweeps=${BENCH_MPI_SWEEPS:-3}
modelsweeps=${BENCH_MODEL_SWEEPS:-5}
kautosizes=${BENCH_KAUTO_SIZES-$kautosizes}
mixsizes=${BENCH_MIX_SIZES-$mixsizes}
mixes=${BENCH_MIXES-$mixes}
mixopts=${BENCH_MIX_OPTS---even-degrees}
mixsweeps=${BENCH_MIX_SWEEPS:-500}
repeat=${BENCH_REPEAT:-$repeat}
sizes=${BENCH_SIZES:-$sizes}
sets=${BENCH_SETS-$sets}

# get FILE KEY: the value of KEY in a benchtool output file
get() { awk -F '\t' -v k="$2" '$1 == k { v = $2 } END { print v }' "$1" 2>/dev/null; }
# minf A B: the smaller of two numbers ("" counts as none)
minf() { awk -v a="$1" -v b="$2" 'BEGIN { if (a == "") print b; else if (b == "" || a + 0 <= b + 0) print a; else print b }'; }
# div A B [FORMAT]
# jget FILE OBJECT KEY: a number from simulate.json's OBJECT ("realised", "mixing")
jget() { awk -v o="\"$2\":" -v k="\"$3\":" '$1 == o && $2 == "{" { in_o = 1 } in_o && $1 == k { gsub(/[^0-9.e+-]/, "", $2); print $2; exit }' "$1" 2>/dev/null; }
div() { awk -v a="$1" -v b="$2" -v f="${3:-%.2f}" 'BEGIN { if (a == "" || b == "" || b + 0 == 0) print "-"; else printf f "\n", a / b }'; }

table=$work/table.md
notes=$work/notes.md
: >"$notes"
{
	echo "| graph | nodes | edges | k | load s | MB/s | seed s | s/sweep | sweeps | fit s | peak MB | ONMI | ns/visit | yardstick ns | ratio | last ratio | j2/j1 | Leiden s | fit/Leiden |"
	echo "|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|"
} >"$table"

# bench LABEL GRAPH K TRUTH MAXSWEEPS SCALESWEEPS
bench()
{
	label=$1 graph=$2 k=$3 truth=$4 maxs=$5 ss=$6
	f=$work/$label
	tr=
	[ -n "$truth" ] && tr="--truth $truth"
	echo "bench: $label: fit -k $k -j 2 to a plateau (at most $maxs sweeps)" >&2
	"$tool" fit "$graph" -k "$k" -j 2 --no-reseed --max-sweeps "$maxs" $tr >"$f.fit" 2>"$f.err" ||
		{ echo "bench: $label: fit failed:" >&2; tail -n 3 "$f.err" >&2; }
	echo "bench: $label: $ss sweeps with -j 1 and with -j 2" >&2
	"$tool" fit "$graph" -k "$k" -j 1 --no-reseed --max-sweeps "$ss" --past-plateau \
		--yardstick >"$f.j1" 2>/dev/null
	"$tool" fit "$graph" -k "$k" -j 2 --no-reseed --max-sweeps "$ss" --past-plateau \
		>"$f.j2" 2>/dev/null
	# the speed-up from the best of $repeat runs each, -j 1 and -j 2 in
	# turn (common practice against other work on the machine)
	s1=$(get "$f.j1" sweep_s) s2=$(get "$f.j2" sweep_s) r=1
	while [ "$r" -lt "$repeat" ]; do
		for j in 1 2; do
			"$tool" fit "$graph" -k "$k" -j "$j" --no-reseed --max-sweeps "$ss" \
				--past-plateau >"$f.again" 2>/dev/null
			if [ "$j" = 1 ]; then s1=$(minf "$s1" "$(get "$f.again" sweep_s)")
			else s2=$(minf "$s2" "$(get "$f.again" sweep_s)"); fi
		done
		r=$((r + 1))
	done
	echo "bench: $label: igraph Leiden" >&2
	"$tool" leiden "$graph" >"$f.leiden" 2>/dev/null
	onmi=$(get "$f.fit" onmi)
	sweeps="$(get "$f.fit" sweeps)"
	[ "$(get "$f.fit" state)" = finished ] && sweeps="$sweeps (limit)"
	printf '| %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s |\n' \
		"$label" "$(get "$f.fit" nodes)" "$(get "$f.fit" edges)" "$k" \
		"$(get "$f.fit" load_s)" "$(get "$f.fit" load_mbps)" "$(get "$f.fit" seed_s)" \
		"$(get "$f.fit" sweep_s)" "$sweeps" "$(get "$f.fit" fit_s)" \
		"$(get "$f.fit" peak_rss_mb)" "${onmi:--}" \
		"$(get "$f.j1" ns_per_visit)" "$(get "$f.j1" yard_ns_per_visit)" \
		"$(get "$f.j1" visit_ratio)" "$(get "$f.j1" last_visit_ratio)" \
		"$(div "$s1" "$s2")" \
		"$(get "$f.leiden" leiden_s)" \
		"$(div "$(get "$f.fit" fit_s)" "$(get "$f.leiden" leiden_s)" %.1f)" >>"$table"
	printf -- '- %s: loglik %s, %s communities, state %s; fit CPU %s s; time split: sweeps %s s, likelihood %s s, snapshots %s s, final snapshot and the rest %s s; line-search trials per row %s, neighbour-row reads per visit %s; entries per neighbour row met at -j 1 %s (last sweep %s), in the yardstick %s\n' \
		"$label" "$(get "$f.fit" loglik)" "$(get "$f.fit" communities)" \
		"$(get "$f.fit" state)" "$(get "$f.fit" fit_cpu_s)" "$(get "$f.fit" sweeps_s_total)" \
		"$(get "$f.fit" loglik_s_total)" "$(get "$f.fit" publish_s_total)" "$(get "$f.fit" other_s)" \
		"$(get "$f.fit" trials_per_row)" "$(get "$f.fit" reads_per_visit)" \
		"$(get "$f.j1" entries_per_visit)" "$(get "$f.j1" last_entries_per_visit)" \
		"$(get "$f.j1" yard_entries_per_visit)" >>"$notes"
}

# planted_k N: the communities gen_planted plants in N nodes here
planted_k() { echo $(($1 * 12 / 1000)); }
largest=
for n in $sizes; do
	d=$cache/planted-$n
	c=$(planted_k "$n")
	if [ ! -s "$d/edges.tsv" ] || [ ! -s "$d/truth.tsv" ]; then
		mkdir -p "$d" && "$gen" "$n" "$c" 20 1 "$d" || { echo "bench: cannot write $d" >&2; continue; }
	fi
	maxs=500 ss=10
	[ "$n" -ge 100000 ] && ss=5
	[ "$n" -ge 1000000 ] && maxs=$big_sweeps ss=2
	[ "$mode" = quick ] && ss=3
	bench "planted-$n" "$d/edges.tsv" "$c" "$d/truth.tsv" "$maxs" "$ss"
	largest=$d
done
for s in $sets; do
	if [ -f "$datasets/$s/edges.tsv" ]; then
		bench "$s" "$datasets/$s/edges.tsv" 100 "" 500 10
	else
		echo "- $s: skipped, $datasets/$s/edges.tsv not found (set COTERIE_DATASETS)" >>"$notes"
	fi
done

# loading: the largest planted graph, plain and gzip-compressed
if [ -n "$largest" ]; then
	gz=$largest/edges.tsv.gz
	[ -s "$gz" ] || gzip -c "$largest/edges.tsv" >"$gz"
	"$tool" load "$largest/edges.tsv" >"$work/load" 2>/dev/null
	"$tool" load "$gz" >"$work/loadgz" 2>/dev/null
	"$tool" zlib "$gz" >"$work/zlib" 2>/dev/null
	printf -- '- loading %s (%s MB): %s s, %s MB/s; gzip -6 (%s MB): %s s, %s MB/s of compressed input, where zlib alone inflates %s MB/s (%s MB/s out)\n' \
		"$largest/edges.tsv" "$(get "$work/load" file_mb)" "$(get "$work/load" load_s)" \
		"$(get "$work/load" load_mbps)" "$(get "$work/loadgz" file_mb)" \
		"$(get "$work/loadgz" load_s)" "$(get "$work/loadgz" load_mbps)" \
		"$(get "$work/zlib" zlib_mbps)" "$(get "$work/zlib" zlib_out_mbps)" >>"$notes"
fi

# Planted graphs with mixing: X of the expected edges are background edges
# (simulate.h), sizes from a power law. One fit with coterie fit's
# defaults (reseeding on; 3 starts below 100,000 edges, else 1, as the
# command chooses), k the planted count, ONMI against truth.tsv (its
# isolated nodes, absent from the graph, count as uncovered); then Leiden.
mixtable=$work/mixtable.md
mixnotes=$work/mixnotes.md
: >"$mixnotes"
{
	echo "| graph | nodes | edges | k | mixing | outside share | s/sweep | sweeps | fit s | entries/row | entries/visit | peak MB | ONMI | Leiden s | fit/Leiden |"
	echo "|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|"
} >"$mixtable"
tag=$(printf '%s' "$mixopts" | tr -c 'A-Za-z0-9' '_')
for n in $mixsizes; do
	for x in $mixes; do
		label=mixing-$n-$x$tag
		d=$cache/$label
		if [ ! -s "$d/edges.tsv" ] || [ ! -s "$d/simulate.json" ]; then
			echo "bench: $label: coterie simulate" >&2
			"$BIN" simulate -n "$n" --sizes 20:2000 --size-exponent 2 --overlap 0.1 \
				--mean-degree 20 --mixing "$x" $mixopts --seed 1 -j 2 -q --force -o "$d" ||
				{ echo "bench: cannot write $d" >&2; continue; }
		fi
		k=$(jget "$d/simulate.json" realised communities)
		m=$(jget "$d/simulate.json" realised edges)
		starts=1
		[ "$m" -lt 100000 ] && starts=3
		f=$work/$label
		echo "bench: $label: fit -k $k -j 2 --starts $starts (defaults otherwise)" >&2
		"$tool" fit "$d/edges.tsv" -k "$k" -j 2 --starts "$starts" --max-sweeps "$mixsweeps" \
			--truth "$d/truth.tsv" >"$f.fit" 2>"$f.err" ||
			{ echo "bench: $label: fit failed:" >&2; tail -n 3 "$f.err" >&2; }
		echo "bench: $label: igraph Leiden" >&2
		"$tool" leiden "$d/edges.tsv" >"$f.leiden" 2>/dev/null
		onmi=$(get "$f.fit" onmi)
		sweeps="$(get "$f.fit" sweeps)"
		[ "$(get "$f.fit" state)" = finished ] && sweeps="$sweeps (limit)"
		printf '| %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s |\n' \
			"$label" "$(get "$f.fit" nodes)" "$(get "$f.fit" edges)" "$k" "$x" \
			"$(jget "$d/simulate.json" mixing outside_share_realised | cut -c1-6)" \
			"$(get "$f.fit" sweep_s)" "$sweeps" "$(get "$f.fit" fit_s)" \
			"$(div "$(get "$f.fit" strength_entries)" "$(get "$f.fit" nodes)")" \
			"$(get "$f.fit" entries_per_visit)" "$(get "$f.fit" peak_rss_mb)" "${onmi:--}" \
			"$(get "$f.leiden" leiden_s)" \
			"$(div "$(get "$f.fit" fit_s)" "$(get "$f.leiden" leiden_s)" %.1f)" >>"$mixtable"
		printf -- '- %s: loglik %s, %s communities, state %s, plateau at sweep %s; fit CPU %s s, seeding %s s; epsilon solved %s; Leiden %s clusters\n' \
			"$label" "$(get "$f.fit" loglik)" "$(get "$f.fit" communities)" \
			"$(get "$f.fit" state)" "$(get "$f.fit" plateau_sweep)" "$(get "$f.fit" fit_cpu_s)" \
			"$(get "$f.fit" seed_s)" "$(jget "$d/simulate.json" mixing epsilon)" \
			"$(get "$f.leiden" leiden_clusters)" >>"$mixnotes"
	done
done

# -k auto (issue 19) on the graphs with mixing 0.2: coterie fit -k auto
# -j 2 beside coterie fit -k K -j 2 at the planted K and at the chosen K,
# wall and CPU (user + system) seconds from /usr/bin/time, ONMI (max form)
# by tests/tools/onmi.py against truth.tsv.
autotable=$work/autotable.md
: >"$autotable"
# timed NAME ARGS...: run coterie, its "wall cpu" seconds into $work/NAME.time
timed() {
	name=$1
	shift
	/usr/bin/time -f '%e %U %S' -o "$work/$name.time" "$BIN" "$@" 2>"$work/$name.err" >/dev/null
}
twall() { awk '{ print $1 }' "$work/$1.time" 2>/dev/null; }
tcpu() { awk '{ printf "%.2f\n", $2 + $3 }' "$work/$1.time" 2>/dev/null; }
onmi() { /usr/bin/python3 "$root/tests/tools/onmi.py" "$1/truth.tsv" "$2/memberships.tsv" 2>/dev/null; }
for n in $kautosizes; do
	[ -x /usr/bin/time ] || { echo "bench: no /usr/bin/time, -k auto skipped" >&2; break; }
	d=$cache/mixing-$n-0.2$tag
	[ -s "$d/edges.tsv" ] || continue
	k=$(jget "$d/simulate.json" realised communities)
	echo "bench: mixing-$n-0.2: fit -k auto, -k $k" >&2
	timed auto fit "$d/edges.tsv" -k auto -j 2 -q --force -o "$work/auto-$n"
	timed planted fit "$d/edges.tsv" -k "$k" -j 2 -q --force -o "$work/planted-$n"
	chosen=$(/usr/bin/python3 -c 'import json, sys; print(json.load(open(sys.argv[1]))["k_selection"]["chosen"])' "$work/auto-$n/run.json" 2>/dev/null)
	tried=$(($(wc -l <"$work/auto-$n/k-selection.tsv" 2>/dev/null || echo 1) - 1))
	[ -n "$chosen" ] && timed chosen fit "$d/edges.tsv" -k "$chosen" -j 2 -q --force -o "$work/chosen-$n"
	printf '| mixing-%s-0.2 | %s | %s | %s | %s (%s) | %s (%s) | %s (%s) | %s | %s | %s | %s |\n' \
		"$n" "$k" "${chosen:--}" "$tried" "$(twall auto)" "$(tcpu auto)" \
		"$(twall planted)" "$(tcpu planted)" "$(twall chosen)" "$(tcpu chosen)" \
		"$(div "$(twall auto)" "$(twall chosen)" %.1f)" "$(div "$(tcpu auto)" "$(tcpu chosen)" %.1f)" \
		"$(onmi "$d" "$work/planted-$n")" "$(onmi "$d" "$work/auto-$n")" >>"$autotable"
	rm -rf "$work/auto-$n" "$work/planted-$n" "$work/chosen-$n"
done

# Weighted and directed fits (issue 15): the time per sweep of fit
# --weighted on a weighted planted graph, and of fit --directed and fit
# --directed --weighted on a directed one (weighted too), each beside the
# undirected, unweighted fit of the same file (a directed file read
# undirected merges an arc and its reverse into one edge). The same k (the
# planted count), one start, no reseeding, $modelsweeps sweeps past any
# plateau, -j 2.
modeltable=$work/modeltable.md
: >"$modeltable"
# modelfit LABEL GRAPH K NAME OPTIONS...: one timed fit into $work/LABEL-NAME
modelfit() {
	ml=$1 mg=$2 mk=$3 mn=$4
	shift 4
	echo "bench: $ml: fit $* -k $mk, $modelsweeps sweeps" >&2
	"$tool" fit "$mg" -k "$mk" -j 2 --no-reseed --past-plateau --max-sweeps "$modelsweeps" "$@" \
		>"$work/$ml-$mn" 2>"$work/$ml-$mn.err" ||
		{ echo "bench: $ml: fit $* failed:" >&2; tail -n 3 "$work/$ml-$mn.err" >&2; }
}
# modelrow LABEL NAME WHAT: a row, the ratio to $work/LABEL-base
modelrow() {
	f=$work/$1-$2 b=$work/$1-base
	printf '| %s | %s | %s | %s | %s | %s | %s | %s | %s |\n' "$1" "$3" "$(get "$f" model)" \
		"$(get "$f" nodes)" "$(get "$f" edges)" "$(get "$f" sweep_s)" "$(get "$b" sweep_s)" \
		"$(div "$(get "$f" sweep_s)" "$(get "$b" sweep_s)")" "$(get "$f" ns_per_visit)" >>"$modeltable"
}
for n in $modelsizes; do
	for kind in weighted directed; do
		label=$kind-$n
		d=$cache/$label
		if [ ! -s "$d/edges.tsv" ] || [ ! -s "$d/simulate.json" ]; then
			echo "bench: $label: coterie simulate" >&2
			deg=20 dir=
			[ "$kind" = directed ] && deg=10 dir=--directed # as many lines as undirected 20
			"$BIN" simulate -n "$n" --sizes 20:2000 --size-exponent 2 --overlap 0.1 \
				--mean-degree "$deg" --mixing 0.2 --even-degrees --weighted $dir --seed 1 \
				-j 2 -q --force -o "$d" || { echo "bench: cannot write $d" >&2; continue; }
		fi
		k=$(jget "$d/simulate.json" realised communities)
		modelfit "$label" "$d/edges.tsv" "$k" base
		if [ "$kind" = weighted ]; then
			modelfit "$label" "$d/edges.tsv" "$k" w --weighted
			modelrow "$label" w "--weighted"
		else
			modelfit "$label" "$d/edges.tsv" "$k" d --directed
			modelfit "$label" "$d/edges.tsv" "$k" dw --directed --weighted
			modelrow "$label" d "--directed"
			modelrow "$label" dw "--directed --weighted"
		fi
	done
done

# The fit across processes (issue 17): coterie-mpi at each rank count of
# $mpiranks (one thread each, oversubscribed where the ranks outnumber the
# cores) beside coterie fit -j 2, on a planted graph: $mpisweeps sweeps past
# any plateau, no reseeding, one start; s/sweep from trace.tsv (sweeps 2
# on), and what rank 0 reported with COTERIE_MPI_STATS (exchanges, bytes it
# sent, bytes it gathered, seconds inside exchanges), per sweep.
mpitable=$work/mpitable.md
: >"$mpitable"
mpibin=$(dirname "$BIN")/coterie-mpi
mpiflags=
if mpirun --version 2>&1 | grep -q "Open MPI"; then
	mpiflags=--oversubscribe
	[ "$(id -u)" -eq 0 ] && mpiflags="$mpiflags --allow-run-as-root"
fi
# persweep DIR: seconds a sweep over sweeps 1.. of DIR/trace.tsv
persweep() { awk -F '\t' 'NR == 3 { t0 = $2 } NR > 3 { t = $2; n++ } END { if (n) printf "%.3f\n", (t - t0) / n; else print "-" }' "$1/trace.tsv" 2>/dev/null; }
for n in $mpisizes; do
	if [ ! -x "$mpibin" ] || ! command -v mpirun >/dev/null 2>&1; then
		echo "bench: no coterie-mpi or mpirun, the MPI rows skipped" >&2
		break
	fi
	d=$cache/planted-$n
	[ -s "$d/edges.tsv" ] || continue
	k=$(planted_k "$n")
	opts="-k $k --seed 1 --starts 1 --no-reseed --past-plateau --max-sweeps $mpisweeps -q --force"
	echo "bench: planted-$n: coterie fit -j 2, $mpisweeps sweeps" >&2
	# shellcheck disable=SC2086
	/usr/bin/time -f '%e %M' -o "$work/mpi-t.time" "$BIN" fit "$d/edges.tsv" $opts -j 2 \
		-o "$work/mpi-t" 2>/dev/null
	printf '| planted-%s | coterie fit -j 2 | 1 | %s | %s | - | - | - | - | %s |\n' "$n" \
		"$(persweep "$work/mpi-t")" "$(awk '{ print $1 }' "$work/mpi-t.time")" \
		"$(awk '{ printf "%.0f\n", $2 / 1024 }' "$work/mpi-t.time")" >>"$mpitable"
	rm -rf "$work/mpi-t"
	for r in $mpiranks; do
		echo "bench: planted-$n: coterie-mpi at $r processes, $mpisweeps sweeps" >&2
		# shellcheck disable=SC2086
		COTERIE_MPI_STATS=1 /usr/bin/time -f '%e %M' -o "$work/mpi-$r.time" \
			mpirun $mpiflags -np "$r" "$mpibin" fit "$d/edges.tsv" $opts -j 1 \
			-o "$work/mpi-$r" 2>"$work/mpi-$r.err" >/dev/null ||
			{ echo "bench: coterie-mpi at $r processes failed:" >&2; tail -n 3 "$work/mpi-$r.err" >&2; }
		st=$(sed -n 's/.*rank 0 of [0-9]*: \([0-9]*\) exchanges, \([0-9]*\) bytes sent, \([0-9]*\) bytes gathered, \([0-9.]*\) s in exchanges.*/\1 \2 \3 \4/p' "$work/mpi-$r.err")
		sw=$(tail -n 1 "$work/mpi-$r/trace.tsv" 2>/dev/null | cut -f1)
		# shellcheck disable=SC2086
		set -- $st
		printf '| planted-%s | coterie-mpi | %s | %s | %s | %s | %s | %s | %s | %s |\n' "$n" "$r" \
			"$(persweep "$work/mpi-$r")" "$(awk '{ print $1 }' "$work/mpi-$r.time")" \
			"$(div "${1:-}" "$sw" %.0f)" "$(div "${2:-}" "$sw" %.0f)" "$(div "${3:-}" "$sw" %.0f)" \
			"$(div "${4:-}" "$sw" %.3f)" \
			"$(awk '{ printf "%.0f\n", $2 / 1024 }' "$work/mpi-$r.time")" >>"$mpitable"
		rm -rf "$work/mpi-$r"
	done
done

{
	echo "# coterie benchmark ($mode)"
	echo
	echo "- commit $(git -C "$root" rev-parse --short HEAD 2>/dev/null || echo unknown), $(date -u '+%Y-%m-%d %H:%M UTC')"
	echo "- machine: $(nproc) cores, $(sed -n 's/^model name[[:space:]]*: //p' /proc/cpuinfo | head -n 1), load average at the end $(cut -d' ' -f1-3 /proc/loadavg) (other work skews every figure)"
	echo "- fit: benchtool fit GRAPH -k K -j 2 --no-reseed (one start, to the plateau of the default rule); planted graphs from tests/bench/gen_planted (K = planted count, mean degree 20)"
	echo
	cat "$table"
	echo
	cat "$notes"
	if [ -n "$mixsizes" ] && [ -n "$mixes" ]; then
		echo
		echo "## Planted graphs with mixing"
		echo
		echo "- coterie simulate -n N --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 --mixing X ${mixopts:+$mixopts }--seed 1; fit: benchtool fit GRAPH -k K -j 2 with coterie fit's defaults (3 starts below 100,000 edges, else 1; reseeding on; at most $mixsweeps sweeps)"
		echo
		cat "$mixtable"
		echo
		cat "$mixnotes"
	fi
	if [ -s "$autotable" ]; then
		echo
		echo "## -k auto on the graphs with mixing 0.2"
		echo
		echo "- coterie fit GRAPH -k auto -j 2, beside coterie fit GRAPH -k K -j 2 at the planted K and at the chosen K; seconds wall (CPU, user + system); ratios of -k auto to the fit at the chosen K; ONMI (max form, tests/tools/onmi.py)"
		echo
		echo "| graph | planted k | chosen k | k tried | -k auto s | planted k s | chosen k s | wall ratio | CPU ratio | ONMI planted k | ONMI -k auto |"
		echo "|---|---|---|---|---|---|---|---|---|---|---|"
		cat "$autotable"
	fi
	if [ -s "$modeltable" ]; then
		echo
		echo "## Weighted and directed fits beside the undirected, unweighted fit of the same lines"
		echo
		echo "- coterie simulate -n N --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree D --mixing 0.2 --even-degrees --weighted [--directed] --seed 1 (D 20, directed 10: as many lines); benchtool fit GRAPH -k K -j 2 --no-reseed --past-plateau --max-sweeps $modelsweeps [OPTIONS], K the planted count; edges: as the fit reads them (arcs for --directed; the undirected reading merges an arc and its reverse); s/sweep wall, ns/visit CPU of the fitting thread a neighbour visit"
		echo
		echo "| graph | fit | model | nodes | edges | s/sweep | undirected unweighted s/sweep | ratio | ns/visit |"
		echo "|---|---|---|---|---|---|---|---|---|"
		cat "$modeltable"
	fi
	if [ -s "$mpitable" ]; then
		echo
		echo "## The fit across processes (coterie-mpi) beside the threaded fit"
		echo
		echo "- planted graph of tests/bench/gen_planted, K its planted count (n x 12 / 1000); --seed 1 --starts 1 --no-reseed --past-plateau --max-sweeps $mpisweeps; coterie-mpi with -j 1 a process (mpirun $mpiflags -np P), coterie fit with -j 2; s/sweep over sweeps 2 on (trace.tsv); wall s of the whole run (loading included, every process loads the whole graph); per sweep, rank 0's exchanges, bytes it sent, bytes it gathered (every process's share) and seconds inside exchanges (COTERIE_MPI_STATS; loading's and the end's few exchanges included); peak MB (/usr/bin/time: the threaded fit's; under mpirun the largest process's)"
		echo
		echo "| graph | fit | processes | s/sweep | wall s | exchanges/sweep | bytes sent/sweep | bytes gathered/sweep | s in exchanges/sweep | peak MB |"
		echo "|---|---|---|---|---|---|---|---|---|---|"
		cat "$mpitable"
	fi
} | tee "$results"
exit 0
