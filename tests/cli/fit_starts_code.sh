#!/bin/sh
# Starts judged by code length (starts.c, agm_code_length_of()): of several
# starts, fit keeps the one whose cover gives the shortest two-part code
# (the cover's AGM log-likelihood, negated, plus ln C(n, s) for each
# community of s members: minimum description length, Rissanen 1978), not
# the one of highest l(F). On a planted graph whose communities leak links,
# the most likely start holds more memberships than its links pay for and
# finds the planted communities less well. Scores against the planted
# cover are computed by tests/tools/onmi.py (our transcription of McDaid,
# Greene & Hurley 2011, max form), not by coterie; the code length of the
# kept cover is recomputed here from memberships.tsv and run.json.
. "$(dirname "$0")/lib"

ONMI="$PY $ROOT/tests/tools/onmi.py"
at_least() { awk -v a="$1" -v b="$2" 'BEGIN { exit !(a + 0 >= b + 0) }'; }

"$BIN" simulate -n 10000 --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
	--even-degrees --mixing 0.2 --seed 1 -q -o "$tmp/g"
check "simulate: exit 0" [ $? -eq 0 ]
k=$(($(wc -l <"$tmp/g/planted.tsv") - 1))

# 99,979 edges: three starts by default
"$BIN" fit "$tmp/g/edges.tsv" -k "$k" -j 2 --seed 1 -q -o "$tmp/a"
check "fit: exit 0" [ $? -eq 0 ]
"$PY" - "$tmp/a/run.json" "$tmp/a/memberships.tsv" >"$tmp/starts.out" 2>&1 <<'PYEOF'
import json, math, sys, collections
r = json.load(open(sys.argv[1]))
f = r['fit']
s = f['starts_judged']
assert r['parameters']['starts'] == 3 and len(s) == 3, s
assert [x['start'] for x in s] == [1, 2, 3], s
best = min(range(3), key=lambda i: (s[i]['code_length'], i))
assert f['start_kept'] == best + 1, (f['start_kept'], s)
# the kept cover's code length from the files: -agm_loglik + sum ln C(n, s)
n = r['graph']['nodes']
size = collections.Counter(l.split('\t')[1] for l in open(sys.argv[2]) if not l.startswith('node\t'))
lnC = lambda n, k: math.lgamma(n + 1) - math.lgamma(k + 1) - math.lgamma(n - k + 1)
code = -f['agm_loglik'] + sum(lnC(n, c) for c in size.values())
assert abs(code - s[best]['code_length']) <= 1e-9 * abs(code), (code, s[best])
likeliest = max(range(3), key=lambda i: s[i]['loglik'])
print(best + 1, likeliest + 1)
PYEOF
check "run.json: three starts judged, the kept one of shortest code length, recomputed from memberships.tsv" [ $? -eq 0 ]
sed 's/^/# /' "$tmp/starts.out"
read kept likeliest <"$tmp/starts.out"
# Measured with this code (2026-12-04): start 1 kept (code 578,021 nats,
# l(F) -493,731), start 3 the most likely (-492,367, code 580,899); ONMI
# 0.882 for start 1, 0.760 for the fit that kept start 3 (the code before).
check "here the kept start ($kept) is not the most likely ($likeliest)" [ "$kept" != "$likeliest" ]
o=$($ONMI "$tmp/a/memberships.tsv" "$tmp/g/truth.tsv")
check "ONMI against the planted cover $o >= 0.85 (0.760 when the most likely start was kept)" \
	at_least "$o" 0.85

# A two-mode fit is judged the same way, its cover read by side as
# memberships.tsv has it and scored as a two-sided AGM (agm.h): only a
# sender and a receiver make a pair, and a community names its senders among
# the first column's nodes and its receivers among the second's. The kept
# start's code length is recomputed from the files by tests/cli/agm_sided.py,
# an independent transcription (its own maximum-likelihood p_c).
"$BIN" simulate -n 1200 --two-mode 800 --sizes 20:200 --overlap 0.1 --mean-degree 12 \
	--mixing 0.2 --seed 2 -q -o "$tmp/t"
