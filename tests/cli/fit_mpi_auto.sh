#!/bin/sh
# coterie-mpi -k auto (issue 17): the search's fits are spread over the
# processes (select_share.c) and decided alike, so k-selection.tsv (all
# but its wall-time column), the chosen k in run.json and the final fit
# are those of `coterie fit -k auto` with the same seed, for 1, 2 and 3
# processes; both searches are covered: the grid with folds and its early
# stop (football, 10 folds) and the search by the curve's shape with warm
# starts (a planted graph held out at 0.2: one fold). An interrupt to one
# process during the search ends every process with exit 130.
# Skipped (a "# SKIP" line) when coterie-mpi or mpirun is missing.
. "$(dirname "$0")/lib"

. "$(dirname "$0")/mpi_lib"
football=$DATA/football/edges.tsv
need_file "$football"

# --- the grid with folds (football: 613 edges, 10 folds) -------------------------
A="-k auto --seed 3"
"$BIN" fit "$football" $A -j 2 -q -o "$tmp/fb"
check "football: the search is the grid" grep -q '"search": "grid"' "$tmp/fb/run.json"
mpi 1 fit "$football" $A -j 1 -q -o "$tmp/fb1"
check "football, 1 process: exit 0" [ $? -eq 0 ]
same_choice "$tmp/fb" "$tmp/fb1" "football -k auto, 1 process"
mpi 2 fit "$football" $A -j 1 -q -o "$tmp/fb2"
check "football, 2 processes: exit 0" [ $? -eq 0 ]
same_choice "$tmp/fb" "$tmp/fb2" "football -k auto, 2 processes x 1 thread"
mpi 3 fit "$football" $A -j 2 -q -o "$tmp/fb3"
same_choice "$tmp/fb" "$tmp/fb3" "football -k auto, 3 processes x 2 threads"

# --- the search by the shape (one fold: warm starts cross processes) --------------
mpi_planted
B="-k auto --holdout 0.2 --seed 2"
"$BIN" fit "$planted" $B -j 2 -q -o "$tmp/pl"
check "planted: the search is by the shape" grep -q '"search": "shape"' "$tmp/pl/run.json"
check "planted: some fits started warm (from another k's fit)" \
	awk -F'\t' 'NR > 1 && $NF > 0 { w = 1 } END { exit !w }' "$tmp/pl/k-selection.tsv"
mpi 2 fit "$planted" $B -j 1 -q -o "$tmp/pl2"
same_choice "$tmp/pl" "$tmp/pl2" "planted -k auto, 2 processes x 1 thread"
mpi 3 fit "$planted" $B -j 1 -q -o "$tmp/pl3"
same_choice "$tmp/pl" "$tmp/pl3" "planted -k auto, 3 processes x 1 thread"

# --- an interrupt during the search -----------------------------------------------
# SIGINT to rank 1 alone: it stops its fits at once, the others at the end
# of their round (football's grid: rounds of 2 fits of about 0.1 s, and
# about 2 s of search after k 2 is scored); every process exits 130.
# shellcheck disable=SC2086
"$MPIRUN" $MPIFLAGS -np 2 "$MPIBIN" fit "$football" $A -j 1 -o "$tmp/int" 2>"$tmp/int.err" &
signal_job "interrupted -k auto" $! "$tmp/int.err" 'choosing k: k [0-9]' 1 rank1 INT
check "interrupted -k auto: exit status 130 ($st)" [ "$st" -eq 130 ]
check "interrupted -k auto: rank 0 says so" grep -q "interrupted while choosing k" "$tmp/int.err"
check "interrupted -k auto: no fit written" [ ! -e "$tmp/int/memberships.tsv" ]

finish
