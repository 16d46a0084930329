#!/usr/bin/python3
# The AGM block test of fit_merge.c, by hand: for pairs of columns of a fit, one block
# against two overlapping ones (noisy-OR on A n B, pairs between at the background),
# rates by grid search. usage: block_gain.py EDGES MEMBERSHIPS BG A,B [A,B ...]
# (DEVELOPERS.md, "The AGM's block test for overlapping columns")
import sys, collections, math
def load(f):
    c = collections.defaultdict(set)
    for i, l in enumerate(open(f)):
        if i == 0: continue
        p = l.split('\t'); c[p[1].strip()].add(p[0])
    return c
adj = collections.defaultdict(set)
for l in open(sys.argv[1]):
    if l.startswith('#'): continue
    a, b = l.split()[:2]; adj[a].add(b); adj[b].add(a)
F = load(sys.argv[2]); bg = float(sys.argv[3])
def e(S, T=None):
    if T is None: return sum(1 for u in S for v in adj[u] if v in S)//2
    return sum(1 for u in S for v in adj[u] if v in T)
def ll(E, N, p): return E*math.log(p) + (N-E)*math.log1p(-p) if N else 0.0
for pair in sys.argv[4:]:
    a, b = pair.split(','); A, B = F[a], F[b]; I = A & B; AX = A - B; BX = B - A
    nI, na, nb = len(I), len(AX), len(BX)
    eII = e(I); eAA = e(AX) + e(AX, I); eBB = e(BX) + e(BX, I); eX = e(AX, BX)
    NII = nI*(nI-1)/2; NAA = na*(na-1)/2 + na*nI; NBB = nb*(nb-1)/2 + nb*nI; NX = na*nb
    # option 1: ML pA, pB by a simple grid (noisy-or on I x I)
    best = None
    for i in range(1, 200):
        pA = i/2000
        for j in range(1, 200):
            pB = j/2000
            l = ll(eII, NII, 1-(1-pA)*(1-pB)*(1-bg)) + ll(eAA, NAA, 1-(1-pA)*(1-bg)) + ll(eBB, NBB, 1-(1-pB)*(1-bg)) + ll(eX, NX, bg)
            if best is None or l > best[0]: best = (l, pA, pB)
    Et = eII+eAA+eBB+eX; Nt = NII+NAA+NBB+NX; pU = Et/Nt
    l2 = ll(Et, Nt, 1-(1-pU)*(1-bg))
    print(pair, "I %d A\\B %d B\\A %d | dII %.4f dAA %.4f dBB %.4f dX %.4f | two: %.1f (pA %.4f pB %.4f) one: %.1f (pU %.4f) one-two %.1f" % (nI, na, nb, eII/NII, eAA/NAA, eBB/NBB, eX/NX, best[0], best[1], best[2], l2, pU, l2-best[0]))