check "simulate --two-mode: exit 0" [ $? -eq 0 ]
kt=$(($(wc -l <"$tmp/t/planted.tsv") - 1))
"$BIN" fit "$tmp/t/edges.tsv" --two-mode -k "$kt" -j 2 --seed 1 -q -o "$tmp/tm"
check "fit --two-mode: exit 0" [ $? -eq 0 ]
eps=$(json_get "$tmp/tm/run.json" parameters.epsilon)
set -- $("$PY" "$ROOT/tests/cli/agm_sided.py" "$tmp/t/edges.tsv" "$tmp/tm/memberships.tsv" "$eps")
check "two-mode: three starts judged by code length, the kept one the shortest, the cover's code ($2) and run.json's AGM log-likelihood ($1) recomputed" \
	"$PY" - "$tmp/tm/run.json" "$2" "$1" <<'PYEOF'
import json, sys
f = json.load(open(sys.argv[1]))['fit']
# run.json's AGM log-likelihood is of the same cover, read by side
ll = float(sys.argv[3])
assert abs(ll - f['agm_loglik']) <= 1e-7 * abs(ll), (ll, f['agm_loglik'])
s = f['starts_judged']
assert len(s) == 3 and all(x['code_length'] is not None for x in s), s
best = min(range(3), key=lambda i: (s[i]['code_length'], i))
assert f['start_kept'] == best + 1, (f['start_kept'], s)
code = float(sys.argv[2])
# the starts are judged on their reading with every column kept; the
# cover written leaves out the columns that do not pay for their names,
# which only shortens its code (agm_trim.c): equal when none is left out
if f['communities_left_out'] == 0:
    assert abs(code - s[best]['code_length']) <= 1e-7 * abs(code), (code, s[best])
else:
    assert code < s[best]['code_length'], (code, f['communities_left_out'], s[best])
print("# kept start's code %.6f, memberships.tsv's %.6f, %d columns left out"
      % (s[best]['code_length'], code, f['communities_left_out']))
PYEOF
# The weighted model's starts and moves are judged by code length too
# (session 15): the same recipe with Poisson weights (simulate --weighted).
# By l(F) its kept moves split the large communities: ONMI 0.838 at seed 1
# (0.826, 0.879 at seeds 2, 3); by code 0.912 (0.912, 0.913). The floor is
# issue 15's target for a planted graph of 10^4 nodes with mixing 0.2.
"$BIN" simulate -n 10000 --sizes 20:2000 --size-exponent 2 --overlap 0.1 --mean-degree 20 \
	--even-degrees --mixing 0.2 --weighted --seed 1 -q -o "$tmp/w"
check "simulate --weighted: exit 0" [ $? -eq 0 ]
kw=$(($(wc -l <"$tmp/w/planted.tsv") - 1))
"$BIN" fit "$tmp/w/edges.tsv" --weighted -k "$kw" -j 2 --seed 1 -q -o "$tmp/wf"
check "fit --weighted: exit 0" [ $? -eq 0 ]
check "weighted: three starts judged by code length, the kept one the shortest" \
	"$PY" - "$tmp/wf/run.json" <<'PYEOF'
import json, sys
f = json.load(open(sys.argv[1]))['fit']
s = f['starts_judged']
assert len(s) == 3 and all(x['code_length'] is not None for x in s), s
best = min(range(3), key=lambda i: (s[i]['code_length'], i))
assert f['start_kept'] == best + 1, (f['start_kept'], s)
PYEOF
ow=$($ONMI "$tmp/w/truth.tsv" "$tmp/wf/memberships.tsv")
check "weighted: ONMI against the planted cover $ow >= 0.85 (0.838 judged by l(F))" at_least "$ow" 0.85
finish
