#!/bin/sh
# coterie agree DIR1 DIR2 ...: each community of DIR1 scored by its best
# Jaccard index in each other folder and their mean. The scores are
# recomputed here from the memberships.tsv files by plain set arithmetic
# (Python sets), and they must equal those fit --repeats writes for the
# same two covers.
. "$(dirname "$0")/lib"

fb=$DATA/football/edges.tsv
for s in 1 2 3; do
	"$BIN" fit "$fb" -k 12 --epsilon 0.0935 --seed $s -j 2 -q -o "$tmp/s$s"
done
"$BIN" agree "$tmp/s1" "$tmp/s2" "$tmp/s3" --json >"$tmp/a.json"
check "agree --json: exit 0" [ $? -eq 0 ]
"$PY" - "$tmp/a.json" "$tmp/s1" "$tmp/s2" "$tmp/s3" >"$tmp/py.out" 2>&1 <<'PYEOF'
import sys, json, math
a = json.load(open(sys.argv[1]))
def cover(d):
    c = {}
    with open(d + '/memberships.tsv') as f:
        next(f)
        for line in f:
            p = line.rstrip('\n').split('\t'); c.setdefault(p[1], set()).add(p[0])
    return c
x, others = cover(sys.argv[2]), [cover(d) for d in sys.argv[3:]]
assert a['against'] == sys.argv[3:], a['against']
assert len(a['communities']) == len(x)
for row in a['communities']:
    mem = x[row['community']]
    best = [max(len(mem & m) / len(mem | m) for m in o.values()) for o in others]
    assert row['size'] == len(mem)
    assert all(abs(p - q) < 1e-12 for p, q in zip(best, row['best_jaccard'])), row
    assert abs(row['stability'] - sum(best) / len(best)) < 1e-12, row
s = [r['stability'] for r in a['communities']]
assert abs(a['mean'] - sum(s) / len(s)) < 1e-12
PYEOF
check "each score is the mean best-match Jaccard, as recomputed from the files" [ $? -eq 0 ]
sed 's/^/# /' "$tmp/py.out"

"$BIN" agree "$tmp/s1" "$tmp/s2" >"$tmp/a.txt"
check "agree as text: a row a community and the mean" \
	sh -c '[ $(grep -cE "^[0-9]+ +[0-9]+ +[01]\.[0-9]{3} +[01]\.[0-9]{3}$" "$1") -eq $(($(wc -l <"$2/communities.tsv") - 1)) ] && grep -q "^mean stability" "$1"' \
	sh "$tmp/a.txt" "$tmp/s1"

# the same score as fit --repeats for the same two covers: a fit of two
# repeats from seed 1 against a fit from the seed it did not keep
"$BIN" fit "$fb" -k 12 --epsilon 0.0935 --seed 1 --repeats 2 -j 2 -q -o "$tmp/r"
kept=$(json_get "$tmp/r/run.json" parameters.seed)
other=$((3 - kept))
"$BIN" agree "$tmp/r" "$tmp/s$other" --json >"$tmp/r.json"
"$PY" - "$tmp/r.json" "$tmp/r/communities.tsv" >"$tmp/rr.out" 2>&1 <<'PYEOF'
import sys, json, csv
a = {r['community']: r['stability'] for r in json.load(open(sys.argv[1]))['communities']}
with open(sys.argv[2]) as f:
    col = {r['community']: float(r['stability']) for r in csv.DictReader(f, delimiter='\t')
           if r['size'] != '0'}
assert set(a) == set(col), (a, col)
assert all(abs(a[c] - col[c]) <= 5e-5 for c in a), (a, col)  # %.4f in the file
PYEOF
check "agree gives the stability column of fit --repeats (kept seed $kept vs seed $other)" [ $? -eq 0 ]
sed 's/^/# /' "$tmp/rr.out"

"$BIN" fit "$DATA/karate/edges.tsv" -k 2 --epsilon 0.1 -q -o "$tmp/karate" 2>/dev/null
"$BIN" agree "$tmp/s1" "$tmp/karate" >/dev/null 2>"$tmp/err"
check "folders of different graphs are refused (status 1)" [ $? -eq 1 ]
check "the message says so" grep -q 'different graphs' "$tmp/err"
"$BIN" agree "$tmp/s1" >/dev/null 2>"$tmp/err"
check "one folder is a usage error (status 2)" [ $? -eq 2 ]
mkdir "$tmp/empty"
"$BIN" agree "$tmp/s1" "$tmp/empty" >/dev/null 2>"$tmp/err"
check "a folder without memberships.tsv is refused (status 1)" [ $? -eq 1 ]
check "the message names memberships.tsv" grep -q 'memberships.tsv' "$tmp/err"
"$BIN" agree --help | grep -q 'usage: coterie agree'
check "agree --help prints the usage" [ $? -eq 0 ]
finish
