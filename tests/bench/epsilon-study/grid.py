import sys, json
from lib import *

ds = sys.argv[1]
ks = [int(x) for x in sys.argv[2].split(",")]
seeds = range(1, 6)
rows = []
for k in ks:
    for eps in grid(ds):
        for s in seeds:
            d, j = fit(ds, k, eps, s)
            mem = read_cover(ds, d)
            share, E0, N0 = bg_share(ds, mem)
            pll, peps = agm_ll(ds, mem)
            dc, jc = fit(ds, k, eps, s, check=0.1)
            dr, jr = fit(ds, k, eps, s, refine=True)
            memr = read_cover(ds, dr)
            rows.append(dict(ds=ds, k=k, eps=eps, seed=s, onmi=onmi(ds, d), cov=covered(mem),
                             agm=j["fit"]["agm_loglik"], bfit=j["fit"]["loglik"], prof=pll, peps=peps, share=share,
                             ho=jc["link_check"]["heldout_loglik"], auc=jc["link_check"]["heldout_auc"],
                             nho=jc["link_check"]["held_out_edges"],
                             onmi_r=onmi(ds, dr), cov_r=covered(memr), agm_r=jr["agm_refine"]["loglik_after"] if jr.get("agm_refine") else None,
                             prof_r=agm_ll(ds, memr)[0]))
json.dump(rows, open(f"/tmp/eps/grid_{ds}.json", "w"))
print(len(rows))
