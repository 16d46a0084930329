#!/bin/sh
# coterie fit --refine: the AGM refinement of the final cover.
# The refined folder is re-derived in tests/cli/result_check.py from the edge
# list with python3-networkx (Debian 2.8.8), including its AGM log-likelihood
# by the definition (Yang & Leskovec, ICDM 2012, eq. 1).
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

# ge A B: true when the number A >= B (python3 compares the doubles).
ge() { "$PY" -c 'import sys; sys.exit(0 if float(sys.argv[1]) >= float(sys.argv[2]) else 1)' "$1" "$2"; }

# Ten sweeps of one start from ego-nets: a rough relaxed fit, so the
# refinement has moves to make whatever the fitting engine's details (from
# label propagation's clusters, the default, football's fit is already where
# the refinement has nothing to move after three sweeps).
fitargs="-k 12 --seed 5 --starts 1 --max-sweeps 10 --seeding ego-nets"
plain=$tmp/plain
"$BIN" fit "$football" $fitargs -j 2 -q -o "$plain"
check "fit without --refine exits 0" [ $? -eq 0 ]
check "without --refine run.json agm_refine is null" \
	[ "$(json_get "$plain/run.json" agm_refine)" = null ]
check "without --refine memberships.tsv holds the thresholded strengths" \
	[ "$(json_get "$plain/run.json" fit.memberships_from)" = strengths ]

out=$tmp/refined
"$BIN" fit "$football" $fitargs -j 2 --refine -o "$out" 2>"$tmp/refined.err"
check "fit --refine exits 0" [ $? -eq 0 ]
check "fit --refine says what the refinement did" grep -q 'refinement converged\|refinement reached' "$tmp/refined.err"
check "with --refine memberships.tsv holds the refined cover" \
	[ "$(json_get "$out/run.json" fit.memberships_from)" = "agm refinement" ]
for key in max_rounds done loglik_before loglik_after moves_added moves_removed rounds converged seconds; do
	check "run.json agm_refine has $key" "$PY" -c '
import json, sys
sys.exit(0 if sys.argv[2] in json.load(open(sys.argv[1]))["agm_refine"] else 1)' "$out/run.json" "$key"
done
before=$(json_get "$out/run.json" agm_refine.loglik_before)
after=$(json_get "$out/run.json" agm_refine.loglik_after)
moves=$(($(json_get "$out/run.json" agm_refine.moves_added) + $(json_get "$out/run.json" agm_refine.moves_removed)))
check "the refinement moved memberships ($moves)" [ "$moves" -gt 0 ]
check "the AGM log-likelihood after refinement ($after) is not below before ($before)" ge "$after" "$before"
check "fit.agm_loglik is the log-likelihood after refinement" \
	[ "$(json_get "$out/run.json" fit.agm_loglik)" = "$after" ]
check "loglik_before is the AGM log-likelihood of the same fit without --refine" \
	[ "$(json_get "$plain/run.json" fit.agm_loglik)" = "$before" ]
cut -f 1,3 "$plain/trace.tsv" >"$tmp/plain.trace"
cut -f 1,3 "$out/trace.tsv" >"$tmp/refined.trace"
check "the fit itself is the same with and without --refine (trace.tsv sweeps, loglik)" \
	cmp -s "$tmp/plain.trace" "$tmp/refined.trace"
"$PY" "$cli_here/result_check.py" "$football" "$out" "football --refine" || failures=$((failures + 1))

again=$tmp/again
"$BIN" fit "$football" $fitargs -j 1 --refine -q -o "$again"
check "the same seed gives the same refined memberships.tsv with -j 1 and -j 2" \
	cmp -s "$out/memberships.tsv" "$again/memberships.tsv"
check "and the same communities.tsv" cmp -s "$out/communities.tsv" "$again/communities.tsv"

one=$tmp/one
"$BIN" fit "$football" $fitargs -j 2 --refine-rounds 1 -q -o "$one"
check "--refine-rounds 1 implies --refine and stops after one round" \
	[ "$(json_get "$one/run.json" agm_refine.rounds)/$(json_get "$one/run.json" agm_refine.max_rounds)" = 1/1 ]

"$BIN" fit "$football" -k 12 --refine-rounds 0 -q -o "$tmp/zero" 2>"$tmp/zero.err"
check "--refine-rounds 0 is bad usage (exit 2)" [ $? -eq 2 ]
"$BIN" fit "$football" -k 12 --refine-rounds x -q -o "$tmp/x" 2>"$tmp/x.err"
check "--refine-rounds x is bad usage (exit 2)" [ $? -eq 2 ]

finish
