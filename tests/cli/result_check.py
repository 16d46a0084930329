"""Check a coterie result folder against its input graph, independently.

usage: result_check.py EDGES.tsv RESULT_DIR [LABEL]

Everything is recomputed here from the edge list and the written files, with
python3-networkx (Debian 2.8.8) for the graph figures, and compared with what
coterie wrote. Prints "ok - ..." / "not ok - ..." lines (TAP-like, counted by
tests/run.sh) and exits 1 when any check failed.

Sources of the expected values:
  - file layout and column meaning: /work/shared/DESIGN.md, "Files";
  - epsilon = 2|E| / (N(N-1)) and delta = sqrt(-ln(1 - epsilon)): DESIGN.md,
    "Background and threshold";
  - AGM likelihood: Yang & Leskovec, "Community-affiliation graph model for
    overlapping network community detection", ICDM 2012, eq. (1) with the
    epsilon-community that contains every node (section III):
    P(u,v) = 1 - (1 - eps) * prod_{c shared} (1 - p_c);
  - conductance and density: networkx 2.8.8 networkx.conductance,
    networkx.density (conductance = cut / min(vol S, vol complement), Kannan,
    Vempala & Vetta, J. ACM 51 (2004)).
"""
import json
import math
import sys

import networkx as nx

failures = 0


LABEL = sys.argv[3] + ": " if len(sys.argv) > 3 else ""


def report(ok, what):
    global failures
    print(("ok - " if ok else "not ok - ") + LABEL + what.rstrip())
    if not ok:
        failures += 1


def close(a, b, rel=1e-5, absolute=1e-9):
    return abs(a - b) <= max(absolute, rel * max(abs(a), abs(b)))


def read_tsv(path):
    with open(path, encoding="utf-8", errors="surrogateescape") as f:
        rows = [line.rstrip("\n").split("\t") for line in f]
    return rows[0], rows[1:]


