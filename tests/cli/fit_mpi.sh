#!/bin/sh
# coterie-mpi (issue 17): `mpirun -np P coterie-mpi fit ...` writes the
# folder `coterie fit` writes with the same seed: memberships.tsv,
# communities.tsv and the trace's log-likelihoods byte for byte, for any
# number of processes and threads (DEVELOPERS.md "Determinism"); a resume
# on another process count ends as the uninterrupted fit; an interrupt to
# rank 0, to rank 1 or to mpirun ends every process with the folder saved;
# a rank that dies ends the job with an error and its last checkpoint intact.
# Skipped (a "# SKIP" line) when coterie-mpi was not built or mpirun
# cannot start it.
. "$(dirname "$0")/lib"

. "$(dirname "$0")/mpi_lib"
football=$DATA/football/edges.tsv
need_file "$football"

# --- the same answer ------------------------------------------------------------
mpi_planted

A="-k 12 --seed 3 --epsilon 0.05"
"$BIN" fit "$football" $A -j 1 -q -o "$tmp/fb1"
mpi 2 fit "$football" $A -j 1 -q -o "$tmp/fb2"
check "football, 2 processes: exit 0" [ $? -eq 0 ]
same_fit "$tmp/fb1" "$tmp/fb2" "football, 2 processes x 1 thread"
mpi 3 fit "$football" $A -j 2 -q -o "$tmp/fb3"
same_fit "$tmp/fb1" "$tmp/fb3" "football, 3 processes x 2 threads"

B="-k 40 --seed 4 --starts 2 --max-sweeps 60 --epsilon 1e-4"
"$BIN" fit "$planted" $B -j 2 -q -o "$tmp/pl1"
mpi 2 fit "$planted" $B -j 2 -q -o "$tmp/pl2"
same_fit "$tmp/pl1" "$tmp/pl2" "planted 3000 nodes, 2 processes x 2 threads"
mpi 3 fit "$planted" $B -j 1 -q -o "$tmp/pl3"
same_fit "$tmp/pl1" "$tmp/pl3" "planted 3000 nodes, 3 processes x 1 thread"
check "rank 0 alone wrote: run.json names coterie-mpi" grep -q coterie-mpi "$tmp/pl3/run.json"

"$BIN" fit "$football" $A --check-links 0.1 -q -o "$tmp/cl1"
mpi 2 fit "$football" $A --check-links 0.1 -q -o "$tmp/cl2"
same_fit "$tmp/cl1" "$tmp/cl2" "--check-links, 2 processes"
check "--check-links, 2 processes: held-out-links.tsv byte-identical" \
	cmp -s "$tmp/cl1/held-out-links.tsv" "$tmp/cl2/held-out-links.tsv"

# --- refusals -------------------------------------------------------------------
"$MPIBIN" show "$tmp/fb1" >/dev/null 2>"$tmp/show.err"
check "coterie-mpi show: refused with exit 2 (fit is its one command)" [ $? -eq 2 ]

# --- interrupts and resume --------------------------------------------------------
# interrupt_run NAME TARGET SIGNAL GRAPH OPTIONS: a fit on 2 processes,
# sent SIGNAL at rank0, rank1 or mpirun once progress shows (signal_job);
# leaves mpirun's status in $st.
interrupt_run()
{
	# shellcheck disable=SC2086
	"$MPIRUN" $MPIFLAGS -np 2 "$MPIBIN" fit "$4" $5 -j 1 -o "$tmp/$1" 2>"$tmp/$1.err" &
	signal_job "$1" $! "$tmp/$1.err" 'sweep [0-9]' 2 "$2" "$3"
}

