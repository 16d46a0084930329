#!/bin/sh
# While a fit runs, the explorer writes its checkpoint to the result folder
# now and then (every 120 s; --checkpoint-every 1 shortens it here), as
# checkpoint.partial.cot (a result written before stays whole), so
# a killed explorer loses little: the folder reopens with `coterie show`.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"
# --tol 0: the fit never levels off (a gain below 0 is a loss), so it runs
start_ui 120x40 C.UTF-8 "$g" -k 6 --tol 0 --max-sweeps 100000000 --checkpoint-every 1 -o "$tmp/out"
check "the explorer starts fitting" wait_screen '─ 5 Weak edges' 20
got=0
i=0
while [ "$i" -lt $((100 * slow)) ]; do
	if [ -s "$tmp/out/checkpoint.partial.cot" ]; then got=1; break; fi
	sleep 0.1
	i=$((i + 1))
done
check "a checkpoint appears in the result folder while the fit runs" [ "$got" -eq 1 ]
pid=$(ui_pid)
[ -n "$pid" ] && kill -KILL "$pid"
check "the explorer is killed without a chance to save" wait_gone_ui 10
"$BIN" show "$tmp/out" >"$tmp/show.txt" 2>&1
check "the autosaved checkpoint opens with coterie show" [ $? -eq 0 ]
check "it holds the 121 nodes of the graph" grep -q '121' "$tmp/show.txt"
check "no temporary file is left beside it" \
	[ -z "$(find "$tmp/out" -name '.*tmp*' 2>/dev/null)" ]
finish
