import sys, random, json, math
from lib import *
ds = sys.argv[1]; ks = [int(x) for x in sys.argv[2].split(",")]
g = G(ds); inv = {i: a for a, i in g["nodes"].items()}
E = sorted(g["E"]); n = g["n"]
non = [(u, v) for u in range(n) for v in range(u + 1, n) if (u, v) not in g["E"]]
r = len(non) / len(E)
res = []
for fold in (1, 2, 3):
    rng = random.Random(100 + fold)
    he = rng.sample(E, max(1, round(0.1 * len(E))))
    hn = rng.sample(non, 3 * len(he))
    hes = set(he)
    tf = f"/tmp/eps/train_{ds}_{fold}.tsv"
    with open(tf, "w") as f:
        for u, v in E:
            if (u, v) not in hes:
                f.write(f"{inv[u]}\t{inv[v]}\n")
    for k in ks:
        for eps in grid(ds):
            d = f"{OUT}/HO_{ds}_k{k}_e{eps:.3e}_f{fold}"
            if not os.path.exists(f"{d}/run.json"):
                subprocess.run([R, "fit", tf, "-k", str(k), "-o", d, "-j", "1", "-q", "--seed", str(fold), "--epsilon", repr(eps)], check=True)
            mem = {}
            for i, line in enumerate(open(f"{d}/memberships.tsv")):
                p = line.rstrip("\n").split("\t")
                if i == 0 and p[0] == "node": continue
                mem.setdefault(g["nodes"][p[0]], set()).add(p[1])
            pc = {}
            for i, line in enumerate(open(f"{d}/communities.tsv")):
                p = line.rstrip("\n").split("\t")
                if i == 0: hdr = p; continue
                pc[p[0]] = float(p[hdr.index("p")])
            def P(u, v):
                S = mem.get(u, set()) & mem.get(v, set())
                q = -math.log1p(-eps) + sum(-math.log1p(-min(pc[c], 1 - 1e-12)) for c in S)
                return q
            le = sum(math.log(-math.expm1(-P(u, v))) for u, v in he)
            ln = sum(-P(u, v) for u, v in hn) * r / 3
            res.append(dict(ds=ds, k=k, eps=eps, fold=fold, ll=le + ln, le=le, ln=ln))
json.dump(res, open(f"/tmp/eps/ho_{ds}.json", "w"))
import collections
agg = collections.defaultdict(list)
for x in res: agg[(x["k"], x["eps"])].append(x)
for (k, e), L in sorted(agg.items(), key=lambda t: (t[0][0], -t[0][1])):
    print(ds, k, "%.2e" % e, "heldout AGM ll %.1f" % np.mean([x["ll"] for x in L]), "per fold", ["%.1f" % x["ll"] for x in L], "edge part %.1f nonedge part %.1f" % (np.mean([x["le"] for x in L]), np.mean([x["ln"] for x in L])))
