#!/bin/sh
# coterie show after fit --refine (issue 14, item 8): memberships.tsv holds
# the refined cover, which no threshold on the checkpoint's strengths
# gives back; show must show that cover (read from memberships.tsv and
# communities.tsv, checked against the checkpoint) and say which cover it
# shows, and fall back to the strengths' cover with a warning when the
# files are missing or were edited. The expected values are the folder's
# own files, written by `coterie fit` (coterie-files(5)).
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

# as tests/cli/fit_refine.sh: a rough fit, so the refinement has moves to make
fitargs="-k 12 --seed 5 --starts 1 --max-sweeps 10 --seeding ego-nets -j 2 -q"
"$BIN" fit "$football" $fitargs -o "$tmp/plain"
"$BIN" fit "$football" $fitargs --refine -o "$tmp/ref"
check "fit --refine: exit 0" [ $? -eq 0 ]
check "run.json says memberships.tsv holds the refined cover" \
	[ "$(json_get "$tmp/ref/run.json" fit.memberships_from)" = "agm refinement" ]
check "the refined cover differs from the strengths' (memberships.tsv with and without --refine)" \
	sh -c '! cmp -s "$1" "$2"' sh "$tmp/plain/memberships.tsv" "$tmp/ref/memberships.tsv"

# pyjson DESC FILE BODY: python with J the JSON, MEM and COM the refined
# folder's files, RUN its run.json
pyjson()
{
	if "$PY" - "$2" "$tmp/ref" >"$tmp/py.out" 2>&1 <<EOF2
import json, sys
J = json.load(open(sys.argv[1]))
R = sys.argv[2]
def tsv(name):
    rows = [l.rstrip("\n").split("\t") for l in open(R + "/" + name)]
    return [dict(zip(rows[0], r)) for r in rows[1:]]
MEM = tsv("memberships.tsv")
COM = tsv("communities.tsv")
RUN = json.load(open(R + "/run.json"))
$3
EOF2
	then pass "$1"; else fail "$1"; sed 's/^/# /' "$tmp/py.out"; fi
}

"$BIN" show "$tmp/ref" --json >"$tmp/sum.json" 2>"$tmp/sum.err"
check "show --json of the refined folder: exit 0, no warning" \
	sh -c '[ $0 -eq 0 ] && [ ! -s "$1" ]' $? "$tmp/sum.err"
pyjson "show --json says the cover is the refined one" "$tmp/sum.json" '
assert J["cover"] == "refined", J["cover"]'
pyjson "show --json: covered and overlapping nodes and the AGM log-likelihood are run.json's" "$tmp/sum.json" '
f = RUN["fit"]
assert (J["covered"], J["overlapping"]) == (f["covered_nodes"], f["overlapping_nodes"]), (J["covered"], J["overlapping"], f)
assert abs(J["agm_loglik"] - f["agm_loglik"]) <= 1e-6 * abs(f["agm_loglik"])'
pyjson "show --json: the communities are communities.tsv's (ids, sizes, p, order)" "$tmp/sum.json" '
got = [(c["community"], c["size"], c["internal_edges"]) for c in J["communities"]]
want = [(int(r["community"]), int(r["size"]), int(r["internal_edges"])) for r in COM]
assert got == want, (got, want)
for c, r in zip(J["communities"], COM):
    assert abs(c["p"] - float(r["p"])) <= 1e-8, (c["p"], r["p"])'
"$BIN" show "$tmp/ref" >"$tmp/sum.txt"
check "show (text) says the cover shown is the refined one" grep -q '^cover  *refined' "$tmp/sum.txt"
"$BIN" show "$tmp/plain" >"$tmp/plain.txt"
check "show (text) of an unrefined fit says the cover is the strengths'" \
	grep -q '^cover  *read from the strengths, as in memberships.tsv' "$tmp/plain.txt"

: >"$tmp/comms.ok"
for c in $(sed 1d "$tmp/ref/communities.tsv" | cut -f1); do
	"$BIN" show "$tmp/ref" --community "$c" --json >"$tmp/c.json"
	pyjson "community $c: its members are memberships.tsv's, with their strengths" "$tmp/c.json" '
want = {r["node"]: float(r["strength"]) for r in MEM if r["community"] == str(J["community"])}
got = {m["node"]: m["strength"] for m in J["members"]}
assert set(got) == set(want), (sorted(set(got) ^ set(want)))
assert all(abs(got[n] - want[n]) <= 1e-5 * max(want[n], 1e-9) for n in want)' >>"$tmp/comms.ok"
done
check "show --community: every community's members are memberships.tsv's" \
	sh -c '! grep -q "^not ok" "$1"' sh "$tmp/comms.ok"
