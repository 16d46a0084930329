import json, os, subprocess, math, itertools, collections
import numpy as np
from scipy.optimize import minimize

import os
R = os.environ.get("COTERIE_BIN", os.path.join(os.path.dirname(os.path.abspath(__file__)), "../../../coterie"))
D = os.path.join(os.path.dirname(os.path.abspath(__file__)), "../../data")
OUT = os.environ.get("EPS_OUT", "/tmp/eps/runs")
os.makedirs(OUT, exist_ok=True)


def graph(ds):
    p = f"{D}/{ds}/edges.tsv"
    E = []
    nodes = {}
    for line in open(p):
        if not line.strip() or line[0] in "#%":
            continue
        a, b = line.rstrip("\n").split("\t")[:2]
        E.append((a, b))
        nodes.setdefault(a, len(nodes)); nodes.setdefault(b, len(nodes))
    return p, nodes, E


_G = {}
def G(ds):
    if ds not in _G:
        p, nodes, E = graph(ds)
        n = len(nodes)
        Es = set()
        for a, b in E:
            u, v = nodes[a], nodes[b]
            if u != v:
                Es.add((min(u, v), max(u, v)))
        _G[ds] = dict(path=p, nodes=nodes, n=n, E=Es, m=len(Es), dens=2 * len(Es) / (n * (n - 1)))
    return _G[ds]


def fit(ds, k, eps, seed, check=None, refine=False, tag=""):
    name = f"{ds}_k{k}_e{eps:.3e}_s{seed}" + (f"_c{check}" if check else "") + ("_r" if refine else "") + tag
    d = f"{OUT}/{name}"
    if not os.path.exists(f"{d}/run.json"):
        cmd = [R, "fit", G(ds)["path"], "-k", str(k), "-o", d, "-j", "1", "-q", "--seed", str(seed),
               "--epsilon", repr(eps)]
        if check:
            cmd += ["--check-links", str(check)]
        if refine:
            cmd += ["--refine"]
        subprocess.run(cmd, check=True, timeout=120)
    return d, json.load(open(f"{d}/run.json"))


_C = {}
def onmi(ds, d, truth="truth.tsv"):
    key = (ds, d, truth)
    if key not in _C:
        out = subprocess.run([R, "compare", f"{D}/{ds}/{truth}", d, "--json"], check=True,
                             capture_output=True, text=True).stdout
        j = json.loads(out)
        _C[key] = j["onmi_max"]
    return _C[key]


def read_cover(ds, path):
    """path: result dir or cover file; returns list of frozensets per node index"""
    g = G(ds)
    f = f"{path}/memberships.tsv" if os.path.isdir(path) else path
    mem = [set() for _ in range(g["n"])]
    for i, line in enumerate(open(f)):
        parts = line.rstrip("\n").split("\t")
        if parts[0] == "node" and i == 0:
            continue
        mem[g["nodes"][parts[0]]].add(parts[1])
    return [frozenset(s) for s in mem]


def write_cover(ds, mem, path):
    g = G(ds)
    inv = {i: a for a, i in g["nodes"].items()}
    with open(path, "w") as f:
        for u, s in enumerate(mem):
            for c in sorted(s):
                f.write(f"{inv[u]}\t{c}\n")


def signatures(ds, mem):
    g = G(ds)
    n = g["n"]
    cnt = collections.Counter()  # (S) -> [edges, nonedges]
    E = g["E"]
    ecount = collections.Counter(); ncount = collections.Counter()
    for u in range(n):
        mu = mem[u]
        for v in range(u + 1, n):
            S = mu & mem[v]
            if (u, v) in E:
                ecount[S] += 1
            else:
                ncount[S] += 1
    return ecount, ncount


def bg_share(ds, mem):
    e, nn = signatures(ds, mem)
    E0, N0 = e[frozenset()], nn[frozenset()]
    return E0 / (E0 + N0) if E0 + N0 else float("nan"), E0, N0


