#!/bin/sh
# --seeding (seed.h, seed_clusters.c): the default seeds from label
# propagation's clusters and says so in run.json (parameters.seeding and
# fit.seeds, coterie-files(5)); ego-nets on request; a bad value is bad
# usage; a resume keeps the saved fit's seeding and refuses another; an
# resume of an ego-net fit goes on as one (the checkpoint's SEED section
# carries the seeding) and gives the bytes of the fit made in one go.
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

"$BIN" fit "$football" -k 12 -j 2 -q -o "$tmp/c"
check "default fit: exit 0" [ $? -eq 0 ]
check "run.json: parameters.seeding is clusters" [ "$(json_get "$tmp/c/run.json" parameters.seeding)" = clusters ]
from=$(json_get "$tmp/c/run.json" fit.seeds.from_clusters)
found=$(json_get "$tmp/c/run.json" fit.seeds.clusters_found)
passes=$(json_get "$tmp/c/run.json" fit.seeds.propagation_passes)
# from_clusters + from_ego_nets is k: every column was seeded one way
ego=$(json_get "$tmp/c/run.json" fit.seeds.from_ego_nets)
check "fit.seeds: $from from clusters + $ego from ego-nets = 12" [ $((from + ego)) -eq 12 ]
check "fit.seeds: at least one community from clusters, no more than found ($found)" \
	sh -c '[ "$1" -ge 1 ] && [ "$1" -le "$2" ]' sh "$from" "$found"
check "fit.seeds: the propagation made a pass or more ($passes)" [ "$passes" -ge 1 ]

"$BIN" fit "$football" -k 12 -j 2 --seeding ego-nets -q -o "$tmp/e"
check "--seeding ego-nets: exit 0" [ $? -eq 0 ]
check "run.json: parameters.seeding is ego-nets" [ "$(json_get "$tmp/e/run.json" parameters.seeding)" = ego-nets ]
check "fit.seeds: none from clusters, no propagation" \
	[ "$(json_get "$tmp/e/run.json" fit.seeds.from_clusters)/$(json_get "$tmp/e/run.json" fit.seeds.propagation_passes)" = 0/null ]

"$BIN" fit "$football" -k 12 --seeding lumps -q -o "$tmp/x" 2>"$tmp/x.err"
check "--seeding lumps: exit 2" [ $? -eq 2 ]
check "... naming the values it takes" grep -q "clusters or ego-nets, not 'lumps'" "$tmp/x.err"

# resume: 3 sweeps of one start from ego-nets, then on to 8; the same as 8
# in one go (one start: see tests/cli/fit_resume.sh)
args="-k 12 -j 2 --seed 3 --starts 1 --seeding ego-nets -q"
"$BIN" fit "$football" $args --max-sweeps 3 --past-plateau -o "$tmp/r"
"$BIN" fit "$football" --resume "$tmp/r" --seeding clusters -q 2>"$tmp/r.err"
check "--resume with another --seeding: exit 2" [ $? -eq 2 ]
check "... saying how the saved fit seeds" grep -q "the saved fit seeds by ego-nets" "$tmp/r.err"
"$BIN" fit "$football" --resume "$tmp/r" --max-sweeps 8 -q
check "--resume (the saved seeding): exit 0" [ $? -eq 0 ]
check "... run.json still says ego-nets" [ "$(json_get "$tmp/r/run.json" parameters.seeding)" = ego-nets ]
"$BIN" fit "$football" $args --max-sweeps 8 --past-plateau -o "$tmp/one"
check "... the same memberships as the fit made in one go" \
	cmp -s "$tmp/r/memberships.tsv" "$tmp/one/memberships.tsv"
finish
