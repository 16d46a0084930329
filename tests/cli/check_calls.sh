#!/bin/sh
# The test scripts themselves: every condition of a check is inside it.
# `check DESC [ A ] && [ B ]` hands check `[ A ]` only; the shell runs
# `[ B ]` after it, and a failure there prints nothing (eleven checks were
# written so until session 17; DEVELOPERS.md, "Testing").
# tests/tools/check_calls.py reports a check statement with && or ||
# outside quotes.
. "$(dirname "$0")/lib"
SCAN=$ROOT/tests/tools/check_calls.py
"$PY" "$SCAN" "$ROOT/tests/cli" "$ROOT/tests/tui" | sed "s|^$ROOT/||" >"$tmp/found"
check "no check statement joins conditions outside the check ($(tr '\n' ' ' <"$tmp/found"))" \
	[ ! -s "$tmp/found" ]
# the scan itself, on a probe: line 1 is the pitfall; lines 2-4 keep their
# conditions inside quotes (an apostrophe inside a double-quoted
# description included); lines 5-6 are the pitfall after a continuation
mkdir -p "$tmp/probe"
cat >"$tmp/probe/p.sh" <<'PROBE'
check "x" [ 1 = 1 ] && [ 1 = 2 ]
check "y" sh -c "[ 1 = 1 ] && [ 2 = 2 ]"
check "the start's k" \
	awk 'BEGIN { exit !(1 > 0 && 2 > 1) }'
check "z" \
	[ 1 = 1 ] || [ 1 = 2 ]
PROBE
check "the scan reports lines 1 and 5 of the probe, no other" \
	[ "$("$PY" "$SCAN" "$tmp/probe" | sed 's/.*://' | tr '\n' ' ')" = "1 5 " ]
finish
