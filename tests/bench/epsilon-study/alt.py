import sys
from lib import *
ds = sys.argv[1]; ks = [int(x) for x in sys.argv[2].split(",")]
for k in ks:
    for s in (1, 2, 3):
        for start in (G(ds)["dens"], 1e-6):
            eps = start; path = []
            for it in range(12):
                d, j = fit(ds, k, eps, s)
                mem = read_cover(ds, d)
                sh = bg_share(ds, mem)[0]
                path.append((eps, onmi(ds, d), covered(mem)))
                if abs(sh - eps) / eps < 0.02: break
                eps = float("%.4g" % sh)
            print(ds, k, "seed", s, "start %.0e" % start, "iters", len(path), "final eps %.4f onmi %.3f cov %d" % path[-1], "| path", " ".join("%.4f" % p[0] for p in path))
