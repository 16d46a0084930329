import json, sys, numpy as np, collections
for ds in ["karate","polbooks","football"]:
    rows=json.load(open(f"grid_{ds}.json"))
    g=collections.defaultdict(list)
    for r in rows: g[(r['k'],r['eps'])].append(r)
    print(ds)
    print(" k   eps       onmi(sd)      cov   agm     prof    ho(sd)        auc   share  | refine onmi cov agm_r")
    for (k,e),L in sorted(g.items(), key=lambda t:(t[0][0],-t[0][1])):
        a=lambda key: np.mean([r[key] for r in L])
        sd=lambda key: np.std([r[key] for r in L])
        print(f" {k:2d} {e:9.2e} {a('onmi'):.3f}({sd('onmi'):.3f}) {a('cov'):5.1f} {a('agm'):8.1f} {a('prof'):8.1f} {a('ho'):7.2f}({sd('ho'):.2f}) {a('auc'):.3f} {a('share'):.4f} | {a('onmi_r'):.3f} {a('cov_r'):5.1f} {a('agm_r'):8.1f} {a('prof_r'):8.1f}")
