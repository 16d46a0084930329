#!/bin/sh
# README.md's quick start (issue 14, item 15): exactly two commands, and
# the first works as it stands both in a bare root shell, which has no
# sudo (a container, a fresh cloud machine: "sudo: command not found"), and
# as a user with sudo. The first command is run by sh with a PATH of stubs
# (id, sudo, apt-get, make, ./coterie) that only log how they were called,
# so nothing is installed and no network is needed.
. "$(dirname "$0")/lib"

readme=$ROOT/README.md
need_file "$readme"
# the first fenced block after "## Quick start"
awk '/^## Quick start/ { q = 1 } q && /^```/ { if (inb) exit; inb = 1; next } inb' \
	"$readme" >"$tmp/block"
check "the quick start holds exactly two commands" [ "$(grep -c . "$tmp/block")" -eq 2 ]
first=$(sed -n 1p "$tmp/block")
check "the second command is make check" [ "$(sed -n 2p "$tmp/block")" = "make check" ]

stubs=$tmp/stubs
mkdir -p "$stubs"
# each stub logs its name and arguments; sudo then runs the command
for tool in apt-get make; do
	printf '#!/bin/sh\necho "%s $*" >>"$LOG"\n' "$tool" >"$stubs/$tool"
done
printf '#!/bin/sh\necho "sudo $*" >>"$LOG"\nexec "$@"\n' >"$stubs/sudo"
printf '#!/bin/sh\n[ "$1" = -u ] && echo "$STUB_UID"\n' >"$stubs/id"
chmod +x "$stubs"/*

# run_first UID WITH_SUDO: the first command in a fresh folder
run_first()
{
	rf_dir=$tmp/run-$1-$2
	mkdir -p "$rf_dir/bin"
	for t in apt-get make id; do cp "$stubs/$t" "$rf_dir/bin/"; done
	[ "$2" = 1 ] && cp "$stubs/sudo" "$rf_dir/bin/"
	printf '#!/bin/sh\necho "./coterie $*" >>"$LOG"\n' >"$rf_dir/coterie"
	chmod +x "$rf_dir/coterie"
	: >"$rf_dir/log"
	(cd "$rf_dir" && env -i PATH="$rf_dir/bin" LOG="$rf_dir/log" STUB_UID="$1" \
		/bin/sh -c "$first") >"$rf_dir/out" 2>&1
}

run_first 0 0
rc=$?
log=$tmp/run-0-0/log
check "as root without sudo: the first command exits 0" [ "$rc" -eq 0 ]
sed 's/^/# /' "$tmp/run-0-0/out"
check "as root without sudo: sudo is never called" sh -c '! grep -q "^sudo" "$1"' sh "$log"
check "as root: apt-get update, apt-get install make, make deps, make, then the fit, in order" \
	[ "$(cut -d' ' -f1,2 "$log" | tr '\n' '|')" = "apt-get update|apt-get install|make deps|make |./coterie fit|" ]

run_first 1000 1
rc=$?
log=$tmp/run-1000-1/log
check "as a user with sudo: the first command exits 0" [ "$rc" -eq 0 ]
check "as a user: apt-get and make deps run through sudo" \
	sh -c 'grep -q "^sudo apt-get update" "$1" && grep -q "^sudo apt-get install" "$1" &&
	       grep -q "^sudo make deps" "$1"' sh "$log"
check "as a user: the build and the fit do not use sudo" \
	sh -c '! grep -q "^sudo make *\$" "$1" && ! grep -q "^sudo ./coterie" "$1"' sh "$log"

finish
