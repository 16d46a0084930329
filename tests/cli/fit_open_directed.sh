#!/bin/sh
# The directed and weighted models on open data (issue 15, "On open data"),
# checked against what is outside the project:
#  - the Serengeti food web (E. B. Baskerville et al., PLoS Comput. Biol. 7,
#    e1002321, 2011; tests/data/serengeti-foodweb): 161 species, 591 arcs
#    "eaten by", and the authors' 14 groups (a published reference
#    partition, not a ground truth), scored by tests/tools/onmi.py (max-form
#    ONMI, McDaid, Greene & Hurley 2011) for `fit --directed`, BigCLAM on
#    the same arcs read undirected, and igraph's Leiden (python3-igraph
#    0.10.2 as in Debian 12; modularity, best of 10 seeds) on the graph
#    treated as undirected;
#  - the C. elegans neural network (D. J. Watts and S. H. Strogatz, Nature
#    393, 440, 1998, from White et al. 1986; tests/data/celegansneural): 297
#    neurons, 2,359 arcs weighted by synapses, no known groups: compared
#    with igraph's Leiden on the summed weights (modularity), by ONMI and by
#    the share of synapses that fall inside communities, and that share over
#    its mean for the same cover with the node names shuffled (20 shuffles,
#    Python's random seeded 7: the cover's sizes, overlap and sides kept,
#    its alignment with the graph lost), so that a cover with more
#    memberships does not win by its overlap alone. `fit --directed
#    --weighted` uses both the direction and the synapse counts.
# Floors are measured values less a margin; the measurements (seeds 1-4) are
# in the comments and in DEVELOPERS.md.
. "$(dirname "$0")/lib"

se=$DATA/serengeti-foodweb
ce=$DATA/celegansneural/arcs.tsv
onmi() { "$PY" "$ROOT/tests/tools/onmi.py" "$1" "$2"; }

# igraph's Leiden (modularity) on the arcs as an undirected graph, weights
# summed over both directions when asked (w), the best of seeds 42..51
leiden() {
	"$PY" - "$1" "$2" "$3" <<'PYEOF'
import sys, random, igraph as ig
path, out, weighted = sys.argv[1], sys.argv[2], sys.argv[3] == 'w'
ed = {}
for line in open(path, encoding='utf-8'):
    if line.startswith('#') or not line.strip():
        continue
    p = line.rstrip('\n').split('\t')
    if p[0] != p[1]:
        key = tuple(sorted(p[:2]))
        ed[key] = ed.get(key, 0.0) + (float(p[2]) if weighted else 1.0)
names = sorted({x for e in ed for x in e})
ix = {n: i for i, n in enumerate(names)}
g = ig.Graph(n=len(names), edges=[(ix[a], ix[b]) for a, b in ed])
w = list(ed.values()) if weighted else None
best = None
for r in range(10):
    random.seed(42 + r)  # python-igraph draws from Python's random
    m = g.community_leiden(objective_function='modularity', weights=w, n_iterations=-1).membership
    q = g.modularity(m, weights=w)
    if best is None or q > best[0]:
        best = (q, m)
with open(out, 'w') as f:
    f.write('node\tcommunity\n')
    f.writelines('%s\t%d\n' % (names[i], c) for i, c in enumerate(best[1]))
print('modularity %.4f, %d groups' % (best[0], len(set(best[1]))))
PYEOF
}

# The share of arcs (and of their weight) inside communities: u -> v is
# inside when u sends in a community where v receives (a one-mode
# result's members do both).
inside() {
	"$PY" - "$1" "$2" <<'PYEOF'
import sys
arcs = [l.rstrip('\n').split('\t') for l in open(sys.argv[1]) if l.strip() and l[0] != '#']
send, recv = {}, {}
for l in open(sys.argv[2]):
    p = l.rstrip('\n').split('\t')
    if p[0] == 'node':
        continue
    side = p[3] if len(p) > 3 else 'both'
    if side != 'receiving':
        send.setdefault(p[0], set()).add(p[1])
    if side != 'sending':
        recv.setdefault(p[0], set()).add(p[1])
wt = lambda a: float(a[2]) if len(a) > 2 else 1.0
def share(send, recv):
    ins = [a for a in arcs if send.get(a[0], set()) & recv.get(a[1], set())]
    return len(ins) / len(arcs), sum(map(wt, ins)) / sum(map(wt, arcs))
a, s = share(send, recv)
import random
rr, nodes, shuffled = random.Random(7), sorted({x for a in arcs for x in a[:2]}), 0.0
for r in range(20):
    perm = nodes[:]
    rr.shuffle(perm)
    mp = dict(zip(nodes, perm))
    shuffled += share({mp.get(u, u): c for u, c in send.items()},
                      {mp.get(u, u): c for u, c in recv.items()})[1] / 20
print('%.4f %.4f %.2f' % (a, s, s / shuffled if shuffled > 0 else 0.0))
PYEOF
}

