#!/bin/sh
# The files of a result folder belong together (issue 18, coterie-files(5)
# "Consistency"): a checkpoint.cot of another graph or fit beside run.json,
# or an edited memberships.tsv, is warned of by show, explore and fit
# --resume, which read the checkpoint; a consistent folder gives no warning.
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
football=$DATA/football/edges.tsv
need_file "$karate"
need_file "$football"

"$BIN" fit "$karate" -k 3 -j 1 --starts 1 --max-sweeps 20 -q -o "$tmp/k"
"$BIN" fit "$football" -k 4 -j 1 --starts 1 --max-sweeps 20 -q -o "$tmp/f"
"$BIN" fit "$karate" -k 3 -j 1 --starts 1 --max-sweeps 5 -q -o "$tmp/k5"

"$BIN" show "$tmp/k" >/dev/null 2>"$tmp/clean.err"
check "a consistent folder: show exits 0" [ $? -eq 0 ]
check "a consistent folder: no warning" [ ! -s "$tmp/clean.err" ]

# another graph's checkpoint beside karate's run.json
cp -r "$tmp/k" "$tmp/mix"
cp "$tmp/f/checkpoint.cot" "$tmp/mix/checkpoint.cot"
"$BIN" show "$tmp/mix" >/dev/null 2>"$tmp/mix.err"
check "another graph's checkpoint: show still reads it" [ $? -eq 0 ]
check "another graph's checkpoint: show warns" grep -q "run.json is of another graph" "$tmp/mix.err"
"$BIN" fit --resume "$tmp/mix" --max-sweeps 20 -q -o "$tmp/mix-resumed" 2>"$tmp/resume.err"
check "another graph's checkpoint: fit --resume warns" \
	grep -q "run.json is of another graph" "$tmp/resume.err"

# the same graph, another fit (a checkpoint of 5 sweeps beside run.json of 20)
cp -r "$tmp/k" "$tmp/mix2"
cp "$tmp/k5/checkpoint.cot" "$tmp/mix2/checkpoint.cot"
"$BIN" show "$tmp/mix2" >/dev/null 2>"$tmp/mix2.err"
check "another fit's checkpoint: show warns" grep -q "run.json is of another fit" "$tmp/mix2.err"

# an edited memberships.tsv: one membership line dropped
cp -r "$tmp/k" "$tmp/ed"
sed -i '2d' "$tmp/ed/memberships.tsv"
"$BIN" show "$tmp/ed" >/dev/null 2>"$tmp/ed.err"
check "an edited memberships.tsv: show exits 0" [ $? -eq 0 ]
check "an edited memberships.tsv: show warns" grep -q "memberships.tsv is not the cover" "$tmp/ed.err"
finish
