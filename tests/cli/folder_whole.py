"""Is a result folder one result, the old one or the new one, whole?

usage: folder_whole.py DIR OLD NEW

DIR is a folder a writer was killed in; OLD is a copy of the result it held
before (byte for byte), NEW the result the writer's uncompleted run would
have written (another run of the same fit: its TSV files are the same bytes,
run.json and checkpoint.cot differ in timings). Prints "old" or "new" and
exits 0, or prints why the folder is neither and exits 1.

The files of DIR are read as a reader must (coterie-files(5), "Replacing a
result"): when DIR/.coterie.commit is there, each file it puts is the staged
DIR/.NAME.staged until renamed, each file it drops is absent. The identity
checks: every file the record (or, without one, the manifest
.coterie.manifest) puts has the size and FNV-1a 64 it lists (FNV-1a as
published by Fowler, Noll and Vo: offset 0xcbf29ce484222325, prime
0x100000001b3), and the graph fingerprint of the record, of run.json and of
checkpoint.cot's header (bytes 16-23, little-endian) is one.
"""
import json
import os
import sys

FILES = ["checkpoint.cot", "memberships.tsv", "communities.tsv", "trace.tsv", "run.json",
         "k-selection.tsv", "held-out-links.tsv"]


def fnv1a(data):
    h = 0xcbf29ce484222325
    for b in data:
        h = ((h ^ b) * 0x100000001b3) & 0xFFFFFFFFFFFFFFFF
    return h


def parse_record(path):
    """The record or manifest as (graph, {name: (kind, size, sum)}), or None."""
    if not os.path.exists(path):
        return None
    lines = open(path).read().split("\n")
    assert lines[0] == "coterie commit 1", "%s: bad head" % path
    assert lines[1].startswith("run ") and lines[2].startswith("graph ")
    graph = lines[2][6:]
    entries = {}
    for line in lines[3:]:
        if line == "end":
            return graph, entries
        f = line.split(" ")
        entries[f[1]] = (f[0], int(f[2]) if f[0] == "put" else None,
                         int(f[3], 16) if f[0] == "put" else None)
    raise AssertionError("%s: no end line" % path)


def resolved(d):
    """{name: bytes} of the result files a reader of d reads."""
    rec = parse_record(os.path.join(d, ".coterie.commit"))
    out = {}
    for name in FILES:
        path = os.path.join(d, name)
        if rec and name in rec[1]:
            kind = rec[1][name][0]
            if kind == "drop":
                continue
            staged = os.path.join(d, "." + name + ".staged")
            if kind == "put" and os.path.exists(staged):
                path = staged
        if os.path.exists(path):
            out[name] = open(path, "rb").read()
    return rec, out


def files_of(d):
    return {n: open(os.path.join(d, n), "rb").read() for n in FILES
            if os.path.exists(os.path.join(d, n))}


def identity_problems(d, rec, files):
    """Why the files are not the ones the record/manifest lists, or []."""
    if rec is None:
        rec = parse_record(os.path.join(d, ".coterie.manifest"))
    if rec is None:
        return ["neither a commit record nor a manifest"]
    graph, entries = rec
    bad = []
    for name, data in files.items():
        if name not in entries or entries[name][0] == "drop":
            bad.append("%s is not listed as a file of the result" % name)
        elif entries[name][0] == "put" and (len(data) != entries[name][1] or
                                            fnv1a(data) != entries[name][2]):
            bad.append("%s is not the file listed (size or FNV-1a)" % name)
    for name, e in entries.items():
        if e[0] == "put" and name not in files:
            bad.append("%s is listed and missing" % name)
    run = json.loads(files.get("run.json", b"{}"))
    if run.get("graph", {}).get("fingerprint") != graph:
        bad.append("run.json is of graph %s, the record of %s"
                   % (run.get("graph", {}).get("fingerprint"), graph))
    ck = files.get("checkpoint.cot", b"")
    if "%016x" % int.from_bytes(ck[16:24], "little") != graph:
        bad.append("checkpoint.cot is of another graph than the record")
    return bad


def main():
    d, old, new = sys.argv[1:4]
    rec, got = resolved(d)
    if got == files_of(old):
        print("old")
        return 0
    bad = identity_problems(d, rec, got)
    want = files_of(new)
    for name in ("memberships.tsv", "communities.tsv"):
        if got.get(name) != want.get(name):
            bad.append("%s is neither the old result's nor the new one's" % name)
    if set(got) != set(want):
        bad.append("files %s, the new result has %s" % (sorted(got), sorted(want)))
    if bad:
        print("neither old nor new whole: " + "; ".join(bad))
        return 1
    print("new")
    return 0


sys.exit(main())