# ---- Serengeti. Measured (k 14, seeds 1-4; 2026-12-05, seeds from label
# propagation's clusters of the undirected view, the default): --directed
# 0.108, 0.145, 0.120, 0.133 (mean 0.126; from ego-nets 0.141, 0.143,
# 0.157, 0.155: a food web's groups are trophic roles, which the ego-net of
# a predator and its prey starts closer to than modules do; label
# propagation on the graph of sending and receiving copies gave 0.121,
# 0.118, 0.143, 0.121); BigCLAM on the arcs read undirected 0.122 (mean).
# Measured 2026-12-04 (seeds from ego-nets): --directed 0.141,
# 0.155, 0.148, 0.155 (mean 0.150); BigCLAM on the arcs read undirected
# 0.145, 0.116, 0.121, 0.100 (mean 0.121; 0.108, 0.121, 0.102, 0.101 before
# its starts were judged by code length, when seed 1 alone was compared);
# Leiden 0.219 (3 groups, modularity 0.370); the published groups shuffled
# among the species 0.000-0.020 (chance). One seed can go either way, so the
# comparison is of the means over seeds 1-4 (each fit well under a second).
sd=0 su=0
for s in 1 2 3 4; do
	"$BIN" fit "$se/arcs.tsv" --directed -k 14 -j 2 --seed $s -q -o "$tmp/sd$s" 2>/dev/null
	"$BIN" fit "$se/arcs.tsv" -k 14 -j 2 --seed $s -q -o "$tmp/su$s" 2>/dev/null
	sd=$("$PY" -c "print($sd + $(onmi "$se/groups.tsv" "$tmp/sd$s/memberships.tsv") / 4)")
	su=$("$PY" -c "print($su + $(onmi "$se/groups.tsv" "$tmp/su$s/memberships.tsv") / 4)")
done
leiden "$se/arcs.tsv" "$tmp/sl.tsv" u >"$tmp/sl.out"
d=$(onmi "$se/groups.tsv" "$tmp/sd1/memberships.tsv")
l=$(onmi "$se/groups.tsv" "$tmp/sl.tsv")
echo "# Serengeti vs the 14 published groups (ONMI, mean of seeds 1-4): --directed $sd," \
	"undirected $su; igraph Leiden $l ($(cat "$tmp/sl.out"))"
check "Serengeti: --directed recovers the published groups above chance (seed 1: ONMI $d >= 0.08, four times chance's best)" \
	"$PY" -c "import sys; sys.exit(not float('$d') >= 0.08)"
check "Serengeti: the direction helps (mean ONMI over seeds 1-4 above BigCLAM's on the arcs read undirected)" \
	"$PY" -c "import sys; sys.exit(not float('$sd') > float('$su'))"

