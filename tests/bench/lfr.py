#!/usr/bin/env python3
"""Write an LFR benchmark graph (Lancichinetti, Fortunato & Radicchi, Phys.
Rev. E 78, 046110, 2008) as made by networkx's LFR_benchmark_graph
(python3-networkx 2.8): DIR/edges.tsv and DIR/truth.tsv (a partition).

usage: lfr.py N MU MEAN_DEGREE SEED DIR [TAU1]

Degrees follow a power law of exponent TAU1 (default 2.5) up to 6x the
mean, community sizes one of exponent 1.5 from 20 to N/20. networkx 2.8
draws more edges than the mean degree asks, about 1.25 times (asked 8:
10.3 drawn; 15: 18.9); the line printed says how many. networkx fails
to draw some seeds; the next seeds are tried (the one used is printed)."""
import os
import sys

import networkx as nx


def main():
    n, mu, deg, seed, out = (int(sys.argv[1]), float(sys.argv[2]), float(sys.argv[3]),
                             int(sys.argv[4]), sys.argv[5])
    tau1 = float(sys.argv[6]) if len(sys.argv) > 6 else 2.5
    g = None
    for s in range(seed, seed + 20):
        try:
            g = nx.LFR_benchmark_graph(n, tau1, 1.5, mu, average_degree=deg,
                                       max_degree=int(deg * 6), min_community=20,
                                       max_community=int(n / 20), seed=s, max_iters=5000)
            break
        except nx.ExceededMaxIterations:
            continue
    if g is None:
        sys.exit("lfr.py: networkx drew no graph from seeds %d-%d" % (seed, seed + 19))
    os.makedirs(out, exist_ok=True)
    label = {u: min(g.nodes[u]["community"]) for u in g}
    with open(os.path.join(out, "edges.tsv"), "w") as f:
        for u, v in g.edges():
            if u != v:
                f.write("%d\t%d\n" % (u, v))
    with open(os.path.join(out, "truth.tsv"), "w") as f:
        for u in g:
            f.write("%d\t%d\n" % (u, label[u]))
    inside = sum(1 for u, v in g.edges() if label[u] == label[v])
    print("%s: seed %d, %d nodes, %d edges, %d communities, %.3f of the edges inside"
          % (out, s, g.number_of_nodes(), g.number_of_edges(), len(set(label.values())),
             inside / max(1, g.number_of_edges())))


if __name__ == "__main__":
    main()