def main():
    edges_path, out = sys.argv[1], sys.argv[2]
    G = nx.Graph()
    with open(edges_path, encoding="utf-8", errors="surrogateescape") as f:
        for line in f:
            if not line.strip() or line[0] in "#%":
                continue
            u, v = line.rstrip("\n").split("\t")[:2]
            if u != v:
                G.add_edge(u, v)
    n, m = G.number_of_nodes(), G.number_of_edges()
    run = json.load(open(out + "/run.json"))

    # DESIGN.md "Background and threshold": epsilon defaults to the density,
    # or below 20000 edges to the multiple of it the search chose (code length or coverage)
    # (man/coterie.1, --epsilon; run.json's background).
    density = 2.0 * m / (n * (n - 1))
    bg = run.get("background") or {"rule": "density"}
    eps = density
    if bg["rule"] in ("coverage", "code"):
        report(close(bg["density"], density, 1e-12),
               "run.json background.density %.10g is 2*%d/(%d*%d) = %.10g"
               % (bg["density"], m, n, n - 1, density))
        mult = [c["multiple"] for c in bg["candidates"] if c["epsilon"] == bg["epsilon"]]
        report(len(mult) == 1 and mult[0] in (1.0, 0.7, 0.5, 0.3, 0.2, 0.1, 0.05, 0.03,
                                              0.01, 0.001),
               "run.json background.epsilon is one of its trials, a multiple of the density")
        eps = density * mult[0] if mult else bg["epsilon"]
    if bg["rule"] != "given":
        report(close(run["parameters"]["epsilon"], eps, 1e-12),
               "run.json epsilon %.10g is %s: %.10g (density 2*%d/(%d*%d))"
               % (run["parameters"]["epsilon"], bg["rule"], eps, m, n, n - 1))
    eps = run["parameters"]["epsilon"]
    delta = math.sqrt(-math.log1p(-eps))
    report(close(run["parameters"]["delta"], delta, 1e-12),
           "run.json delta is sqrt(-ln(1 - epsilon)) = %.10g" % delta)

    head, rows = read_tsv(out + "/memberships.tsv")
    report(head == ["node", "community", "strength"],
           "memberships.tsv header is node, community, strength")
    report(all(len(r) == 3 for r in rows), "every memberships.tsv row has three fields")
    rows = [r for r in rows if len(r) == 3]
    missing = sorted({r[0] for r in rows} - set(G.nodes))
    report(not missing, "every node in memberships.tsv is in the graph %s"
           % (repr(missing[:3]) if missing else ""))
    if run["fit"].get("memberships_from") == "agm refinement":
        # --refine (man/coterie-files.5): the refinement may add memberships
        # whose strength is below delta, or 0 when F holds none.
        low = [r for r in rows if not float(r[2]) >= 0.0]
        report(not low, "every membership of a refined cover has strength >= 0")
    else:
        low = [r for r in rows if not float(r[2]) >= delta * (1 - 1e-6)]
        report(not low, "every membership has strength >= delta (DESIGN.md threshold)")
    pairs = [(r[0], r[1]) for r in rows]
    report(len(pairs) == len(set(pairs)), "no node is listed twice in one community")

    members = {}
    for node, c, _ in rows:
        members.setdefault(c, set()).add(node)

    chead, crow = read_tsv(out + "/communities.tsv")
    report(chead[:2] == ["community", "size"] and "p" in chead
           and "internal_edges" in chead and "conductance" in chead,
           "communities.tsv header names community, size, internal_edges, conductance, p")
    col = {name: i for i, name in enumerate(chead)}
    ids = [r[0] for r in crow]
    report(len(ids) == len(set(ids)), "community ids in communities.tsv are distinct")
    report(set(members) <= set(ids),
           "every community in memberships.tsv has a row in communities.tsv")
    report(run["fit"]["communities"] == len(crow),
           "run.json fit.communities equals the rows of communities.tsv (%d)" % len(crow))
    covered = set(node for node, _, _ in rows)
    report(run["fit"]["covered_nodes"] == len(covered),
           "run.json covered_nodes equals the distinct nodes of memberships.tsv (%d)"
           % len(covered))
    counts = {}
    for node, _, _ in rows:
        counts[node] = counts.get(node, 0) + 1
    over = sum(1 for v in counts.values() if v >= 2)
    report(run["fit"]["overlapping_nodes"] == over,
           "run.json overlapping_nodes equals nodes in two or more communities (%d)" % over)

    bad = []
    p = {}
    for r in crow:
        c = r[0]
        S = members.get(c, set())
        p[c] = float(r[col["p"]])
        if int(r[col["size"]]) != len(S):
            bad.append("%s size %s != %d" % (c, r[col["size"]], len(S)))
            continue
        sub = G.subgraph(S)
        if int(r[col["internal_edges"]]) != sub.number_of_edges():
            bad.append("%s internal_edges %s != %d" % (c, r[col["internal_edges"]],
                                                       sub.number_of_edges()))
        if len(S) >= 2 and not close(float(r[col["density"]]), nx.density(sub)):
            bad.append("%s density %s != %g" % (c, r[col["density"]], nx.density(sub)))
        if 0 < len(S) < n and nx.volume(G, S) > 0 and \
                not close(float(r[col["conductance"]]), nx.conductance(G, S)):
            bad.append("%s conductance %s != %g" % (c, r[col["conductance"]],
                                                    nx.conductance(G, S)))
        if not 0.0 <= p[c] <= 1.0:
            bad.append("%s p %g outside [0, 1]" % (c, p[c]))
    report(not bad, "communities.tsv size, internal edges, density, conductance match "
           "networkx on the memberships %s" % "; ".join(bad[:3]))

    # AGM log-likelihood of the written answer, over all N(N-1)/2 pairs,
    # with the background probability the run used.
    eps = run["parameters"]["epsilon"]
    comm_of = {}
    for node, c, _ in rows:
        comm_of.setdefault(node, set()).add(c)
    nodes = list(G.nodes)
    ll = 0.0
    shared2 = 0
    for i in range(len(nodes)):
        u = nodes[i]
        cu = comm_of.get(u, set())
        for j in range(i + 1, len(nodes)):
            v = nodes[j]
            q = -math.log1p(-eps)
            for c in cu & comm_of.get(v, set()):
                q += -math.log1p(-min(p[c], 1 - 1e-15))
            if G.has_edge(u, v):
                ll += math.log(-math.expm1(-q))
                shared2 += len(cu & comm_of.get(v, set())) >= 2
            else:
                ll -= q
    print("# %d edge(s) share two or more communities" % shared2)
    report(close(run["fit"]["agm_loglik"], ll, 1e-6),
           "run.json agm_loglik %.8g matches the AGM likelihood recomputed from the "
           "files, %.8g (Yang & Leskovec 2012, eq. 1)" % (run["fit"]["agm_loglik"], ll))

    thead, trows = read_tsv(out + "/trace.tsv")
    report(thead == ["sweep", "seconds", "loglik"], "trace.tsv header is sweep, seconds, loglik")
    sweeps = [int(r[0]) for r in trows]
    report(sweeps == list(range(sweeps[0], sweeps[0] + len(sweeps))) if sweeps else False,
           "trace.tsv sweeps are consecutive")
    report(bool(sweeps) and sweeps[-1] == run["fit"]["sweeps"],
           "trace.tsv ends at run.json fit.sweeps (%s)" % run["fit"]["sweeps"])
    report(bool(trows) and close(float(trows[-1][2]), run["fit"]["loglik"], 1e-12),
           "trace.tsv last log-likelihood equals run.json fit.loglik")

    with open(out + "/checkpoint.cot", "rb") as f:
        ck = f.read()
    # coterie-files(5): magic "COTERIE\x1a", u32 version 4, u32
    # reserved, u64 fingerprint, little-endian.
    report(ck[:8] == b"COTERIE\x1a" and int.from_bytes(ck[8:12], "little") == 4,
           "checkpoint.cot starts with the magic and version 4")
    fp = "%016x" % int.from_bytes(ck[16:24], "little")
    report(fp == run["graph"]["fingerprint"],
           "checkpoint fingerprint %s equals run.json graph.fingerprint" % fp)
    sys.exit(1 if failures else 0)


main()
