import json, collections, numpy as np
for ds in ["karate","polbooks","football"]:
    rows = json.load(open(f"grid_{ds}.json"))
    byk = collections.defaultdict(list)
    for r in rows: byk[r["k"]].append(r)
    for k, L in sorted(byk.items()):
        eps = sorted(set(r["eps"]), key=lambda e: -e) if False else sorted(set(r["eps"] for r in L), reverse=True)
        dens = eps[0]
        tab = {(r["eps"], r["seed"]): r for r in L}
        seeds = sorted(set(r["seed"] for r in L))
        out = []
        for name, key in [("A heldout(tool)", "ho"), ("C agm_loglik", "agm"), ("C' profile", "prof"), ("relaxed ll", "bfit")]:
            picks = [max(eps, key=lambda e: tab[(e, s)][key]) for s in seeds]
            on = [tab[(p, s)]["onmi"] for p, s in zip(picks, seeds)]
            cv = [tab[(p, s)]["cov"] for p, s in zip(picks, seeds)]
            out.append(f"{name}: picks {[('%.2g' % (p/dens) if p>1e-5 else '1e-6') for p in picks]} onmi {np.mean(on):.3f}±{np.std(on):.3f} cov {np.mean(cv):.0f}")
        # A averaged over folds
        pa = max(eps, key=lambda e: np.mean([tab[(e, s)]["ho"] for s in seeds]))
        on = [tab[(pa, s)]["onmi"] for s in seeds]
        out.append(f"A avg-5-folds: x{pa/dens:.2g} onmi {np.mean(on):.3f}")
        best = max(eps, key=lambda e: np.mean([tab[(e, s)]["onmi"] for s in seeds]))
        out.append(f"oracle: x{best/dens:.2g} onmi {np.mean([tab[(best, s)]['onmi'] for s in seeds]):.3f}; default x1 onmi {np.mean([tab[(dens, s)]['onmi'] for s in seeds]):.3f}")
        print(ds, k); print("   " + "\n   ".join(out))
