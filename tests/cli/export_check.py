#!/usr/bin/python3
# Reads what `coterie export` wrote back with other libraries and compares
# it with the result folder, for tests/cli/export.sh. Prints "ok - WHAT" or
# "not ok - WHAT" per check; exits 1 when any failed.
#
# The readers are Debian's python3 packages: networkx 2.8.8
# (python3-networkx: read_graphml, read_gml), python-igraph 0.10.2
# (python3-igraph: Graph.Read_GraphML, Graph.Read_GML) and scipy 1.10.1
# (python3-scipy: scipy.io.mmread); the versions in use are printed.
#
#   export_check.py fit BIN DIR EDGES GRAPHML GML MTX
#       the exports of result folder DIR (fitted on the edge list EDGES,
#       exported with --strength-columns all) against the folder's
#       memberships.tsv and communities.tsv, `coterie show DIR --links
#       --json` and `coterie show DIR --node NAME --json`
#   export_check.py names RAWNAMES GRAPHML GML
#       the node names of a graph of hostile names: RAWNAMES holds the raw
#       names, one per line as memberships.tsv escapes them
import json
import math
import subprocess
import sys

import igraph
import networkx as nx
import scipy
import scipy.io

print("# networkx %s, python-igraph %s, scipy %s" % (nx.__version__, igraph.__version__,
                                                       scipy.__version__))
bad = 0


def report(ok, what):
    global bad
    print(("ok - " if ok else "not ok - ") + what)
    bad += not ok


def unescape_tsv(s):
    """A name as memberships.tsv writes it, back to its bytes
    (coterie-files(5): \\t \\n \\r \\\\)."""
    out, i = bytearray(), 0
    b = s.encode("utf-8", "surrogateescape")
    while i < len(b):
        if b[i] == 0x5C and i + 1 < len(b):
            out += {ord("t"): b"\t", ord("n"): b"\n", ord("r"): b"\r"}.get(b[i + 1], b[i + 1:i + 2])
            i += 2
        else:
            out.append(b[i])
            i += 1
    return bytes(out)


def printable(cp):
    """The code points coterie keeps as they are (util.h, util_escape()):
    not C0/C1 controls, DEL, bidi controls, line/paragraph separators, BOM,
    noncharacters U+xFFFE/U+xFFFF."""
    return not (cp < 0x20 or 0x7F <= cp <= 0x9F or 0x202A <= cp <= 0x202E or
                0x2066 <= cp <= 0x2069 or cp in (0x2028, 0x2029, 0x200E, 0x200F, 0xFEFF)
                or (cp & 0xFFFE) == 0xFFFE)


def escape(b, ascii_only):
    """The rule of export_name() (export.h), written again from its
    description: printable UTF-8 kept (unless ascii_only), backslash, TAB,
    newline, CR and ESC as \\\\ \\t \\n \\r \\e, any other byte \\xHH."""
    out, i = [], 0
    while i < len(b):
        c = b[i]
        if 0x20 <= c < 0x7F and c != 0x5C:
            out.append(chr(c))
            i += 1
            continue
        if c >= 0x80 and not ascii_only:
            n = 2 if c >> 5 == 6 else 3 if c >> 4 == 14 else 4 if c >> 3 == 30 else 0
            try:
                ch = b[i:i + n].decode("utf-8") if n else ""
            except UnicodeDecodeError:
                ch = ""
            if len(ch) == 1 and printable(ord(ch)):
                out.append(ch)
                i += n
                continue
        out.append({0x5C: "\\\\", 9: "\\t", 10: "\\n", 13: "\\r", 0x1B: "\\e"}.get(c, "\\x%02x" % c))
        i += 1
    return "".join(out)


def readers(graphml, gml):
    """Each reader's view: (reader, {name: attrs}, {frozenset(a, b): attrs})."""
    views = []
    for what, g in (("networkx read_graphml", nx.read_graphml(graphml)),
                    ("networkx read_gml", nx.read_gml(gml, label="id"))):
        nodes = {d["name"]: d for _, d in g.nodes(data=True)}
        name = {v: d["name"] for v, d in g.nodes(data=True)}
        edges = {frozenset((name[a], name[b])): d for a, b, d in g.edges(data=True)}
        views.append((what, nodes, edges, g.number_of_edges()))
    for what, g in (("igraph Read_GraphML", igraph.Graph.Read_GraphML(graphml)),
                    ("igraph Read_GML", igraph.Graph.Read_GML(gml))):
        nodes = {v["name"]: v.attributes() for v in g.vs}
        edges = {frozenset((g.vs[e.source]["name"], g.vs[e.target]["name"])): e.attributes()
                 for e in g.es}
        views.append((what, nodes, edges, g.ecount()))
    return views


