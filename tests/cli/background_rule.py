"""The background's rule (background.h), checked from run.json's record:
ten trials from the density down; the one kept has the shortest code length
among the covers holding the share wanted (half of the linked nodes, or 90%
when the density's cover holds fewer than half), else covers the most.
usage: background_rule.py RUN.json"""
import json
import math
import sys

b = json.load(open(sys.argv[1]))["background"]
c = b["candidates"]
mult = [x["multiple"] for x in c]
assert b["rule"] == "code", b["rule"]
assert mult == [1.0, 0.7, 0.5, 0.3, 0.2, 0.1, 0.05, 0.03, 0.01, 0.001], mult
assert abs(c[0]["epsilon"] - b["density"]) < 1e-15
for x in c:
    assert math.isfinite(x["code_length"]) and 0.0 < x["cover_background"] < 1.0, x
linked = b["linked_nodes"]
share = 0.5 if c[0]["covered"] >= 0.5 * linked else 0.9
ok = [x for x in c if x["covered"] >= share * linked]
if ok:
    best = min(ok, key=lambda x: x["code_length"])  # the first on a tie
else:
    best = max(c, key=lambda x: x["covered"])  # the first (largest epsilon) on a tie
assert b["epsilon"] == best["epsilon"], (b["epsilon"], best)