def log1mexp(x):
    x = np.maximum(x, 1e-300)
    return np.where(x > 0.693, np.log1p(-np.exp(-x)), np.log(-np.expm1(-x)))


def agm_ll(ds, mem, eps=None):
    """AGM loglik of the cover with ML p_c; with eps None, eps is ML too. Returns (ll, eps)."""
    e, nn = signatures(ds, mem)
    comms = sorted(set().union(*mem))
    ci = {c: i for i, c in enumerate(comms)}
    keys = sorted(set(e) | set(nn), key=lambda s: sorted(s))
    K = len(comms)
    A = np.zeros((len(keys), K))
    Ev = np.array([e[s] for s in keys], float)
    Nv = np.array([nn[s] for s in keys], float)
    for i, s in enumerate(keys):
        for c in s:
            A[i, ci[c]] = 1
    fixed = eps is not None
    qe0 = -math.log1p(-eps) if fixed else -math.log1p(-G(ds)["dens"])

    def f(x):
        q = x[:K]; qe = qe0 if fixed else x[K]
        t = A @ q + qe
        ll = np.sum(Ev * log1mexp(t)) - np.sum(Nv * t)
        w = Ev * np.exp(-t) / np.maximum(-np.expm1(-t), 1e-300) - Nv  # d ll / dt
        gq = A.T @ w
        g = gq if fixed else np.append(gq, w.sum())
        return -ll, -g
    x0 = np.full(K + (0 if fixed else 1), 0.5)
    if not fixed:
        x0[K] = qe0
    b = [(0, 40)] * K + ([] if fixed else [(1e-12, 40)])
    r = minimize(f, x0, jac=True, method="L-BFGS-B", bounds=b, options=dict(maxiter=2000, ftol=1e-13, gtol=1e-9))
    qe = qe0 if fixed else r.x[K]
    return -r.fun, -math.expm1(-qe)


def covered(mem):
    return sum(1 for s in mem if s)


def grid(ds):
    d = G(ds)["dens"]
    return [d * f for f in (1, 0.3, 0.1, 0.03, 0.01, 0.001)] + [1e-6]


def get_F(ds, d):
    """all strengths (above the fit's floor) from `show --node`; cached in d/F.json"""
    fn = f"{d}/F.json"
    if os.path.exists(fn):
        return {int(k): {int(c): v for c, v in r.items()} for k, r in json.load(open(fn)).items()}
    g = G(ds)
    F = {}
    for name, u in g["nodes"].items():
        j = json.loads(subprocess.run([R, "show", d, "--node", name, "--json"], check=True,
                                      capture_output=True, text=True).stdout)
        F[u] = {a["community"]: a["strength"] for a in j["affiliations"]}
    json.dump(F, open(fn, "w"))
    return F


def degs(ds):
    g = G(ds)
    dg = [0] * g["n"]
    for u, v in g["E"]:
        dg[u] += 1; dg[v] += 1
    return dg


def threshold(ds, F, delta, min_links=2.0):
    """delta: scalar or dict community -> threshold"""
    dg = degs(ds)
    col = collections.defaultdict(float)
    for u, r in F.items():
        for c, v in r.items():
            col[c] += v
    mem = []
    for u in range(G(ds)["n"]):
        s = set()
        for c, v in F.get(u, {}).items():
            t = delta[c] if isinstance(delta, dict) else delta
            if v >= t and v * col[c] >= min(min_links, dg[u] / 2):
                s.add(str(c))
        mem.append(frozenset(s))
    return mem


def onmi_cover(ds, mem, tmp="/tmp/eps/tmpcover.tsv"):
    write_cover(ds, mem, tmp)
    out = subprocess.run([R, "compare", f"{D}/{ds}/truth.tsv", tmp, "--json"], check=True,
                         capture_output=True, text=True).stdout
    return json.loads(out)["onmi_max"]
