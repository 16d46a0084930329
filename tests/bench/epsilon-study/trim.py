import sys, math, collections
# per-community prefix threshold by the AGM likelihood of that community alone
edges=[l.split('\t')[:2] for l in open(sys.argv[1]) if not l.startswith('#')]
edges=[(a.strip(),b.strip()) for a,b in edges]
nb=collections.defaultdict(set)
for u,v in edges: nb[u].add(v); nb[v].add(u)
eps=float(sys.argv[3])
C=collections.defaultdict(list)
for l in open(sys.argv[2]):
    a=l.rstrip('\n').split('\t')
    if a[0]=='node' or l.startswith('#'): continue
    C[a[1]].append((float(a[2]),a[0]))
le, l1e = math.log(eps), math.log1p(-eps)
out=open(sys.argv[4],'w'); out.write('node\tcommunity\n')
removed=0
for c,mem in C.items():
    mem.sort(reverse=True)
    order=[u for _,u in mem]
    pos={}
    best=None; E=0
    # incremental: add members in order; E_s = internal edges among first s
    for s,u in enumerate(order,1):
        E+=sum(1 for v in nb[u] if v in pos)
        pos[u]=s
        P=s*(s-1)/2
        # pairs of removed members with the community -> background
        if s<2: continue
        p=min(max(E/P,1e-12),1-1e-12)
        ll=E*math.log(p)+(P-E)*math.log1p(-p) - (E*le+(P-E)*l1e)   # gain over background for kept pairs
        if best is None or ll>best[0]: best=(ll,s)
    s=best[1] if best else len(order)
    removed+=len(order)-s
    for u in order[:s]: out.write(f'{u}\t{c}\n')
print('removed',removed, file=sys.stderr)
