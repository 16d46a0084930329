"""Write a synthetic edge list for the load benchmark (tests/bench/run.sh).

usage: gen_edges.py NODES EDGES SEED > FILE

Each line is "u<TAB>v" with names "v<number>": a uniformly random node joined
to a node a short random distance away in id order (so neighbourhoods
overlap, as in real graphs) or, one time in four, to a uniformly random node.
The same arguments give the same bytes (Python's random, Mersenne Twister,
seeded explicitly). Self-loops and repeats are left in: the loader must cope.
"""
import random
import sys


def main():
    n, m, seed = int(sys.argv[1]), int(sys.argv[2]), int(sys.argv[3])
    rng = random.Random(seed)
    rand = rng.random
    out = sys.stdout
    chunk = []
    for _ in range(m):
        a = int(rand() * n)
        if rand() < 0.25:
            b = int(rand() * n)
        else:
            b = (a + 1 + int(rand() * rand() * 200)) % n
        chunk.append("v%d\tv%d\n" % (a, b))
        if len(chunk) >= 100000:
            out.write("".join(chunk))
            chunk = []
    out.write("".join(chunk))


main()
