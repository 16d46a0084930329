#!/bin/sh
# coterie fit refuses what it cannot do, with the exit status of DESIGN.md
# ("Exit status 0 success, 1 failure, 2 bad usage") and a message naming the
# subject, before any work; and no byte from a file name, node name or
# argument reaches the terminal raw (preamble: "no raw control bytes to the
# terminal"; STYLE.md section 4).
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
need_file "$karate"

# run NAME ARGS...: run coterie, keep stdout, stderr and the status.
run()
{
	run_name=$1
	shift
	"$BIN" "$@" >"$tmp/$run_name.out" 2>"$tmp/$run_name.err"
	echo $? >"$tmp/$run_name.rc"
}
rc() { cat "$tmp/$1.rc"; }
err_has() { grep -q -F -e "$2" "$tmp/$1.err"; }
err_lacks() { ! grep -q -F -e "$2" "$tmp/$1.err"; }
absent() { [ ! -e "$1" ]; }

# --- commands, help and version ---------------------------------------------
run version --version
check "coterie --version exits 0" [ "$(rc version)" = 0 ]
check "coterie --version prints 'coterie VERSION' on stdout" \
	grep -q '^coterie [0-9][0-9.]*' "$tmp/version.out"
run help --help
check "coterie --help exits 0" [ "$(rc help)" = 0 ]
check "coterie --help lists the fit command on stdout" grep -q 'fit' "$tmp/help.out"
run fithelp fit --help
check "coterie fit --help exits 0" [ "$(rc fithelp)" = 0 ]
check "coterie fit --help describes -k, -o and --max-sweeps" \
	sh -c 'grep -q -e "-k" "$1" && grep -q -e "--output" "$1" && grep -q -e "--max-sweeps" "$1"' sh "$tmp/fithelp.out"
run nocmd
check "coterie with no command exits 2" [ "$(rc nocmd)" = 2 ]
run unknown frobnicate
check "an unknown command exits 2" [ "$(rc unknown)" = 2 ]
check "an unknown command is named in the message" err_has unknown "frobnicate"

# --- usage errors: exit 2, nothing made -------------------------------------
run nok fit "$karate" -o "$tmp/u1"
check "fit without -k exits 2" [ "$(rc nok)" = 2 ]
check "fit without -k says -k is needed" err_has nok "-k"
check "fit without -k makes no output folder" absent "$tmp/u1"
run noo fit "$karate" -k 3
check "fit without -o exits 2" [ "$(rc noo)" = 2 ]
check "fit without -o says -o is needed" err_has noo "-o"
run nograph fit -k 3 -o "$tmp/u2"
check "fit without a graph exits 2" [ "$(rc nograph)" = 2 ]
run twograph fit "$karate" "$karate" -k 3 -o "$tmp/u3"
check "fit with two graphs exits 2" [ "$(rc twograph)" = 2 ]
run kabc fit "$karate" -k abc -o "$tmp/u4"
check "fit -k abc exits 2" [ "$(rc kabc)" = 2 ]
check "fit -k abc names the option and the value" \
	sh -c 'grep -q -e "-k" "$1" && grep -q "abc" "$1"' sh "$tmp/kabc.err"
check "fit -k abc makes no output folder" absent "$tmp/u4"
run kzero fit "$karate" -k 0 -o "$tmp/u5"
check "fit -k 0 exits 2" [ "$(rc kzero)" = 2 ]
run kneg fit "$karate" -k -3 -o "$tmp/u5"
check "fit -k -3 exits 2" [ "$(rc kneg)" = 2 ]
run k12x fit "$karate" -k 12x -o "$tmp/u5"
check "fit -k 12x (trailing junk) exits 2" [ "$(rc k12x)" = 2 ]
run jzero fit "$karate" -k 3 -j 0 -o "$tmp/u5"
check "fit -j 0 exits 2" [ "$(rc jzero)" = 2 ]
run tol fit "$karate" -k 3 --tol nan -o "$tmp/u5"
check "fit --tol nan exits 2" [ "$(rc tol)" = 2 ]
run sweeps fit "$karate" -k 3 --max-sweeps 1e3 -o "$tmp/u5"
check "fit --max-sweeps 1e3 exits 2" [ "$(rc sweeps)" = 2 ]
run bogus fit "$karate" -k 3 -o "$tmp/u6" --bogus
check "fit with an unknown option exits 2" [ "$(rc bogus)" = 2 ]
check "an unknown option is named in the message" err_has bogus "bogus"
check "an unknown option makes no output folder" absent "$tmp/u6"
run fmt fit "$karate" -k 3 -o "$tmp/u7" --format xls
check "fit --format xls exits 2" [ "$(rc fmt)" = 2 ]
check "fit --format xls names the format" err_has fmt "xls"