# ---- C. elegans. Session 15 (two-sided columns trimmed by side, every
# model's starts and moves judged by code length), seed 1: synapses inside
# --weighted 0.755, unweighted 0.882, Leiden 0.741; arcs inside --directed
# 0.507; --directed --weighted synapses inside 0.841 (lift 9.86); ONMI
# with Leiden, mean of seeds 1-3: --weighted 0.277, unweighted 0.252.
# Measured 2026-12-05 (seeds from clusters, seed 1):
# synapses inside --weighted 0.756, unweighted 0.882, Leiden 0.741; arcs
# inside --directed 0.544; ONMI with Leiden --weighted 0.250, unweighted
# 0.249, --directed 0.252; --directed --weighted synapses inside 0.871
# (lift 8.36). Before, from ego-nets (k 6 = Leiden's group count, seeds 1-3):
# synapses inside communities: --weighted 0.814, 0.819, 0.821 (1.24
# memberships a covered node), Leiden (weights) 0.741, unweighted BigCLAM
# 0.579, 0.483, 0.423; ONMI with Leiden (weights): --weighted 0.303,
# 0.362, 0.330, unweighted 0.215, 0.177, 0.185, --directed 0.254, 0.232,
# 0.229; arcs from a sending to a receiving member of one community:
# --directed 0.431, 0.510, 0.514 (Leiden: 0.611 of the arcs join two
# neurons of one group).
#
# --directed --weighted (k 6, seeds 1-3): synapses inside 0.873, 0.856,
# 0.856 (1.66, 1.59, 1.53 memberships a covered node), their lift over the
# shuffled cover 8.36, 8.57, 9.10 (Leiden 3.31, --weighted 5.00, 5.01,
# 4.99, --directed 13.9, 11.5, 11.1: a small cover of the densest arcs);
# ONMI with Leiden (weights) 0.221, 0.191, 0.236, below --weighted's:
# Leiden's groups are of the undirected graph, so a directed cover need
# not agree with them.
"$BIN" fit "$ce" --directed --weighted -k 6 -j 2 -q -o "$tmp/cdw" 2>/dev/null
check "C. elegans: --directed --weighted: exit 0" [ $? -eq 0 ]
"$BIN" fit "$ce" --weighted -k 6 -j 2 -q -o "$tmp/cw" 2>/dev/null
"$BIN" fit "$ce" -k 6 -j 2 -q -o "$tmp/cu" 2>/dev/null
"$BIN" fit "$ce" --directed -k 6 -j 2 -q -o "$tmp/cd" 2>/dev/null
leiden "$ce" "$tmp/cl.tsv" w >"$tmp/cl.out"
set -- $(inside "$ce" "$tmp/cw/memberships.tsv"); ww=$2
set -- $(inside "$ce" "$tmp/cu/memberships.tsv"); uw=$2
set -- $(inside "$ce" "$tmp/cd/memberships.tsv"); da=$1 dw=$2
set -- $(inside "$ce" "$tmp/cl.tsv"); la=$1 lw=$2 ll=$3
set -- $(inside "$ce" "$tmp/cdw/memberships.tsv"); bw=$2 bl=$3
ob=$(onmi "$tmp/cl.tsv" "$tmp/cdw/memberships.tsv")
# the weights' pull toward Leiden's groups on the weights, on the mean of
# seeds 1-3: one seed alone is a coin's toss here (seed 1, session 15:
# 0.227 against 0.249; seeds 2 and 3: 0.316 and 0.289 against 0.267 and
# 0.240; with starts judged by l(F) before: 0.250, 0.349, 0.342)
for s in 2 3; do
	"$BIN" fit "$ce" --weighted -k 6 -j 2 --seed $s -q -o "$tmp/cw$s" 2>/dev/null
	"$BIN" fit "$ce" -k 6 -j 2 --seed $s -q -o "$tmp/cu$s" 2>/dev/null
done
ow=$("$PY" -c "import sys; print(round(sum(map(float, sys.argv[1:])) / 3, 6))" \
	"$(onmi "$tmp/cl.tsv" "$tmp/cw/memberships.tsv")" \
	"$(onmi "$tmp/cl.tsv" "$tmp/cw2/memberships.tsv")" \
	"$(onmi "$tmp/cl.tsv" "$tmp/cw3/memberships.tsv")")
ou=$("$PY" -c "import sys; print(round(sum(map(float, sys.argv[1:])) / 3, 6))" \
	"$(onmi "$tmp/cl.tsv" "$tmp/cu/memberships.tsv")" \
	"$(onmi "$tmp/cl.tsv" "$tmp/cu2/memberships.tsv")" \
	"$(onmi "$tmp/cl.tsv" "$tmp/cu3/memberships.tsv")")
od=$(onmi "$tmp/cl.tsv" "$tmp/cd/memberships.tsv")
echo "# C. elegans, igraph Leiden on the weights: $(cat "$tmp/cl.out")"
echo "# synapses inside: --weighted $ww, unweighted $uw, Leiden $lw;" \
	"arcs inside: --directed $da, Leiden $la"
echo "# ONMI with Leiden (mean of seeds 1-3): --weighted $ow, unweighted $ou; seed 1 --directed $od"
echo "# --directed --weighted: synapses inside $bw (lift $bl; Leiden's $ll)," \
	"--directed alone $dw; ONMI with Leiden $ob"
check "C. elegans: --weighted keeps as many synapses inside communities as Leiden" \
	"$PY" -c "import sys; sys.exit(not float('$ww') >= float('$lw'))"
check "C. elegans: the weights bring the cover nearer Leiden's on the weights (ONMI, mean of seeds 1-3)" \
	"$PY" -c "import sys; sys.exit(not float('$ow') > float('$ou'))"
check "C. elegans: --directed: arcs inside >= 0.35 and ONMI with Leiden >= 0.18" \
	"$PY" -c "import sys; sys.exit(not (float('$da') >= 0.35 and float('$od') >= 0.18))"
check "C. elegans: --directed --weighted keeps more synapses inside than Leiden" \
	"$PY" -c "import sys; sys.exit(not float('$bw') >= float('$lw'))"
check "... with a lift over its shuffled cover above Leiden's" \
	"$PY" -c "import sys; sys.exit(not float('$bl') > float('$ll'))"
check "... and more synapses inside than --directed without the weights (by 0.15)" \
	"$PY" -c "import sys; sys.exit(not float('$bw') >= float('$dw') + 0.15)"
finish
