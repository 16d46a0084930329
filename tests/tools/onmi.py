#!/usr/bin/python3
"""Overlapping NMI, max form (McDaid, Greene & Hurley, "Normalized mutual
information to evaluate overlapping community finding algorithms",
arXiv:1110.2515, 2011), written from the paper for the tests: an
independent check of the scores coterie reports. It shares no code with
src/score_onmi.c.

usage: onmi.py TRUTH FOUND   -> prints the score
Files: node<TAB>community lines ('#' lines, blank lines and a first line
'node<TAB>community' skipped; columns past the second ignored). Nodes are
those in either file, as coterie compare scores them.
"""
import math
import sys
from collections import defaultdict


def read(path):
    comms = defaultdict(set)
    with open(path, encoding="utf-8", errors="surrogateescape") as f:
        for i, line in enumerate(f):
            if line.startswith("#") or not line.strip():
                continue
            a = line.rstrip("\n").split("\t")
            if i == 0 and a[:2] == ["node", "community"]:
                continue
            comms[a[1]].add(a[0])
    return [c for c in comms.values() if c]


def h(w, n):
    return 0.0 if w <= 0 else -w * math.log2(w / n)


def entropy(c, n):
    return h(len(c), n) + h(n - len(c), n)


def conditional(X, Y, n):
    """sum over X_i of min over Y_j (LFK's constraint) of H(X_i | Y_j)."""
    total = 0.0
    for x in X:
        best = entropy(x, n)
        for y in Y:
            d = len(x & y)
            b = len(x) - d
            c = len(y) - d
            a = n - d - b - c
            if h(a, n) + h(d, n) <= h(b, n) + h(c, n):
                continue  # the constraint of Lancichinetti et al. 2009
            hxy = h(a, n) + h(b, n) + h(c, n) + h(d, n)
            best = min(best, hxy - entropy(y, n))
        total += best
    return total


def onmi_max(X, Y):
    n = len(set().union(*X, *Y))
    hx = sum(entropy(x, n) for x in X)
    hy = sum(entropy(y, n) for y in Y)
    if max(hx, hy) == 0:
        return 1.0
    mi = 0.5 * (hx - conditional(X, Y, n) + hy - conditional(Y, X, n))
    return mi / max(hx, hy)


if __name__ == "__main__":
    print("%.6f" % onmi_max(read(sys.argv[1]), read(sys.argv[2])))