grep '^not ok' "$tmp/comms.ok"

# every node whose memberships the refinement changed
"$PY" - "$tmp/plain/memberships.tsv" "$tmp/ref/memberships.tsv" >"$tmp/moved" <<'EOF2'
import sys
def pairs(p):
    return {tuple(l.split("\t")[:2]) for l in open(p).read().splitlines()[1:]}
a, b = pairs(sys.argv[1]), pairs(sys.argv[2])
for n in sorted({n for n, c in a ^ b}):
    print(n)
EOF2
check "the refinement moved some node ($(wc -l <"$tmp/moved") nodes)" [ -s "$tmp/moved" ]
: >"$tmp/nodes.ok"
while IFS= read -r node; do
	"$BIN" show "$tmp/ref" --node "$node" --json >"$tmp/n.json"
	pyjson "node $node: its memberships are memberships.tsv's" "$tmp/n.json" '
want = {r["community"] for r in MEM if r["node"] == J["node"]}
got = {str(a["community"]) for a in J["affiliations"] if a["member"]}
assert got == want and J["memberships"] == len(want), (got, want)' >>"$tmp/nodes.ok"
done <"$tmp/moved"
check "show --node: the memberships of every moved node are memberships.tsv's" \
	sh -c '! grep -q "^not ok" "$1"' sh "$tmp/nodes.ok"
grep '^not ok' "$tmp/nodes.ok"

# a pair of a moved node and a fellow member: "both members" is the cover's
pair=$("$PY" - "$tmp/ref/memberships.tsv" "$tmp/moved" <<'EOF2'
import sys
rows = [l.split("\t") for l in open(sys.argv[1]).read().splitlines()[1:]]
moved = open(sys.argv[2]).read().split("\n")[0]
mine = {c for n, c, s in rows if n == moved}
other = next(n for n, c, s in rows if c in mine and n != moved)
print(moved + "\t" + other)
EOF2
)
a=$(printf '%s' "$pair" | cut -f1)
b=$(printf '%s' "$pair" | cut -f2)
"$BIN" show "$tmp/ref" --edge "$a" "$b" --json >"$tmp/e.json"
pyjson "show --edge $a $b: the AGM probability is over the refined cover's shared communities" "$tmp/e.json" '
eps = RUN["parameters"]["epsilon"]
com = {r["community"]: float(r["p"]) for r in COM}
ca = {r["community"] for r in MEM if r["node"] == J["a"]}
cb = {r["community"] for r in MEM if r["node"] == J["b"]}
stay = 1 - eps
for c in ca & cb:
    stay *= 1 - com[c]
assert abs((1 - stay) - J["agm_prob"]) <= 1e-6, (1 - stay, J["agm_prob"])
for s in J["communities"]:
    assert s["both_members"] == (str(s["community"]) in ca & cb), s'

# missing or edited files: the strengths' cover, said loudly
cp -r "$tmp/ref" "$tmp/nocom"
rm "$tmp/nocom/communities.tsv"
"$BIN" show "$tmp/nocom" >"$tmp/nocom.txt" 2>"$tmp/nocom.err"
check "communities.tsv missing: exit 0" [ $? -eq 0 ]
check "communities.tsv missing: a warning names it" grep -q 'communities.tsv' "$tmp/nocom.err"
check "communities.tsv missing: the text says the refined cover is NOT shown" \
	grep -q '^cover .*NOT the refined' "$tmp/nocom.txt"
cp -r "$tmp/ref" "$tmp/edited"
sed -i 2d "$tmp/edited/memberships.tsv"
"$BIN" show "$tmp/edited" --json >"$tmp/edited.json" 2>"$tmp/edited.err"
check "memberships.tsv edited: exit 0 with a warning" \
	sh -c '[ $0 -eq 0 ] && grep -q warning "$1"' $? "$tmp/edited.err"
check "memberships.tsv edited: JSON says the cover is unrefined" \
	[ "$(json_get "$tmp/edited.json" cover)" = unrefined ]
cp -r "$tmp/ref" "$tmp/stranger"
printf 'no-such-node\t0\t1\n' >>"$tmp/stranger/memberships.tsv"
"$BIN" show "$tmp/stranger" --json >"$tmp/stranger.json" 2>"$tmp/stranger.err"
check "memberships.tsv naming a node not in the graph: a warning names it" \
	grep -q no-such-node "$tmp/stranger.err"
check "memberships.tsv naming a node not in the graph: the cover is unrefined" \
	[ "$(json_get "$tmp/stranger.json" cover)" = unrefined ]

finish