# --- failures: exit 1 with the subject named ---------------------------------
run missing fit "$tmp/no-such-graph.tsv" -k 3 -o "$tmp/m"
check "a missing graph file exits 1" [ "$(rc missing)" = 1 ]
check "a missing graph file is named in the message" err_has missing "no-such-graph.tsv"

printf 'a b\nb c\nc\n' >"$tmp/short.tsv"
run short fit "$tmp/short.tsv" -k 1 -o "$tmp/s"
check "a line with one name exits 1" [ "$(rc short)" = 1 ]
check "a line with one name: message gives file and line (short.tsv:3)" err_has short "short.tsv:3"

: >"$tmp/empty.tsv"
run empty fit "$tmp/empty.tsv" -k 1 -o "$tmp/e"
check "an empty graph exits 1" [ "$(rc empty)" = 1 ]
check "an empty graph writes no result" absent "$tmp/e/memberships.tsv"

# An output folder that cannot be made. Root ignores permission bits, so
# the folder is put below a regular file, which no user can get past.
: >"$tmp/file"
run unwritable fit "$DATA/football/edges.tsv" -k 3 -o "$tmp/file/out"
check "an output folder below a regular file exits 1" [ "$(rc unwritable)" = 1 ]
check "the refusal names the folder" err_has unwritable "$tmp/file"
check "the refusal comes before fitting (no 'fitting' notice)" err_lacks unwritable "fitting"
check "the refusal comes before loading (no node count notice)" err_lacks unwritable "115 nodes"
check "the refusal leaves no progress line" err_lacks unwritable "sweep"
# Proof that the graph is not even opened first: a FIFO with no writer
# blocks any reader forever, so a loader run first would hang until the
# timeout (exit 124).
if mkfifo "$tmp/fifo.tsv" 2>/dev/null; then
	timeout 20 "$BIN" fit "$tmp/fifo.tsv" -k 3 -o "$tmp/file/out2" 2>/dev/null
	check "the output folder is checked before the graph is opened" [ $? -eq 1 ]
fi

# --- hostile bytes never reach the terminal raw ------------------------------
esc=$(printf '\033')
ctl=$(printf '\001')
printf 'a\033[31mb\001c\n' >"$tmp/hostile.tsv"
run hostile fit "$tmp/hostile.tsv" -k 1 -o "$tmp/h"
check "a one-name line with ESC exits 1" [ "$(rc hostile)" = 1 ]
check "the message about it names the file and line" err_has hostile "hostile.tsv:1"
check "the node name with ESC and byte 0x01 is not copied raw to stderr" \
	no_control_bytes "$tmp/hostile.err"

printf 'x y\ny z\n' >"$tmp/ok.tsv"
run hostfile fit "$tmp/missing${esc}[2J${ctl}.tsv" -k 1 -o "$tmp/h2"
check "a missing file whose name holds ESC: exit 1" [ "$(rc hostfile)" = 1 ]
check "a missing file whose name holds ESC: not copied raw to stderr" \
	no_control_bytes "$tmp/hostfile.err"
run hostcmd "cmd${esc}[2J${ctl}"
check "an unknown command holding ESC: exit 2" [ "$(rc hostcmd)" = 2 ]
check "an unknown command holding ESC: not copied raw to stderr" \
	no_control_bytes "$tmp/hostcmd.err"
run hostk fit "$tmp/ok.tsv" -k "1${esc}[2J${ctl}" -o "$tmp/h3"
check "-k holding ESC: exit 2" [ "$(rc hostk)" = 2 ]
check "-k holding ESC: the value is not copied raw to stderr" no_control_bytes "$tmp/hostk.err"
run hostopt fit "$tmp/ok.tsv" -k 1 -o "$tmp/h4" "--x${esc}[2J${ctl}"
check "an unknown option holding ESC: exit 2" [ "$(rc hostopt)" = 2 ]
check "an unknown option holding ESC: not copied raw to stderr" no_control_bytes "$tmp/hostopt.err"
run hostfmt fit "$tmp/ok.tsv" -k 1 -o "$tmp/h5" --format "x${esc}[2J${ctl}"
check "--format holding ESC: not copied raw to stderr" no_control_bytes "$tmp/hostfmt.err"
: >"$tmp/f${esc}[2J${ctl}"
run hostdir fit "$tmp/ok.tsv" -k 1 -o "$tmp/f${esc}[2J${ctl}/out"
check "an unusable output folder holding ESC: exit 1" [ "$(rc hostdir)" = 1 ]
check "an unusable output folder holding ESC: not copied raw to stderr" \
	no_control_bytes "$tmp/hostdir.err"
run hostout fit "$tmp/ok.tsv" -k 1 -o "$tmp/o${esc}[2J${ctl}"
check "a good output folder holding ESC: exit 0" [ "$(rc hostout)" = 0 ]
check "a good output folder holding ESC: its name is not copied raw to stderr" \
	no_control_bytes "$tmp/hostout.err"

finish
