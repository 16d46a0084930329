#!/bin/sh
# Runs the whole suite: every cmocka binary given on the command line, then
# the command tests (tests/cli/*.sh) and the explorer tests (tests/tui/*.sh),
# and ends with one line "N passed, N failed".
# --unit runs only the cmocka binaries; --no-tui leaves out the explorer
# tests; --cli PATTERN runs only the command tests matching it (and no
# cmocka binary is given then).
# Environment: COTERIE_BIN is the binary under test.
unit_only=0
tui=1
cli_pattern='*'
while :; do
	case "$1" in
	--unit) unit_only=1; shift ;;
	--no-tui) tui=0; shift ;;
	--cli) cli_pattern=$2; tui=0; shift 2 ;;
	*) break ;;
	esac
done
here=$(cd "$(dirname "$0")" && pwd)
pass=0; fail=0; failed_names=""
log=$(mktemp)
for t in "$@"; do
	name=$(basename "$t")
	"$t" >"$log" 2>&1
	rc=$?
	cat "$log"
	p=$(sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' "$log" | tail -1)
	f=$(sed -n 's/^\[  FAILED  \] \([0-9]*\) test.*/\1/p' "$log" | tail -1)
	p=${p:-0}; f=${f:-0}
	if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; fi
	pass=$((pass + p)); fail=$((fail + f))
	[ "$f" -gt 0 ] && failed_names="$failed_names $name"
done
if [ "$unit_only" -eq 0 ]; then
	tui_tests=
	[ "$tui" -eq 1 ] && tui_tests="$here/tui/*.sh"
	for t in "$here"/cli/$cli_pattern.sh $tui_tests; do
		[ -f "$t" ] || continue
		name=$(basename "$t")
		echo "== $name"
		sh "$t" >"$log" 2>&1
		rc=$?
		cat "$log"
		p=$(grep -c '^ok ' "$log")
		f=$(grep -c '^not ok ' "$log")
		if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; fi
		pass=$((pass + p)); fail=$((fail + f))
		[ "$f" -gt 0 ] && failed_names="$failed_names $name"
	done
fi
rm -f "$log"
[ -n "$failed_names" ] && echo "failing:$failed_names"
echo "$pass passed, $fail failed"
[ "$fail" -eq 0 ] && [ "$pass" -gt 0 ]
