#!/usr/bin/env python3
"""Generate the bundled sample: the residents of Tollavan and their groups.

Tollavan is an invented river town. Its residents, their names and their
groups are made up here from small invented syllable lists; any likeness
to a real person, place or organisation is chance.

The edges come from an Affiliation Graph Model (Yang & Leskovec, ICDM 2012):
  - every group links each pair of its members with its own probability p;
  - residents share households of one to three people, and people in the
    same household are always linked (ties that cut across the groups);
  - any two residents are linked with a small background probability
    (acquaintances);
  - a resident left with no tie outside their household gets one
    acquaintance, so every resident appears in the edge list and no
    household is an island of its own.

Writes, next to this script:
  town/edges.tsv    name<TAB>name, one line per tie, sorted
  town/groups.tsv   name<TAB>group, a resident on as many lines as groups
  town/ties.tsv     name<TAB>name<TAB>kind, the same ties with what made
                    each one: group, household or acquaintance (the first
                    of these, in that order, when several did)

Run from the repository root:  python3 samples/make-town.py
Standard library only. The seed is fixed and only random.Random.random()
is used (its stream is the same on every Python 3 release; the helpers
that draw integers from it are written out below), so every run writes
the same bytes.
"""

import os
import random
import sys

SEED = 20240611
RESIDENTS = 320
BACKGROUND_EDGES = 200  # expected number of acquaintance ties

# (group, size, p): the probability that two members know each other
# through the group. Small groups that meet often are dense; the big
# loose ones are sparse.
GROUPS = [
    ("walking-group", 60, 0.18),
    ("allotment-society", 54, 0.20),
    ("parish-choir", 47, 0.24),
    ("harbour-rowing-club", 42, 0.26),
    ("library-friends", 37, 0.28),
    ("brass-band", 33, 0.32),
    ("fire-brigade", 29, 0.42),
    ("amateur-dramatics", 26, 0.40),
    ("football-eleven", 22, 0.50),
    ("quilting-circle", 19, 0.50),
    ("chess-club", 17, 0.55),
    ("harvest-fair-committee", 15, 0.60),
]

# How many residents sit in 4, 3 and 2 groups; the remaining group places
# go to residents in one group; everyone else is in none.
IN_FOUR = 6
IN_THREE = 42
IN_TWO = 92

FIRST_A = ["Al", "Bre", "Cor", "Da", "El", "Fen", "Gil", "Ha", "Ir", "Jo",
           "Ka", "Lé", "Mo", "Ne", "Or", "Pe", "Qui", "Ro", "Sa", "Te",
           "Ul", "Ve", "Wy", "Ys", "Zo", "Ane", "Bo", "Cé"]
FIRST_B = ["ra", "len", "mir", "dis", "na", "ric", "tha", "von", "sel",
           "bo", "wen", "ly", "ta", "rin", "dek", "ma", "sto", "vi"]
FIRST_END = ["", "", "", "a", "e", "y"]
SUR_A = ["Ash", "Brack", "Cold", "Dun", "Elder", "Fallow", "Gorse", "Hazel",
         "Iver", "Kettle", "Lark", "Marl", "Nettle", "Osk", "Pebble", "Quar",
         "Rush", "Sedge", "Thorn", "Umber", "Vell", "Wold", "Yarrow", "Brön",
         "Måle", "Tass", "Corv"]
SUR_B = ["avin", "by", "combe", "dale", "ery", "gill", "hallow", "ington",
         "kirk", "lowe", "moss", "ock", "rigg", "sett", "thwaite", "wyke"]


def below(rng, n):
    """A whole number in [0, n) from rng.random() alone."""
    return min(int(rng.random() * n), n - 1)


def pick(rng, seq):
    return seq[below(rng, len(seq))]


def shuffle(rng, seq):
    """Fisher-Yates with below()."""
    for i in range(len(seq) - 1, 0, -1):
        j = below(rng, i + 1)
        seq[i], seq[j] = seq[j], seq[i]


def make_names(rng, n):
    names, seen = [], set()
    while len(names) < n:
        first = pick(rng, FIRST_A) + pick(rng, FIRST_B) + pick(rng, FIRST_END)
        last = pick(rng, SUR_A) + pick(rng, SUR_B)
        name = first + " " + last
        if name not in seen:
            seen.add(name)
            names.append(name)
    return names


