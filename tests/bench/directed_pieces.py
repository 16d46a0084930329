#!/usr/bin/python3
"""The columns of a directed fit lying inside each of the six largest planted
communities (at delta, either side), their overlaps and the density between
A \\ B and B \\ A. usage: directed_pieces.py GRAPHDIR FITDIR (FITDIR/F.mtx from
`coterie export FITDIR --matrix FITDIR/F.mtx`)."""
import sys, json, collections, math
import os
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), '..', 'tools'))
import onmi
gdir, fdir = sys.argv[1], sys.argv[2]
delta = json.load(open(fdir + '/run.json'))['parameters']['delta']
rows = [l.rstrip('\n') for l in open(fdir + '/F.rows.txt')]
lines = open(fdir + '/F.mtx').read().split('\n'); i = 0
while lines[i].startswith('%'): i += 1
i += 1
cols = collections.defaultdict(set)
for l in lines[i:]:
    if not l.strip(): continue
    r, c, v = l.split(); name = rows[int(r)-1]
    if float(v) >= delta: cols[int(c)-1].add(name.rsplit(' [', 1)[0])
adj = collections.defaultdict(set)
for l in open(gdir + '/edges.tsv'):
    a = l.split()
    if len(a) < 2 or a[0] == 'source': continue
    adj[a[0]].add(a[1]); adj[a[1]].add(a[0])
T = onmi.read(gdir + '/truth.tsv')
def edges(A, B=None):
    if B is None: return sum(len(adj[u] & A) for u in A) / 2
    return sum(len(adj[u] & B) for u in A)
for t in sorted(T, key=len, reverse=True)[:6]:
    ps = [(c, x) for c, x in cols.items() if len(x & t) >= 0.6 * len(x)]
    print('planted size %d density %.4f; pieces:' % (len(t), edges(t) / (len(t)*(len(t)-1)/2)))
    for c, x in ps:
        print('   col %d size %d in-t %d dens %.4f' % (c, len(x), len(x & t), edges(x) / (len(x)*(len(x)-1)/2)))
    for a in range(len(ps)):
        for b in range(a+1, len(ps)):
            A, B = ps[a][1], ps[b][1]
            AB, BA = A - B, B - A
            print('     %d-%d overlap %d  |A-B| %d |B-A| %d cross dens %.4f' % (ps[a][0], ps[b][0], len(A & B), len(AB), len(BA), edges(AB, BA) / max(1, len(AB)*len(BA))))
