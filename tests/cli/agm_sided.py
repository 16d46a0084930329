"""The AGM log-likelihood and code length of a two-mode cover, from the
files alone: an independent transcription of the two-sided AGM that
coterie's starts are judged by (agm.h; Yang & Leskovec, ICDM 2012, with
pairs of a sender and a receiver only). A pair (u, v), u of the first
column's nodes and v of the second's, sharing the set S of communities is
linked with probability 1 - (1 - eps) prod_{c in S} (1 - p_c); the p_c are
the maximum-likelihood ones at eps (cyclic Newton steps on q_c =
-ln(1 - p_c), L concave in q); the code adds, for each community,
ln C(n_first, senders) + ln C(n_second, receivers) (Rissanen 1978).
usage: agm_sided.py EDGES MEMBERSHIPS EPSILON   prints: loglik code"""
import collections
import math
import sys

first, second, edges = [], [], set()
seen1, seen2 = set(), set()
for line in open(sys.argv[1]):
    if line.startswith("#") or not line.strip():
        continue
    a, b = line.split()[:2]
    if a not in seen1:
        seen1.add(a); first.append(a)
    if b not in seen2:
        seen2.add(b); second.append(b)
    edges.add((a, b))
send, recv = collections.defaultdict(set), collections.defaultdict(set)
for line in list(open(sys.argv[2]))[1:]:
    x = line.rstrip("\n").split("\t")
    (send if x[3] == "sending" else recv)[x[0]].add(x[1])
eps = float(sys.argv[3])
qeps = -math.log1p(-eps)
# the pairs by shared set: N_S pairs, e_S of them linked
N, E = collections.Counter(), collections.Counter()
for u in first:
    su = send.get(u, set())
    for v in second:
        s = frozenset(su & recv.get(v, set())) if su else frozenset()
        N[s] += 1
        if (u, v) in edges:
            E[s] += 1
comms = sorted(set().union(*N.keys())) if N else []
q = {c: 0.1 for c in comms}
def Q(s):
    return qeps + sum(q[c] for c in s)
def L():
    t = 0.0
    for s, n in N.items():
        x = Q(s)
        if E[s]:
            t += E[s] * math.log(-math.expm1(-x))
        t -= (n - E[s]) * x
    return t
for sweep in range(500):
    moved = 0.0
    for c in comms:
        sets = [s for s in N if c in s]
        for _ in range(50):  # Newton on q_c with halvings, q_c >= 1e-12
            g = h = 0.0
            for s in sets:
                x = Q(s); w = 1.0 / math.expm1(x)
                g += E[s] * w - (N[s] - E[s])
                h += E[s] * w * (w + 1.0)
            step = g / h if h > 0 else (1.0 if g > 0 else -q[c])
            new = min(max(q[c] + step, 1e-12), 30.0)
            before = L(); old = q[c]; q[c] = new
            while L() < before and abs(q[c] - old) > 1e-15:
                q[c] = old + (q[c] - old) / 2
            moved = max(moved, abs(q[c] - old) / max(q[c], 1e-12))
            if abs(q[c] - old) <= 1e-12 * max(q[c], 1e-12):
                break
    if moved < 1e-10:
        break
ll = L()
lnC = lambda n, k: math.lgamma(n + 1) - math.lgamma(k + 1) - math.lgamma(n - k + 1)
ns, nr = collections.Counter(), collections.Counter()
for u, cs in send.items():
    for c in cs:
        ns[c] += 1
for v, cs in recv.items():
    for c in cs:
        nr[c] += 1
code = -ll + sum(lnC(len(first), ns[c]) + lnC(len(second), nr[c]) for c in set(ns) | set(nr))
print("%.9f %.9f" % (ll, code))
