#!/usr/bin/python3
"""Write the plain-NMI fixtures of tests/unit/test_score.c and their expected values.

Each case is two partitions of the same nodes, written as cover files
(node<TAB>community, lines in a shuffled order, so the two files list the
nodes differently): CASE.a.tsv and CASE.b.tsv. expected.tsv holds, per case,
scikit-learn's normalized_mutual_info_score(a, b) with its default
average_method='arithmetic', to 17 significant digits.

Run from anywhere with Debian's python3-sklearn:  /usr/bin/python3 make.py
It prints the values it writes. Seeded, so a rerun writes the same files.
"""
import os
import random
import sys

import sklearn
from sklearn.metrics import normalized_mutual_info_score

here = os.path.dirname(os.path.abspath(__file__))


def write(path, names, labels, rng):
    rows = [f"{names[u]}\tg{labels[u]}\n" for u in range(len(names))]
    rng.shuffle(rows)
    with open(path, "w") as f:
        f.write("# a partition for the plain-NMI test; see make.py\n")
        f.writelines(rows)


def main():
    rng = random.Random(20261202)
    cases = []
    # (name, n, clusters of a, clusters of b, how b is made)
    specs = [
        ("small", 12, 3, 4, "random"),
        ("medium", 60, 5, 7, "random"),
        ("large", 400, 12, 9, "random"),
        ("noisy", 200, 6, 6, "noisy"),       # b = a with 20% of labels redrawn
        ("relabelled", 50, 4, 4, "relabel"),  # b = a under a permutation: 1
        ("onevsmany", 30, 1, 5, "random"),    # a single community: 0
        ("bothone", 10, 1, 1, "random"),      # both single: 1 (sklearn's limit case)
        ("singletons", 25, 25, 5, "random"),  # every node alone in a
        ("skewed", 150, 3, 10, "skewed"),     # one big community and small ones
    ]
    for name, n, ka, kb, how in specs:
        names = [f"v{u:03d}" for u in range(n)]
        if ka == n:
            a = list(range(n))
        else:
            a = [rng.randrange(ka) for _ in range(n)]
            a[:ka] = range(ka)  # every community non-empty
        if how == "relabel":
            perm = list(range(ka))
            rng.shuffle(perm)
            b = [perm[x] for x in a]
        elif how == "noisy":
            b = [rng.randrange(kb) if rng.random() < 0.2 else x for x in a]
        elif how == "skewed":
            b = [0 if rng.random() < 0.7 else rng.randrange(1, kb) for _ in range(n)]
            b[:kb] = range(kb)
        else:
            b = [rng.randrange(kb) for _ in range(n)]
            b[:kb] = range(kb)
        write(os.path.join(here, f"{name}.a.tsv"), names, a, rng)
        write(os.path.join(here, f"{name}.b.tsv"), names, b, rng)
        cases.append((name, normalized_mutual_info_score(a, b)))
    with open(os.path.join(here, "expected.tsv"), "w") as f:
        f.write(f"# scikit-learn {sklearn.__version__} normalized_mutual_info_score"
                f" (average_method='arithmetic'), python {sys.version.split()[0]};"
                " written by make.py\n")
        for name, v in cases:
            f.write(f"{name}\t{v:.17g}\n")
            print(f"{name}\t{v:.17g}")


if __name__ == "__main__":
    main()
