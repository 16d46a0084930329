"""Turn one benchmark run into figures, and figures into a table.

usage: figures.py row LABEL RESULT_DIR STDERR_LOG TIME_FILE >> rows.tsv
       figures.py table rows.tsv

`row` reads what one `coterie fit` left behind and prints one TSV line:
  label, wall s, cpu s, load s, seed s, fit s, starts, sweeps, sweeps/s,
  final loglik, peak MiB, status, nodes, edges, input lines.
Sources:
  wall, cpu, peak  /usr/bin/time -v (TIME_FILE): elapsed, user + system,
                   maximum resident set size; run.json "run" if it is absent
  load s           the timestamp timed.py put on the loader's
                   "N nodes, M edges" notice (seconds since start)
  seed s           the first "sweep 0" progress line's timestamp minus load s
  fit s            run.json fit.seconds (every start, seeding included)
  starts           the N of the "start i/N" progress lines (1 without them)
  sweeps           run.json fit.sweeps: the sweeps of the start that was kept
  sweeps/s         from that start's trace.tsv: sweeps done between its first
                   and last rows over the seconds between them, so seeding
                   and other starts are left out
  final loglik     run.json fit.loglik
`table` prints rows.tsv aligned for a terminal, without the graph sizes
(run.sh prints those under the table).
"""
import json
import re
import sys

COLS = ["benchmark", "wall s", "cpu s", "load s", "seed s", "fit s", "starts", "sweeps",
        "sweeps/s", "final loglik", "peak MiB", "status", "nodes", "edges", "lines"]
SHOWN = 12  # the first 12 columns go in the table


def time_v(path):
    wall = rss = cpu = None
    try:
        text = open(path).read()
    except OSError:
        return None, None, None
    m = re.search(r"Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (\S+)", text)
    if m:
        secs = 0.0
        for part in m.group(1).split(":"):
            secs = secs * 60 + float(part)
        wall = secs
    m = re.search(r"Maximum resident set size \(kbytes\): (\d+)", text)
    if m:
        rss = int(m.group(1))
    user = re.search(r"User time \(seconds\): (\S+)", text)
    syst = re.search(r"System time \(seconds\): (\S+)", text)
    if user and syst:
        cpu = float(user.group(1)) + float(syst.group(1))
    return wall, rss, cpu


def num(x, fmt="%.2f"):
    return "-" if x is None else fmt % x


def row(label, out, log, timefile):
    run = json.load(open(out + "/run.json"))
    wall, rss, cpu = time_v(timefile)
    if wall is None:
        wall = run["run"]["wall_seconds"]
    if rss is None:
        rss = run["run"]["peak_rss_kb"]
    load = first_sweep0 = None
    starts = 1
    for line in open(log, encoding="utf-8", errors="replace"):
        t, _, msg = line.rstrip("\n").partition("\t")
        if load is None and re.search(r": \d+ nodes?, \d+ edges?$", msg):
            load = float(t)
        if first_sweep0 is None and re.search(r"\bsweep 0 ", msg):
            first_sweep0 = float(t)
        m = re.search(r"\bstart \d+/(\d+)\b", msg)
        if m:
            starts = max(starts, int(m.group(1)))
    seed = first_sweep0 - load if load is not None and first_sweep0 is not None else None
    trace = []
    with open(out + "/trace.tsv") as f:
        next(f)
        for line in f:
            s, secs, _ = line.rstrip("\n").split("\t")
            trace.append((int(s), float(secs)))
    rate = None
    if len(trace) >= 2 and trace[-1][1] > trace[0][1]:
        rate = (trace[-1][0] - trace[0][0]) / (trace[-1][1] - trace[0][1])
    fit = run["fit"]
    g = run["graph"]
    vals = [label, num(wall), num(cpu), num(load), num(seed), num(fit["seconds"]),
            str(starts), str(fit["sweeps"]), num(rate), "%.6g" % fit["loglik"],
            "%.1f" % (rss / 1024.0), fit["status"],
            str(g["nodes"]), str(g["edges"]), str(g.get("lines", "-"))]
    print("\t".join(vals))


def table(path):
    rows = [COLS] + [l.rstrip("\n").split("\t") for l in open(path) if l.strip()]
    rows = [r[:SHOWN] for r in rows]
    width = [max(len(r[i]) for r in rows) for i in range(SHOWN)]
    for n, r in enumerate(rows):
        cells = [r[0].ljust(width[0])] + [r[i].rjust(width[i]) for i in range(1, SHOWN)]
        print("  ".join(cells))
        if n == 0:
            print("  ".join("-" * w for w in width))


if sys.argv[1] == "row":
    row(*sys.argv[2:6])
else:
    table(sys.argv[2])
