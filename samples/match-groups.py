#!/usr/bin/env python3
"""Hold a coterie result for the town sample against the town's groups.

    python3 samples/match-groups.py town-out [samples/town]

Reads town-out/memberships.tsv and town-out/checkpoint.cot, and from the
sample folder groups.tsv and ties.tsv. Prints:
  - for each group, the found community sharing the most members with it
    (by Jaccard index, |A & B| / |A | B|) and how many members they share;
  - residents by number of groups against number of communities found;
  - where the town's connectors (residents in four groups) were placed;
  - the kinds of tie (group, household, acquaintance) among the ties the
    fitted model gives the lowest probability 1 - exp(-F_u . F_v).
A rough check for reading the sample, not a score: `coterie compare`, when
it exists, is the tool for scores. Standard library only.
"""

import collections
import math
import os
import struct
import sys


def unescape(s):
    """memberships.tsv writes TAB, LF, CR and backslash as \\t \\n \\r \\\\."""
    out, i = [], 0
    while i < len(s):
        if s[i] == "\\" and i + 1 < len(s):
            out.append({"t": "\t", "n": "\n", "r": "\r", "\\": "\\"}.get(s[i + 1], s[i + 1]))
            i += 2
        else:
            out.append(s[i])
            i += 1
    return "".join(out)


def read_checkpoint(path):
    """Names and strength rows from checkpoint.cot (layout version 1, as in
    coterie-files(5)). Returns (names, rows) with rows[u] = {community: F}."""
    data = open(path, "rb").read()
    if data[:8] != b"COTERIE\x1a":
        sys.exit("match-groups: %s is not a coterie checkpoint" % path)
    version = struct.unpack_from("<I", data, 8)[0]
    if version != 1:
        sys.exit("match-groups: %s has layout version %d; this script reads 1" % (path, version))
    pos, sections = 24, {}
    while pos < len(data) - 8:
        tag = data[pos:pos + 4].decode("ascii")
        (length,) = struct.unpack_from("<Q", data, pos + 4)
        sections[tag] = data[pos + 12:pos + 12 + length]
        pos += 12 + length
    g = sections["GRPH"]
    n, _m = struct.unpack_from("<IQ", g, 0)
    p, names = 12, []
    for _ in range(n):
        (ln,) = struct.unpack_from("<I", g, p)
        names.append(g[p + 4:p + 4 + ln].decode("utf-8", "backslashreplace"))
        p += 4 + ln
    s = sections["STRN"]
    n2, _k, _nnz = struct.unpack_from("<IIQ", s, 0)
    offs = struct.unpack_from("<%dQ" % (n2 + 1), s, 16)
    base = 16 + 8 * (n2 + 1)
    rows = []
    for u in range(n2):
        row = {}
        for e in range(offs[u], offs[u + 1]):
            c, f = struct.unpack_from("<Id", s, base + 12 * e)
            row[c] = f
        rows.append(row)
    return names, rows


def main():
    if len(sys.argv) not in (2, 3):
        sys.exit(__doc__.strip().splitlines()[2].strip())
    out = sys.argv[1]
    town = sys.argv[2] if len(sys.argv) == 3 else os.path.join(os.path.dirname(
        os.path.abspath(__file__)), "town")

    groups = collections.defaultdict(set)
    groups_of = collections.defaultdict(set)
    with open(os.path.join(town, "groups.tsv"), encoding="utf-8") as f:
        for line in f:
            name, group = line.rstrip("\n").split("\t")
            groups[group].add(name)
            groups_of[name].add(group)
    found = collections.defaultdict(set)
    found_of = collections.defaultdict(set)
    with open(os.path.join(out, "memberships.tsv"), encoding="utf-8") as f:
        next(f)
        for line in f:
            name, comm, _strength = line.rstrip("\n").split("\t")
            name = unescape(name)
            found[comm].add(name)
            found_of[name].add(comm)
    ties = []
    with open(os.path.join(town, "ties.tsv"), encoding="utf-8") as f:
        for line in f:
            if not line.startswith("#"):
                ties.append(tuple(line.rstrip("\n").split("\t")))
    residents = {a for a, _, _ in ties} | {b for _, b, _ in ties}

    def jaccard(a, b):
        return len(a & b) / len(a | b)

    print("group                    size  community  size  shared  jaccard")
    good = 0
    for g, mem in sorted(groups.items(), key=lambda kv: (-len(kv[1]), kv[0])):
        if found:
            c = max(found, key=lambda c: (jaccard(mem, found[c]), -int(c)))
            j = jaccard(mem, found[c])
            print("%-24s %4d  %9s  %4d  %6d  %7.2f" % (g, len(mem), c, len(found[c]),
                                                      len(mem & found[c]), j))
            good += j >= 0.8
    print("groups matched by a community with jaccard >= 0.8: %d of %d" % (good, len(groups)))
    print("communities sharing no member with any group: %d of %d (sizes %s)" % (
        sum(1 for c in found if not any(found[c] & m for m in groups.values())), len(found),
        ", ".join(str(len(found[c])) for c in found
                  if not any(found[c] & m for m in groups.values())) or "-"))

    print("\nresidents by groups (rows) and communities found (columns 0 1 2 3 4 5+):")
    table = collections.Counter((len(groups_of[r]), min(len(found_of[r]), 5)) for r in residents)
    for t in range(5):
        print("  in %d group%s: %s" % (t, " " if t == 1 else "s", " ".join(
            "%4d" % table[(t, k)] for k in range(6))))
    for r in sorted(r for r in residents if len(groups_of[r]) >= 4):
        print("connector %s: groups %s; communities %s" % (
            r, ", ".join(sorted(groups_of[r])), ", ".join(sorted(found_of[r], key=int)) or "none"))

    ck = os.path.join(out, "checkpoint.cot")
    if not os.path.exists(ck):
        return
    names, rows = read_checkpoint(ck)
    ids = {n: i for i, n in enumerate(names)}
    probs = []
    for a, b, kind in ties:
        ra, rb = rows[ids[a]], rows[ids[b]]
        x = sum(f * rb[c] for c, f in ra.items() if c in rb)
        probs.append((-math.expm1(-x), a, b, kind))
    probs.sort()
    everywhere = collections.Counter(k for _, _, _, k in probs)
    print("\nties in all: %s" % ", ".join("%d %s" % (everywhere[k], k)
                                         for k in ("group", "household", "acquaintance")))
    for top in (50, 100, 200):
        kinds = collections.Counter(k for _, _, _, k in probs[:top])
        print("the %d ties the model explains least: %s" % (top, ", ".join(
            "%d %s" % (kinds[k], k) for k in ("group", "household", "acquaintance"))))


if __name__ == "__main__":
    main()