# (the planted graph: about 2 ms a sweep once it has levelled off, so 2000
# sweeps, about 4 s: the signal must land while the fit runs; at 400
# sweeps the whole fit took 0.7 s and a busy machine lost the race)
C="-k 40 --seed 6 --starts 1 --past-plateau --max-sweeps 2000 --epsilon 1e-4"
interrupt_run int0 rank0 INT "$planted" "$C"
check "SIGINT to rank 0: exit status 130" [ "$st" -eq 130 ]
check "SIGINT to rank 0: run.json says interrupted" grep -q '"status": "interrupted"' "$tmp/int0/run.json"
sweeps=$(json_get "$tmp/int0/run.json" fit.sweeps 2>/dev/null)
check "SIGINT to rank 0: stopped before the sweep limit ($sweeps of 2000)" [ "${sweeps:-2000}" -lt 2000 ]
mpi 3 fit --resume "$tmp/int0" -q
check "resumed on 3 processes: exit 0" [ $? -eq 0 ]
"$BIN" fit "$planted" $C -j 2 -q -o "$tmp/whole"
same_fit "$tmp/whole" "$tmp/int0" "interrupted on 2 processes, resumed on 3"

# SIGTERM to one process that is not rank 0 (a batch system's signal that
# reached one node): it raises its wish, every process stops at the same
# block, rank 0 saves, and every process (so mpirun) exits 130.
interrupt_run term1 rank1 TERM "$planted" "$C"
check "SIGTERM to rank 1: exit status 130 ($st)" [ "$st" -eq 130 ]
check "SIGTERM to rank 1: run.json says interrupted" grep -q '"status": "interrupted"' "$tmp/term1/run.json"
mpi 1 fit --resume "$tmp/term1" -q
check "SIGTERM to rank 1, resumed on 1 process: exit 0" [ $? -eq 0 ]
same_fit "$tmp/whole" "$tmp/term1" "SIGTERM to rank 1, resumed on 1 process"

# mpirun passes SIGTERM (as a batch system sends it) to every process, and
# SIGKILL after odls_base_sigkill_timeout (1 s by default): a football
# sweep ends well within it.
interrupt_run intrun mpirun TERM "$football" "-k 12 --seed 6 --past-plateau --max-sweeps 10000000 --epsilon 0.05"
check "SIGTERM to mpirun: run.json says interrupted" grep -q '"status": "interrupted"' "$tmp/intrun/run.json"
check "SIGTERM to mpirun: memberships.tsv written" [ -s "$tmp/intrun/memberships.tsv" ]

# A process that dies (SIGKILL to rank 1, as an out-of-memory killer or a
# lost node would do it): the job ends with an error, not a result, and the
# last periodic checkpoint (rank 0 writes it beside a temporary name and
# renames it into place) is intact: a fit resumed from it on one process
# ends as the uninterrupted fit. The fit would run for minutes; the
# checkpoint comes after a second (--checkpoint-every 1), the kill right
# after it, at a few hundred sweeps of the 3000 both fits are cut to.
D="-k 40 --seed 6 --starts 1 --past-plateau --epsilon 1e-4"
# shellcheck disable=SC2086
"$MPIRUN" $MPIFLAGS -np 2 "$MPIBIN" fit "$planted" $D --max-sweeps 1000000 \
	--checkpoint-every 1 -j 1 -o "$tmp/dead" 2>"$tmp/dead.err" &
dead=$!
i=0
while [ ! -s "$tmp/dead/checkpoint.partial.cot" ] && [ $i -lt 600 ]; do sleep 0.1; i=$((i + 1)); done
check "rank death: a periodic checkpoint is written while the fit runs" \
	[ -s "$tmp/dead/checkpoint.partial.cot" ]
signal_job "rank death" $dead "$tmp/dead.err" 'sweep [0-9]' 1 rank1 KILL
check "rank death: the job ends with an error (mpirun exit $st)" \
	sh -c '[ "$1" -ne 0 ] && [ "$1" -ne 130 ] && [ "$1" -ne 255 ]' sh "$st"
check "rank death: no result is written as if the fit had ended" [ ! -e "$tmp/dead/run.json" ]
"$BIN" fit --resume "$tmp/dead" --max-sweeps 3000 -q
check "rank death: the checkpoint left resumes (exit 0)" [ $? -eq 0 ]
"$BIN" fit "$planted" $D --max-sweeps 3000 -j 2 -q -o "$tmp/dead-whole"
same_fit "$tmp/dead-whole" "$tmp/dead" "rank death, resumed from its last checkpoint"

finish
