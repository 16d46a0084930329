#!/usr/bin/env python3
"""Report test-script statements that call `check` with && or || outside
quotes: `check DESC [ A ] && [ B ]` hands check `[ A ]` only, and the shell
runs `[ B ]` after it, where a failure prints nothing (DEVELOPERS.md,
"Testing"). usage: check_calls.py DIR... ; prints FILE:LINE per statement."""
import glob
import re
import sys


def unquoted(text):
    """text with its quoted parts removed, as sh reads quotes: '...' up to
    the next ', "..." up to the next unescaped ", a backslash escaping the
    next character outside single quotes."""
    out, i, n = [], 0, len(text)
    while i < n:
        c = text[i]
        if c == "\\":
            i += 2
        elif c == "'":
            j = text.find("'", i + 1)
            i = n if j < 0 else j + 1
        elif c == '"':
            i += 1
            while i < n and text[i] != '"':
                i += 2 if text[i] == "\\" else 1
            i += 1
        else:
            out.append(c)
            i += 1
    return "".join(out)


def goes_on(stmt):
    """A statement goes on after a trailing backslash, && or ||."""
    return stmt.rstrip().endswith("\\") or unquoted(stmt).rstrip().endswith(("&&", "||"))


def scan(path):
    lines = open(path).read().split("\n")
    i, end = 0, None
    while i < len(lines):
        if end is not None:  # inside a here-document: its text is not shell
            if lines[i].strip() == end:
                end = None
            i += 1
            continue
        if re.match(r"\s*check ", lines[i]):
            stmt, j = lines[i], i
            while j + 1 < len(lines) and goes_on(stmt):
                j += 1
                stmt += "\n" + lines[j]
            if re.search(r"&&|\|\|", unquoted(stmt)):
                yield i + 1
            i = j
        here = re.search(r"<<-?\s*['\"]?(\w+)['\"]?", lines[i])
        if here:
            end = here.group(1)
        i += 1


for d in sys.argv[1:]:
    for f in sorted(glob.glob(d + "/*.sh")):
        for line in scan(f):
            print(f"{f}:{line}")
