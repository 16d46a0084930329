"""Run a command, timestamping each line it writes on stderr.

usage: timed.py LOG -- COMMAND [ARG...]

Copies the command's stderr into LOG, each line prefixed with the seconds
since the command started ("12.345<TAB>line"), so run.sh can tell when the
graph finished loading (the "N nodes, M edges" notice) without any help from
the program. Exits with the command's status (128+N for a signal).
"""
import subprocess
import sys
import time


def main():
    log = sys.argv[1]
    cmd = sys.argv[sys.argv.index("--") + 1:]
    t0 = time.monotonic()
    with open(log, "w", encoding="utf-8", errors="replace") as out:
        p = subprocess.Popen(cmd, stderr=subprocess.PIPE, stdout=subprocess.DEVNULL)
        for raw in p.stderr:
            line = raw.decode("utf-8", "replace").rstrip("\n")
            out.write("%.3f\t%s\n" % (time.monotonic() - t0, line))
            out.flush()
        rc = p.wait()
    sys.exit(128 - rc if rc < 0 else rc)


main()
