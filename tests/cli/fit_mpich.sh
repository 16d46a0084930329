#!/bin/sh
# coterie-mpi built with MPICH (`make coterie-mpi-mpich`; make check builds
# it when mpicc.mpich is found), run by mpirun.mpich on 2 processes: the
# same fit, the same -k auto choice and the same interrupt as `coterie
# fit`, so the code stays on standard MPI-3 (MPICH's handles are ints,
# Open MPI's pointers; its launcher, hydra, starts the ranks under a
# proxy). 2 processes only: MPICH's waiting ranks spin without yielding,
# and 3 ranks x 2 threads on 2 busy cores took minutes for what Open MPI
# does in seconds (a planted graph is used: football makes blocks of one
# node, a collective per node). Skipped (a "# SKIP" line) when
# mpicc.mpich, mpirun.mpich or the binary is missing.
. "$(dirname "$0")/lib"

if ! command -v mpicc.mpich >/dev/null 2>&1; then
	echo "# SKIP mpicc.mpich missing (apt-get install mpich libmpich-dev): MPICH not checked"
	exit 0
fi
COTERIE_MPI_BIN=${COTERIE_MPICH_BIN:-$(dirname "$BIN")/coterie-mpi-mpich}
COTERIE_MPIRUN=mpirun.mpich
. "$(dirname "$0")/mpi_lib"

mpi_planted

B="-k 40 --seed 4 --starts 2 --max-sweeps 40 --epsilon 1e-4"
"$BIN" fit "$planted" $B -j 1 -q -o "$tmp/pl"
mpi 2 fit "$planted" $B -j 1 -q -o "$tmp/pl2"
check "MPICH, 2 processes: exit 0" [ $? -eq 0 ]
same_fit "$tmp/pl" "$tmp/pl2" "MPICH, planted, 2 processes"
check "MPICH: run.json names coterie-mpi" grep -q coterie-mpi "$tmp/pl2/run.json"

A="-k auto --holdout 0.2 --seed 2 --max-sweeps 40"
"$BIN" fit "$planted" $A -j 2 -q -o "$tmp/auto"
mpi 2 fit "$planted" $A -j 1 -q -o "$tmp/auto2"
same_choice "$tmp/auto" "$tmp/auto2" "MPICH, planted -k auto, 2 processes"

# SIGINT to rank 1 (a child of hydra's proxy) during the fit: every
# process stops at the same block, rank 0 writes, all exit 130. 2000
# sweeps (about 4 s): at 400 the fit ended in 0.7 s, and on a busy machine
# before the signal was sent.
C="-k 40 --seed 6 --starts 1 --past-plateau --max-sweeps 2000 --epsilon 1e-4"
"$MPIRUN" -np 2 "$MPIBIN" fit "$planted" $C -j 1 -o "$tmp/int" 2>"$tmp/int.err" &
signal_job "MPICH interrupt" $! "$tmp/int.err" 'sweep [0-9]' 2 rank1 INT
check "MPICH interrupt: exit status 130 ($st)" [ "$st" -eq 130 ]
check "MPICH interrupt: run.json says interrupted" grep -q '"status": "interrupted"' "$tmp/int/run.json"

finish
