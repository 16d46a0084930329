"""Stability against a planted truth, for the fit --repeats tests.

usage: stability_planted.py RESULT_DIR TRUTH.tsv MARGIN [sided]

The premise (consensus clustering: A. Lancichinetti and S. Fortunato,
Sci. Rep. 2, 336, 2012): what the runs of a stochastic method agree on is
what to trust. The fitted communities are split by whether they match a
planted one (best Jaccard of their member names >= 0.5, against
truth.tsv; in a sided result a name counts on any side), and the mean of
communities.tsv's stability column over those that match must exceed the
others' by more than MARGIN. Also checked: the column is the last one, in
[0, 1], given for every community with members (NA for none), and is the
value of run.json's stability section (to 4 places). With "sided", the
first columns are the directed layout's (community, size, senders).
Prints one line of figures; exits 1 (an assertion) when a check fails.
"""
import csv
import json
import sys

folder, truth, margin = sys.argv[1], sys.argv[2], float(sys.argv[3])
sided = len(sys.argv) > 4 and sys.argv[4] == 'sided'


def cover(path):
    d = {}
    with open(path) as f:
        next(f)
        for line in f:
            p = line.rstrip('\n').split('\t')
            d.setdefault(p[1], set()).add(p[0])
    return d


found, planted = cover(folder + '/memberships.tsv'), cover(truth)
with open(folder + '/communities.tsv') as f:
    rows = list(csv.DictReader(f, delimiter='\t'))
assert list(rows[0].keys())[-1] == 'stability', rows[0].keys()
if sided:
    assert list(rows[0].keys())[:3] == ['community', 'size', 'senders'], rows[0].keys()
stab = {r['community']: float(r['stability']) for r in rows if r['stability'] != 'NA'}
assert all(0 <= s <= 1 for s in stab.values()), stab
assert set(stab) == set(found), (set(stab), set(found))
js = json.load(open(folder + '/run.json'))['stability']
assert {str(c['community']): round(c['stability'], 4) for c in js['communities']
        if c['stability'] is not None} == {c: round(s, 4) for c, s in stab.items()}, \
    js['communities']
match, other = [], []
for c, mem in found.items():
    best = max(len(mem & s) / len(mem | s) for s in planted.values())
    (match if best >= 0.5 else other).append(stab[c])
mm, mo = sum(match) / len(match), sum(other) / len(other)
print("%d matching a planted community: mean stability %.3f; %d others: %.3f"
      % (len(match), mm, len(other), mo))
assert match and other and mm > mo + margin, (mm, mo)
