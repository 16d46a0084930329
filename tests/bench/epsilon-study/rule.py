from lib import *
def rule_mean(ds, F, eps, min_links=2.0, iters=50):
    """u in c iff F[u][c] * mean_{v in c} F[v][c] >= qeps (homogeneous case: F >= delta), plus link rule"""
    qe = -math.log1p(-eps); delta = math.sqrt(qe)
    dg = degs(ds); n = G(ds)["n"]
    col = collections.defaultdict(float)
    for u, r in F.items():
        for c, v in r.items(): col[c] += v
    cs = set(c for r in F.values() for c in r)
    mem = {c: {u for u in F if F[u].get(c, 0) >= delta} for c in cs}
    for _ in range(iters):
        new = {}
        for c in cs:
            if not mem[c]:
                new[c] = set(); continue
            mc = np.mean([F[u][c] for u in mem[c]])
            new[c] = {u for u in F if F[u].get(c, 0) * mc >= qe and F[u][c] * col[c] >= min(min_links, dg[u] / 2)}
        if new == mem: break
        mem = new
    out = [set() for _ in range(n)]
    for c, s in mem.items():
        for u in s: out[u].add(str(c))
    return [frozenset(s) for s in out]