def assign_groups(rng, n):
    """Group places dealt to residents: those in more groups first, each
    group chosen with weight equal to its places left. Returns a list of
    member lists (resident indexes), one per group, or None if the deal
    got stuck (the caller then deals again from the same stream)."""
    total = sum(size for _, size, _ in GROUPS)
    in_one = total - 4 * IN_FOUR - 3 * IN_THREE - 2 * IN_TWO
    counts = [4] * IN_FOUR + [3] * IN_THREE + [2] * IN_TWO + [1] * in_one
    if len(counts) > n or in_one < 0:
        sys.exit("make-town: the group sizes do not fit the residents")
    people = list(range(n))
    shuffle(rng, people)
    left = [size for _, size, _ in GROUPS]
    members = [[] for _ in GROUPS]
    for person, want in zip(people, counts):
        chosen = set()
        for _ in range(want):
            weights = [0 if g in chosen else left[g] for g in range(len(GROUPS))]
            w = sum(weights)
            if w == 0:
                return None
            x = rng.random() * w
            for g, wg in enumerate(weights):
                if x < wg:
                    break
                x -= wg
            else:
                g = max(range(len(GROUPS)), key=lambda i: weights[i])
            chosen.add(g)
            left[g] -= 1
            members[g].append(person)
    return members


def households(rng, n):
    """Residents cut into households of one to three."""
    people = list(range(n))
    shuffle(rng, people)
    out, i = [], 0
    while i < n:
        r = rng.random()
        size = 1 if r < 0.35 else 2 if r < 0.80 else 3
        out.append(people[i:i + size])
        i += size
    return out


def main():
    rng = random.Random(SEED)
    names = make_names(rng, RESIDENTS)
    if not any(any(ord(ch) > 127 for ch in s) for s in names):
        sys.exit("make-town: no name with a non-ASCII letter; change the seed")
    members = None
    while members is None:
        members = assign_groups(rng, RESIDENTS)

    edges = {}  # (u, v) with u < v -> the first reason for the tie
    origin = {"group": 0, "household": 0, "acquaintance": 0}

    def link(u, v, why):
        if u == v:
            return
        e = (min(u, v), max(u, v))
        if e not in edges:
            edges[e] = why
            origin[why] += 1

    for (gname, size, p), mem in zip(GROUPS, members):
        assert len(mem) == size, gname
        for i in range(len(mem)):
            for j in range(i + 1, len(mem)):
                if rng.random() < p:
                    link(mem[i], mem[j], "group")
    home_of = [0] * RESIDENTS
    for h, home in enumerate(households(rng, RESIDENTS)):
        for i in range(len(home)):
            home_of[home[i]] = h
            for j in range(i + 1, len(home)):
                link(home[i], home[j], "household")
    pairs = RESIDENTS * (RESIDENTS - 1) // 2
    eps = BACKGROUND_EDGES / pairs
    for u in range(RESIDENTS):
        for v in range(u + 1, RESIDENTS):
            if rng.random() < eps:
                link(u, v, "acquaintance")
    outside = [0] * RESIDENTS
    for u, v in edges:
        if home_of[u] != home_of[v]:
            outside[u] += 1
            outside[v] += 1
    for u in range(RESIDENTS):
        while outside[u] == 0:
            v = below(rng, RESIDENTS)
            if home_of[v] != home_of[u]:
                link(u, v, "acquaintance")
                outside[u] += 1
                outside[v] += 1

    here = os.path.join(os.path.dirname(os.path.abspath(__file__)), "town")
    os.makedirs(here, exist_ok=True)
    lines = sorted(tuple(sorted((names[u], names[v]))) for u, v in edges)
    with open(os.path.join(here, "edges.tsv"), "w", encoding="utf-8", newline="\n") as f:
        for a, b in lines:
            f.write(a + "\t" + b + "\n")
    kinds = sorted(tuple(sorted((names[u], names[v]))) + (why,) for (u, v), why in edges.items())
    with open(os.path.join(here, "ties.tsv"), "w", encoding="utf-8", newline="\n") as f:
        f.write("# name\tname\tkind: group, household or acquaintance (the first that made the tie)\n")
        for a, b, why in kinds:
            f.write(a + "\t" + b + "\t" + why + "\n")
    rows = sorted((names[m], gname) for (gname, _, _), mem in zip(GROUPS, members) for m in mem)
    with open(os.path.join(here, "groups.tsv"), "w", encoding="utf-8", newline="\n") as f:
        for name, gname in rows:
            f.write(name + "\t" + gname + "\n")

    ngroups = [0] * RESIDENTS
    for mem in members:
        for m in mem:
            ngroups[m] += 1
    print("make-town: %d residents, %d ties (%d through groups, %d in households, "
          "%d acquaintances); residents in 0/1/2/3/4 groups: %s"
          % (RESIDENTS, len(edges), origin["group"], origin["household"],
             origin["acquaintance"], "/".join(str(ngroups.count(c)) for c in range(5))),
          file=sys.stderr)


if __name__ == "__main__":
    main()
