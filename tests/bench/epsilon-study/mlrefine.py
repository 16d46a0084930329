import sys, json
from lib import *

def fit_q(ds, M, fixed_eps=None):
    """ML q_c and qeps for binary membership matrix M (n x K); returns q, qeps, ll"""
    g = G(ds); n = g["n"]
    mem = [frozenset(str(c) for c in np.nonzero(M[u])[0]) for u in range(n)]
    K = M.shape[1]
    e, nn = signatures(ds, mem)
    keys = list(set(e) | set(nn))
    A = np.zeros((len(keys), K)); Ev = np.array([e[s] for s in keys], float); Nv = np.array([nn[s] for s in keys], float)
    for i, s in enumerate(keys):
        for c in s: A[i, int(c)] = 1
    def f(x):
        q = x[:K]; qe = x[K] if fixed_eps is None else -math.log1p(-fixed_eps)
        t = A @ q + qe
        ll = np.sum(Ev * log1mexp(t)) - np.sum(Nv * t)
        w = Ev * np.exp(-t) / np.maximum(-np.expm1(-t), 1e-300) - Nv
        gr = A.T @ w
        return -ll, -(np.append(gr, w.sum()) if fixed_eps is None else gr)
    x0 = np.full(K + (fixed_eps is None), 0.5); 
    if fixed_eps is None: x0[K] = 0.03
    r = minimize(f, x0, jac=True, method="L-BFGS-B", bounds=[(0, 40)] * K + ([(1e-12, 40)] if fixed_eps is None else []), options=dict(maxiter=3000, ftol=1e-14, gtol=1e-10))
    q = r.x[:K]; qe = r.x[K] if fixed_eps is None else -math.log1p(-fixed_eps)
    return q, qe, -r.fun

def refine(ds, mem0, rounds=30, fixed_eps=None, allow_add=True):
    g = G(ds); n = g["n"]
    comms = sorted(set().union(*mem0)); K = len(comms)
    M = np.zeros((n, K), bool)
    for u, s in enumerate(mem0):
        for c in s: M[u, comms.index(c)] = True
    Adj = np.zeros((n, n), bool)
    for u, v in g["E"]: Adj[u, v] = Adj[v, u] = True
    q, qe, ll = fit_q(ds, M, fixed_eps)
    for it in range(rounds):
        moves = 0
        for u in range(n):
            for c in range(K):
                if not allow_add and not M[u, c]: continue
                # pair q for u with all v
                Q = qe + (M & M[u]) @ q  # n
                others = np.arange(n) != u
                inc = M[:, c] & others
                sign = -1 if M[u, c] else 1
                Qn = Q.copy(); Qn[inc] += sign * q[c]
                def term(Qx):
                    ed = Adj[u] & others; ne = ~Adj[u] & others
                    return np.sum(log1mexp(Qx[ed])) - np.sum(Qx[ne])
                d = term(Qn) - term(Q)
                if d > 1e-9:
                    M[u, c] = not M[u, c]; moves += 1
        q, qe, ll2 = fit_q(ds, M, fixed_eps)
        ll = ll2
        if moves == 0: break
    mem = [frozenset(str(comms[c]) for c in np.nonzero(M[u])[0]) for u in range(n)]
    return mem, -math.expm1(-qe), ll, it + 1
