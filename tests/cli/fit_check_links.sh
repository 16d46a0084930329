#!/bin/sh
# fit --check-links: the final fit leaves a share of the pairs out, and
# run.json reports their link AUC and log-likelihood. The AUC and the
# log-likelihood are recomputed here from held-out-links.tsv with
# scikit-learn 1.2.1 (Debian python3-sklearn; sklearn.metrics.roc_auc_score,
# which counts ties as one half) and math.log; the pairs are checked
# against the edge list with networkx 2.8.8.
. "$(dirname "$0")/lib"

football=$DATA/football/edges.tsv
need_file "$football"

"$BIN" fit "$football" -k 12 --check-links 0.2 -j 2 -q -o "$tmp/a"
check "fit --check-links 0.2: exit 0" [ $? -eq 0 ]
check "held-out-links.tsv written" [ -f "$tmp/a/held-out-links.tsv" ]
check "held-out-links.tsv header" \
	[ "$(head -1 "$tmp/a/held-out-links.tsv")" = "$(printf 'node_a\tnode_b\tedge\tprobability')" ]
"$PY" - "$football" "$tmp/a" <<'PYEOF'
import json, math, sys
import networkx as nx
from sklearn.metrics import roc_auc_score

g = nx.read_edgelist(sys.argv[1], delimiter="\t", comments="#")
run = json.load(open(sys.argv[2] + "/run.json"))
lc = run["link_check"]
rows = [l.rstrip("\n").split("\t") for l in open(sys.argv[2] + "/held-out-links.tsv")][1:]
bad = 0
def report(ok, what):
    global bad
    print(("ok - " if ok else "not ok - ") + what)
    bad += not ok
edges = [r for r in rows if r[2] == "1"]
non = [r for r in rows if r[2] == "0"]
# 20% of 613 edges, rounded: 123, and as many non-edges
report(len(edges) == 123 and len(non) == 123, "123 held-out edges and 123 non-edges")
report(lc["held_out_edges"] == 123 and lc["held_out_non_edges"] == 123,
       "run.json link_check counts the same")
report(all(g.has_edge(a, b) for a, b, _, _ in edges), "held-out edges are edges of the graph")
report(not any(g.has_edge(a, b) for a, b, _, _ in non), "held-out non-edges are not edges")
report(len({tuple(sorted(r[:2])) for r in rows}) == len(rows), "no pair held out twice")
y = [int(r[2]) for r in rows]
p = [float(r[3]) for r in rows]
auc = roc_auc_score(y, p)
report(abs(auc - lc["heldout_auc"]) < 1e-9,
       "run.json heldout_auc %.6f equals scikit-learn's roc_auc_score %.6f" % (lc["heldout_auc"], auc))
ll = sum(math.log(q) if e else math.log1p(-q) for e, q in zip(y, p))
# a probability printed with 17 digits carries 1 - q only to about 1e-16
# absolute: log(1 - q) of a pair with q near 1 is known to 1e-16 / (1 - q)
slack = sum(1e-16 / (1 - q) for e, q in zip(y, p) if not e and q < 1)
report(abs(ll - lc["heldout_loglik"]) <= 1e-6 * abs(ll) + slack,
       "run.json heldout_loglik %.6f equals sum log P / log(1 - P) %.6f" % (lc["heldout_loglik"], ll))
report(run["k_selection"] is None, "k_selection is null when k is given")
sys.exit(1 if bad else 0)
PYEOF
[ $? -eq 0 ] || failures=$((failures + 1))
# the written communities are figures of the whole graph, not of the
# training edges (result_check.py recomputes them with networkx)
"$PY" "$cli_here/result_check.py" "$football" "$tmp/a" check-links >"$tmp/rc.out" ||
	failures=$((failures + 1))
grep '^not ok' "$tmp/rc.out"

"$BIN" fit "$football" -k 12 --max-sweeps 3 -q -o "$tmp/b"
check "without --check-links, link_check is null" [ "$(json_get "$tmp/b/run.json" link_check)" = null ]
check "without --check-links, no held-out-links.tsv" [ ! -e "$tmp/b/held-out-links.tsv" ]
"$BIN" fit "$football" -k 12 --check-links 0.7 -q -o "$tmp/c" 2>/dev/null
check "--check-links above 0.5 is a usage error (exit 2)" [ $? -eq 2 ]
"$BIN" fit --resume "$tmp/b" --check-links 0.1 -q 2>/dev/null
check "--check-links with --resume is a usage error (exit 2)" [ $? -eq 2 ]

finish
