#!/usr/bin/python3
"""Membership rules of a directed fit, scored offline on its strengths.

usage: directed_rules.py GRAPHDIR FITDIR [x]
GRAPHDIR: coterie simulate --directed output (edges.tsv, truth.tsv); FITDIR: a
fit --directed folder with `coterie export FITDIR --matrix FITDIR/F.mtx` done.
Prints the max-form ONMI (tests/tools/onmi.py) of each rule; with a third
argument also how found columns sit in planted communities (DEVELOPERS.md,
"The merge move", directed models)."""
import sys, json, collections
import os
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'tools'))
import onmi
gdir, fdir = sys.argv[1], sys.argv[2]
run = json.load(open(fdir + '/run.json'))
delta = run['parameters']['delta']
rows = [l.rstrip('\n') for l in open(fdir + '/F.rows.txt')]
F = collections.defaultdict(dict)  # name -> {c: (f,h)}
lines = open(fdir + '/F.mtx').read().split('\n')
i = 0
while lines[i].startswith('%'): i += 1
n, k, nnz = map(int, lines[i].split()); i += 1
S = [[0.0]*k, [0.0]*k]
ent = []
for l in lines[i:]:
    if not l.strip(): continue
    r, c, v = l.split(); r = int(r)-1; c = int(c)-1; v = float(v)
    name = rows[r]
    side = 0 if name.endswith(' [out]') else 1
    base = name[:-6] if side == 0 else name[:-5]
    ent.append((base, side, c, v))
    S[side][c] += v
outd = collections.Counter(); ind = collections.Counter()
for l in open(gdir + '/edges.tsv'):
    a = l.split()
    if len(a) < 2 or a[0] == 'source': continue
    outd[a[0]] += 1; ind[a[1]] += 1
st = collections.defaultdict(lambda: [0.0, 0.0])
for base, side, c, v in ent:
    st[(base, c)][side] = v
def need(d, ml=2.0): return min(ml, 0.5*d)
truth = onmi.read(gdir + '/truth.tsv')
def score(rule):
    comms = collections.defaultdict(set)
    for (u, c), (f, h) in st.items():
        if rule(u, c, f, h): comms[c].add(u)
    X = [x for x in comms.values() if x]
    return onmi.onmi_max(truth, X), sum(len(x) for x in X), X
def s_ok(u, c, f, h): return f >= delta and f*S[1][c] >= need(outd[u])
def r_ok(u, c, f, h): return h >= delta and h*S[0][c] >= need(ind[u])
rules = {
 'current(either)': lambda u,c,f,h: s_ok(u,c,f,h) or r_ok(u,c,f,h),
 'both': lambda u,c,f,h: s_ok(u,c,f,h) and r_ok(u,c,f,h),
 'summed': lambda u,c,f,h: max(f,h) >= delta and f*S[1][c]+h*S[0][c] >= need(outd[u]+ind[u]),
 'either+other>=delta': lambda u,c,f,h: (s_ok(u,c,f,h) and h>=delta) or (r_ok(u,c,f,h) and f>=delta),
 'summed ml3': lambda u,c,f,h: max(f,h) >= delta and f*S[1][c]+h*S[0][c] >= need(outd[u]+ind[u],3),
 'summed ml4': lambda u,c,f,h: max(f,h) >= delta and f*S[1][c]+h*S[0][c] >= need(outd[u]+ind[u],4),
 'R4 one-sided needs 4': lambda u,c,f,h: (s_ok(u,c,f,h) and (h>=delta or f*S[1][c] >= need(outd[u],4))) or (r_ok(u,c,f,h) and (f>=delta or h*S[0][c] >= need(ind[u],4))),
 'R5 one-sided needs 8': lambda u,c,f,h: (s_ok(u,c,f,h) and (h>=delta or f*S[1][c] >= need(outd[u],8))) or (r_ok(u,c,f,h) and (f>=delta or h*S[0][c] >= need(ind[u],8))),
 'R6 one-sided needs deg/2': lambda u,c,f,h: (s_ok(u,c,f,h) and (h>=delta or f*S[1][c] >= 0.5*outd[u])) or (r_ok(u,c,f,h) and (f>=delta or h*S[0][c] >= 0.5*ind[u])),
 'summed both>=delta': lambda u,c,f,h: min(f,h) >= delta and f*S[1][c]+h*S[0][c] >= need(outd[u]+ind[u]),
}
anyc = collections.Counter(); bothc = collections.Counter()
for (u, c), (f, h) in st.items():
    if max(f, h) >= delta: anyc[c] += 1
    if min(f, h) >= delta: bothc[c] += 1
coh = {c: bothc[c] >= 0.5 * anyc[c] for c in anyc}
print('cohesive columns', sum(coh.values()), 'of', len(coh))
rules['R3 column rule'] = lambda u,c,f,h: (s_ok(u,c,f,h) or r_ok(u,c,f,h)) and (not coh.get(c) or min(f,h) >= delta)
res = {}
for name, r in rules.items():
    o, m, X = score(r); res[name] = X
    print('%-22s onmi %.4f  memberships %d comms %d' % (name, o, m, len(X)))
if len(sys.argv) > 3:
    X = res['current(either)']
    T = truth
    node2t = collections.defaultdict(list)
    for j, t in enumerate(T):
        for u in t: node2t[u].append(j)
    # for each found: best planted jaccard, and share in best planted
    pieces = collections.Counter(); merged = 0; junk = 0
    for x in X:
        cnt = collections.Counter(j for u in x for j in node2t[u])
        if not cnt: junk += 1; continue
        j, d = cnt.most_common(1)[0]
        jac = d / len(x | T[j])
        if d / len(x) >= 0.6:
            pieces[j] += 1
        else:
            merged += 1
    tsz = sorted(((len(t), pieces[j]) for j, t in enumerate(T)), reverse=True)
    print('found mostly inside one planted:', sum(pieces.values()), ' mixed (no planted >=60%):', merged, ' junk', junk)
    print('planted with 0 found:', sum(1 for s, p in tsz if p == 0), ' with 1:', sum(1 for s,p in tsz if p==1), ' with >=2:', sum(1 for s,p in tsz if p>=2))
    print('largest planted (size, found pieces):', tsz[:15])
    print('no-column planted sizes:', sorted([s for s,p in tsz if p==0])[:40])
