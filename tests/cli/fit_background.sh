#!/bin/sh
# fit's background epsilon (background.h): on a graph below 20000 edges it
# fits at the density and nine multiples below it, fits the AGM's own
# background to each cover, and keeps the epsilon whose cover has the
# shortest code length there, among the covers holding half of the linked
# nodes (90% when the density's cover holds fewer than half); run.json says
# how it was chosen and lists the trials; --epsilon and large graphs skip
# the search. The scores against known groups are computed by
# tests/tools/onmi.py, our own transcription of McDaid, Greene & Hurley
# (2011), not by coterie; the code length of one cover is recomputed here
# from the files (an independent transcription, below).
. "$(dirname "$0")/lib"

ONMI="$PY $ROOT/tests/tools/onmi.py"
need_file "$DATA/karate/edges.tsv"

# at_least A B: A >= B as numbers
at_least() { awk -v a="$1" -v b="$2" 'BEGIN { exit !(a + 0 >= b + 0) }'; }

# karate (W. W. Zachary, J. Anthropol. Res. 33, 452 (1977); factions from
# networkx 2.8, tests/data/README.md), polbooks (V. Krebs, via M. E. J.
# Newman) and football (Girvan & Newman, PNAS 99, 7821 (2002)) at the
# number of known groups, seed 1, default options. The floors are the
# issue's targets (0.40, 0.40, 0.83), with karate's a little below what
# this code scores. Measured with this code on 2026-12-05 (seeds from
# label propagation's clusters), seeds 1-6: karate 0.685 at every seed;
# polbooks 0.418 0.421 0.421 0.390 0.399 0.390; football 0.846 0.855 0.846
# 0.855 0.846 0.855. On 2026-12-04 (seeds from ego-nets), seeds 1-6:
# karate 0.782 0.685 0.685 0.685 0.685 0.685; polbooks 0.421 0.397 0.390
# 0.418 0.392 0.399 (seeds 2, 3, 5 and 6 under 0.40); football 0.855 0.846
# 0.855 0.855 0.855 0.855. With the coverage guard before it (the first
# multiple to cover 90%, the density kept when it covered half): karate
# 0.729 0.685 0.685, polbooks 0.390 0.403 0.390 0.400 0.392 0.404, football
# 0.815 at every seed (the density kept; its cover splits the conference of
# 13 in two). For scale, igraph 0.10.2's Leiden scores 0.240, 0.412 and
# 0.760 (shared/datasets/README.md).
for case in karate:2:0.65 polbooks:3:0.40 football:12:0.83; do
	g=${case%%:*}; rest=${case#*:}; k=${rest%%:*}; floor=${rest#*:}
	"$BIN" fit "$DATA/$g/edges.tsv" -k "$k" -j 2 --seed 1 -q -o "$tmp/$g" 2>"$tmp/$g.err"
	check "$g: exit 0" [ $? -eq 0 ]
	rj=$tmp/$g/run.json
	check "$g: background.rule is code" [ "$(json_get "$rj" background.rule)" = code ]
	check "$g: the epsilon fitted is the one chosen" \
		[ "$(json_get "$rj" background.epsilon)" = "$(json_get "$rj" parameters.epsilon)" ]
	check "$g: the trials follow the rule" "$PY" "$ROOT/tests/cli/background_rule.py" "$rj"
	covered=$(json_get "$rj" fit.covered_nodes)
	linked=$(json_get "$rj" background.linked_nodes)
	check "$g: half of the linked nodes covered ($covered of $linked)" \
		awk -v c="$covered" -v l="$linked" 'BEGIN { exit !(c >= 0.5 * l) }'
	s=$($ONMI "$DATA/$g/truth.tsv" "$tmp/$g/memberships.tsv")
	check "$g: overlapping NMI $s >= $floor" at_least "$s" "$floor"
done

# The code length of football's kept cover, recomputed from its files. The
# AGM's joint maximum (background and one p_c a community) is found here
# one parameter at a time, on a_j = -ln(1 - p_j) (bisection on the
# derivative), sweeping until nothing moves: a pair
# sharing the set S of communities is linked with P_S = 1 - exp(-x_S),
# x_S = a_eps + sum_{c in S} a_c, and the log-likelihood
#   sum_S [linked_S ln(1 - exp(-x_S)) - (pairs_S - linked_S) x_S]
# is concave in the a (ln(1 - e^-x) is concave, x_S linear), so the sweeps
# reach the one maximum. Where no node overlaps, that maximum has a closed
# form (each community at its own density, the background the share of
# linked pairs among those sharing none; tests/unit/test_agm.c works one by
# hand), which the sweeps are checked against first. The code adds
# ln C(n, s) for each community of s members (Rissanen 1978).
check "football: the kept cover's code length recomputed from the files" \
	"$PY" - "$DATA/football/edges.tsv" "$tmp/football" <<'PY'
import json, math, sys, itertools, collections
edges = set(); nodes = set()
for line in open(sys.argv[1]):
    if line.startswith("#") or not line.strip():
        continue
    a, b = line.split()[:2]
    nodes.update((a, b))
    if a != b:
        edges.add(frozenset((a, b)))
memb = collections.defaultdict(set)
for line in list(open(sys.argv[2] + "/memberships.tsv"))[1:]:
    f = line.rstrip("\n").split("\t")
    memb[f[1]].add(f[0])
of = collections.defaultdict(set)
for c, ms in memb.items():
    for u in ms:
        of[u].add(c)
pairs = collections.Counter(); linked = collections.Counter()
for a, b in itertools.combinations(sorted(nodes), 2):
    s = frozenset(of[a] & of[b])
    pairs[s] += 1
    linked[s] += frozenset((a, b)) in edges

def agm_max(pairs, linked):
    """The AGM's maximum log-likelihood over the background and p_c, and
    the background: one parameter a = -ln(1 - p) at a time, the root of
    its derivative (decreasing in a: the function is concave) found by
    bisection, sweeps until nothing moves."""
    params = ["eps"] + sorted({c for s in pairs for c in s})
    of_p = {j: [s for s in pairs if j == "eps" or j in s] for j in params}
    a = {j: 0.01 for j in params}
    x = lambda s: a["eps"] + sum(a[c] for c in s)
    def slope(j, v):
        rest = {s: x(s) - a[j] for s in of_p[j]}
        g = 0.0
        for s in of_p[j]:
            xs = rest[s] + v
            g += (linked[s] / math.expm1(xs) if linked[s] and xs < 700 else 0.0) - \
                (pairs[s] - linked[s])
        return g
    for sweep in range(500):
        moved = 0.0
        for j in params:
            lo, hi = 0.0, 1.0
            if slope(j, 1e-300) <= 0:
                new = 0.0
            else:
                while slope(j, hi) > 0 and hi < 1024:  # 1024: p = 1 to the last bit
                    lo, hi = hi, 2 * hi
                for _ in range(200):
                    mid = 0.5 * (lo + hi)
                    if slope(j, mid) > 0:
                        lo = mid
                    else:
                        hi = mid
                new = 0.5 * (lo + hi)
            moved = max(moved, abs(new - a[j]))
            a[j] = new
        if moved < 1e-15:
            break
    L = 0.0
    for s in pairs:
        xs = x(s)
        L += (linked[s] * math.log(-math.expm1(-xs)) if linked[s] else 0.0) - (pairs[s] - linked[s]) * xs
    return L, -math.expm1(-a["eps"])

# the sweeps against the closed form on the same pairs read as if no node
# overlapped (each set of communities its own class)
none = frozenset()
closed = linked[none] * math.log(linked[none] / pairs[none]) + \
    (pairs[none] - linked[none]) * math.log(1 - linked[none] / pairs[none])
for s in pairs:
    if s != none:
        d = linked[s] / pairs[s]
        closed += (linked[s] * math.log(d) if linked[s] else 0) + \
                  ((pairs[s] - linked[s]) * math.log(1 - d) if linked[s] < pairs[s] else 0)
as_classes = {frozenset([s]) if s else none: v for s, v in pairs.items()}
as_linked = {frozenset([s]) if s else none: v for s, v in linked.items()}
Lc, _ = agm_max(as_classes, collections.Counter(as_linked))
assert abs(Lc - closed) < 1e-7 * abs(closed), (Lc, closed)
L, eps = agm_max(pairs, linked)
n = len(nodes)
lnc = lambda n, k: math.lgamma(n + 1) - math.lgamma(k + 1) - math.lgamma(n - k + 1)
code = -L + sum(lnc(n, len(ms)) for ms in memb.values())
b = json.load(open(sys.argv[2] + "/run.json"))["background"]
kept = [c for c in b["candidates"] if c["epsilon"] == b["epsilon"]][0]
assert abs(kept["code_length"] - code) < 1e-6 * code, (kept["code_length"], code)
assert abs(kept["cover_background"] - eps) < 1e-9, (kept["cover_background"], eps)
PY

# the old default on karate, for contrast: the search is what lifts the score
"$BIN" fit "$DATA/karate/edges.tsv" -k 2 -j 2 --seed 1 -q -o "$tmp/kd" \
	--epsilon "$(json_get "$tmp/karate/run.json" background.density)" 2>/dev/null
check "karate --epsilon DENSITY: rule given" [ "$(json_get "$tmp/kd/run.json" background.rule)" = given ]
check "karate --epsilon DENSITY: no trials" \
	[ "$(json_get "$tmp/kd/run.json" background.candidates)" = "[]" ]
s_density=$($ONMI "$DATA/karate/truth.tsv" "$tmp/kd/memberships.tsv")
s_guard=$($ONMI "$DATA/karate/truth.tsv" "$tmp/karate/memberships.tsv")
check "karate: the search ($s_guard) beats the density ($s_density) by 0.3" \
	at_least "$s_guard" "$(awk -v d="$s_density" 'BEGIN { print d + 0.3 }')"

# lesmis (D. E. Knuth, The Stanford GraphBase, 1993; no known groups) at k 6:
# the same rule, checked from the record
"$BIN" fit "$DATA/lesmis/edges.tsv" -k 6 -j 2 --seed 1 -q -o "$tmp/lesmis"
check "lesmis: the trials follow the rule" "$PY" "$ROOT/tests/cli/background_rule.py" \
	"$tmp/lesmis/run.json"

# a graph of 20000 edges or more keeps the density, with no trial fit
"$BIN" simulate -n 2000 --sizes 20:200 --mean-degree 24 --seed 3 -q -o "$tmp/sim"
m=$(grep -vc '^#' "$tmp/sim/edges.tsv")
check "the planted graph has 20000 edges or more ($m)" [ "$m" -ge 20000 ]
"$BIN" fit "$tmp/sim/edges.tsv" -k 20 -j 2 -q --max-sweeps 5 -o "$tmp/big"
check "large graph: rule density" [ "$(json_get "$tmp/big/run.json" background.rule)" = density ]
check "large graph: epsilon is the density" \
	[ "$(json_get "$tmp/big/run.json" background.epsilon)" = "$(json_get "$tmp/big/run.json" background.density)" ]

# the notice names the choice and where the trials are
"$BIN" fit "$DATA/karate/edges.tsv" -k 2 -j 2 -o "$tmp/kn" 2>"$tmp/kn.err" >/dev/null
check "the notice says the epsilon chosen and points to run.json" \
	grep -q "x the density, the shortest code).*run.json" "$tmp/kn.err"
finish