def check_fit(binary, folder, edges, graphml, gml, mtx):
    ref = nx.read_edgelist(edges, delimiter="\t", comments="#")
    want_edges = {frozenset(e) for e in ref.edges()}
    members = {}
    for line in list(open(folder + "/memberships.tsv"))[1:]:
        node, comm, s = line.rstrip("\n").split("\t")
        members.setdefault(node, {})[int(comm)] = float(s)
    comms = [int(l.split("\t")[0]) for l in list(open(folder + "/communities.tsv"))[1:]]
    links = json.load(open_show(binary, folder, "--links"))
    link = {frozenset((e["a"], e["b"])): e for e in links["edges"]}

    # the matrix, and show --node for every node (all positive strengths, %.17g)
    base = mtx[:-4] if mtx.endswith(".mtx") else mtx
    rows = [unescape_tsv(l.rstrip("\n")).decode() for l in open(base + ".rows.txt")]
    cols = [int(l) for l in open(base + ".cols.txt")]
    M = scipy.io.mmread(mtx).tocsr()
    k = json.load(open(folder + "/run.json"))["parameters"]["k"]
    report(M.shape == (len(ref), k) and len(rows) == len(ref) and cols == list(range(k)),
           "mmread: %d x %d (nodes x k), rows and cols files name them" % M.shape)
    report(set(rows) == set(ref.nodes()), "mmread: the rows file holds the graph's nodes")
    nnz = 0
    exact = True
    for i, name in enumerate(rows):
        node = json.load(open_show(binary, folder, "--node", name))
        nnz += node["total"]
        for a in node["affiliations"]:
            exact &= M[i, a["community"]] == a["strength"]
    report(M.nnz == nnz, "mmread: %d nonzeros, every positive strength of show --node" % M.nnz)
    report(exact, "mmread: each equals show --node's strength to the last bit (%.17g both)")
    row = {name: i for i, name in enumerate(rows)}
    ok = all(abs(M[row[n], c] - s) <= 5e-6 * s for n in members for c, s in members[n].items())
    report(ok, "mmread: memberships.tsv's strengths are entries of the matrix (%.6g there)")

    for what, nodes, got_edges, ecount in readers(graphml, gml):
        report(set(nodes) == set(ref.nodes()), what + ": the graph's nodes")
        report(set(got_edges) == want_edges and ecount == len(want_edges),
               what + ": the graph's %d edges, each once" % len(want_edges))
        ok_c = ok_s = ok_n = ok_order = ok_cols = True
        for name, d in nodes.items():
            text = d.get("communities") or ""  # networkx drops an empty <data>
            listed = [int(c) for c in text.split(";")] if text else []
            want = members.get(name, {})
            ok_c &= sorted(listed) == sorted(want)
            ok_n &= int(d["ncommunities"]) == len(want)
            ok_s &= int(d["strongest"]) == (listed[0] if listed else -1)
            strengths = [M[row[name], c] for c in listed]
            ok_order &= all(a >= b for a, b in zip(strengths, strengths[1:]))
            cols_here = sorted(int(key[8:]) for key in d if key.startswith("strength") and key[8:].isdigit())
            ok_cols &= cols_here == sorted(comms)
            ok_cols &= all(math.isclose(float(d["strength%d" % c]), M[row[name], c], rel_tol=1e-13,
                                        abs_tol=0) for c in comms)
        report(ok_c, what + ": communities are memberships.tsv's")
        report(ok_n, what + ": ncommunities counts them")
        report(ok_order and ok_s, what + ": strongest first, and strongest is the first (-1 for none)")
        report(ok_cols, what + ": one strengthC per community of communities.tsv, the matrix's value "
               "(igraph writes 15 digits)")
        ok_p = ok_e = True
        for e, d in got_edges.items():
            want = link[e]
            ok_p &= math.isclose(float(d["probability"]), want["prob"], rel_tol=1e-13)
            c = -1 if want["explained_by"] is None else want["explained_by"]
            ok_e &= int(d["community"]) == c and int(d["explained"]) == (c >= 0)
        report(ok_p, what + ": edge probability is show --links' (1 - exp(-(F_a.F_b + qeps)))")
        report(ok_e, what + ": explained and community are show --links' explained_by")


def open_show(binary, folder, *args):
    out = subprocess.run([binary, "show", folder, *args, "--json"], check=True,
                         stdout=subprocess.PIPE).stdout
    import io
    return io.StringIO(out.decode())


def check_names(rawnames, graphml, gml):
    raw = [unescape_tsv(l.rstrip("\n")) for l in open(rawnames, encoding="utf-8",
                                                      errors="surrogateescape")]
    text = open(gml, "rb").read()
    report(all(c < 0x80 for c in text), "gml: the file is ASCII")
    report(all(c >= 0x20 or c in (9, 10) for c in open(graphml, "rb").read()),
           "graphml: no control byte but TAB and newline")
    for what, nodes, _, _ in readers(graphml, gml):
        want = {escape(b, what.lower().endswith("_gml")) for b in raw}
        report(set(nodes) == want, what + ": %d hostile names read back as export_name() "
               "escapes them%s" % (len(want), "" if set(nodes) == want else
                                   " (differ: %r)" % sorted(set(nodes) ^ want)[:6]))
        report(all(d["label"] == n for n, d in nodes.items()), what + ": label is the name")


if sys.argv[1] == "fit":
    check_fit(*sys.argv[2:8])
else:
    check_names(*sys.argv[2:5])
sys.exit(1 if bad else 0)
