#!/usr/bin/env python3
# Best-match Jaccard of each planted community by size: for every community of
# TRUTH, the largest Jaccard index with any community of FOUND; printed by size
# bin (count, mean, share >= 0.5), with the found sizes. Where a fit loses
# against a planted cover: small communities without a column, or large ones
# in pieces (DEVELOPERS.md, "The merge move at scale").
# usage: best_match.py truth.tsv memberships.tsv   (node<TAB>community first)
import sys, collections
def load(p):
    c = collections.defaultdict(set)
    with open(p) as f:
        next(f)
        for line in f:
            a = line.split('\t'); c[a[1]].add(a[0])
    return c
T = load(sys.argv[1]); F = load(sys.argv[2])
node_f = collections.defaultdict(list)
for c, s in F.items():
    for u in s: node_f[u].append(c)
bins = [(20,40),(40,80),(80,160),(160,400),(400,1000),(1000,3000)]
res = collections.defaultdict(list)
for t, s in T.items():
    cnt = collections.Counter()
    for u in s:
        for c in node_f.get(u, ()): cnt[c] += 1
    best = 0.0
    for c, i in cnt.items():
        j = i / (len(s) + len(F[c]) - i)
        best = max(best, j)
    for lo, hi in bins:
        if lo <= len(s) < hi: res[(lo,hi)].append(best)
print("planted size bin: count, mean best Jaccard, share >= 0.5")
for b in bins:
    v = res[b]
    if v: print(b, len(v), round(sum(v)/len(v),3), round(sum(x>=0.5 for x in v)/len(v),3))
sz = sorted(len(s) for s in F.values())
print("found sizes: k", len(sz), "median", sz[len(sz)//2], "p90", sz[int(len(sz)*.9)], "max", sz[-1], "covered", len(node_f))
