#!/bin/sh
# Hostile input (issue 6, "Bad input gets a clear error, never a crash"):
# every case exits 1 (bad input) or 2 (bad usage, DESIGN.md "Exit status"),
# says "coterie: FILE:LINE: expected ..." where a line is to blame, never
# sends a raw control byte to the terminal, and never writes over an
# existing result: every run below that should fail is pointed at one good
# result folder, whose bytes are compared at the end. Cases covered
# elsewhere: a line with one name and -k 0/-3/abc/12x, -j 0, --tol nan, an
# output folder below a regular file (fit_errors.sh); CRLF and comma input
# (fit_inputs.sh); a truncated, corrupt or other-graph checkpoint
# (fit_resume.sh).
. "$(dirname "$0")/lib"

karate=$DATA/karate/edges.tsv
need_file "$karate"

# The result nobody may overwrite.
keep=$tmp/keep
"$BIN" fit "$karate" -k 3 -q -o "$keep" || fail "the result to keep is made"
snapshot_keep() { (cd "$keep" && ls -a && cat ./*) | cksum; }
keep_sum=$(snapshot_keep)

# bad WANT_STATUS NAME ARGS...: run coterie (stdin closed), keep stderr, and
# check the status, that there is a message, and that it holds no control
# byte (STYLE.md 4: hostile bytes are shown escaped).
bad()
{
	bw=$1
	bn=$2
	shift 2
	bad_run "$bw" "$bn" "$BIN" "$@"
}
# bad_run WANT NAME COMMAND ARGS...: the same for a command line of its own
bad_run()
{
	want=$1
	name=$2
	shift 2
	"$@" </dev/null >"$tmp/$name.out" 2>"$tmp/$name.err"
	st=$?
	check "$name: exit status $want (got $st)" [ "$st" -eq "$want" ]
	check "$name: a message on stderr" [ -s "$tmp/$name.err" ]
	check "$name: no raw control byte in the message" no_control_bytes "$tmp/$name.err"
}
says() { grep -q -F -e "$2" "$tmp/$1.err"; }

# --- the file -------------------------------------------------------------
: >"$tmp/empty.tsv"
bad 1 empty fit "$tmp/empty.tsv" -k 2 -o "$keep"
check "empty file: FILE:1: expected two node names" \
	says empty "empty.tsv:1: expected two node names, found an empty file"

printf '# only\n%% comments\n\n   \n' >"$tmp/comments.tsv"
bad 1 comments fit "$tmp/comments.tsv" -k 2 -o "$keep"
check "only comments: the line where the file ended (5) and what was expected" \
	says comments "comments.tsv:5: expected two node names, found the end of the file"

printf 'a\nb\n' >"$tmp/onecol.tsv"
bad 1 onecol fit "$tmp/onecol.tsv" -k 2 -o "$keep"
check "one column: FILE:1: expected two node names, found 1" \
	says onecol "onecol.tsv:1: expected two node names, found 1"

# A name of 2 MiB is long but legal (coterie-files(5): lines up to 16 MiB);
# one line of 17 MiB is refused with its line number.
{
	printf 'a\tb\n'
	head -c 2097152 /dev/zero | tr '\0' 'n'
	printf '\tb\nb\tc\nc\ta\n'
} >"$tmp/longname.tsv"
"$BIN" fit "$tmp/longname.tsv" -k 1 -q -o "$tmp/longname" 2>"$tmp/longname.err"
check "a 2 MiB name: accepted (exit 0)" [ $? -eq 0 ]
check "a 2 MiB name: a node like the others (4 nodes: a, b, c and it)" \
	[ "$(json_get "$tmp/longname/run.json" graph.nodes)" = 4 ]
{
	printf 'a\tb\n'
	head -c 17825792 /dev/zero | tr '\0' 'x'
	printf '\ty\n'
} >"$tmp/huge.tsv"
bad 1 hugeline fit "$tmp/huge.tsv" -k 1 -o "$keep"
check "a line of 17 MiB: FILE:2: expected a line of at most 16 MiB" \
	says hugeline "huge.tsv:2: expected a line of at most 16 MiB"
rm -f "$tmp/huge.tsv" "$tmp/longname.tsv"

printf 'a\tb\nb\000c\tc\nc\ta\n' >"$tmp/nul.tsv"
bad 1 nul fit "$tmp/nul.tsv" -k 1 -o "$keep"
check "a NUL byte: FILE:2: expected text, found a NUL byte" \
	says nul "nul.tsv:2: expected text, found a NUL byte"

# gzip: cut short, and one byte changed inside the deflate stream
gzip -9 -c "$DATA/football/edges.tsv" >"$tmp/full.gz"
head -c 1000 "$tmp/full.gz" >"$tmp/cut.tsv.gz"
bad 1 gzcut fit "$tmp/cut.tsv.gz" -k 2 -o "$keep"
check "a truncated .gz: says the compressed data ends too early" \
	says gzcut "cut.tsv.gz': compressed data ends too early"
size=$(wc -c <"$tmp/full.gz")
{ head -c 500 "$tmp/full.gz"; printf 'XXXXXXXX'; tail -c $((size - 508)) "$tmp/full.gz"; } \
	>"$tmp/bad.tsv.gz"
bad 1 gzbad fit "$tmp/bad.tsv.gz" -k 2 -o "$keep"
check "a corrupt .gz: says the compressed data is bad or ends early" \
	sh -c 'grep -q -e "bad compressed data" -e "ends too early" "$1"' sh "$tmp/gzbad.err"
check "a corrupt .gz: the message names the file" says gzbad "bad.tsv.gz"

mkdir "$tmp/adir"
bad 1 dir fit "$tmp/adir" -k 2 -o "$keep"
check "a folder as the graph: says it is a folder" says dir "adir': it is a folder"

# --- graphs too small to fit ---------------------------------------------
printf 'a a\n' >"$tmp/onenode.tsv"
bad 1 onenode fit "$tmp/onenode.tsv" -k 1 -o "$keep"
check "one node (a self-loop): FILE:2: expected an edge between two different nodes" \
	says onenode "onenode.tsv:2: expected an edge between two different nodes"
cat >"$tmp/noedges.gml" <<'EOF'
graph [ node [ id 0 label "a" ] node [ id 1 label "b" ] ]
EOF
bad 1 noedges fit "$tmp/noedges.gml" -k 1 -o "$keep"
check "a GML graph with no edges: expected at least one edge, found 2 nodes" \
	says noedges "noedges.gml: expected at least one edge, found 2 nodes and none"

# --- names: any bytes but NUL are a name, shown escaped ------------------
esc=$(printf '\033')
printf 'caf\303\251\tb\nb\tx%s[2Jy\n%s]0;title\007z\tcaf\303\251\nbad\377\376\tb\n' "$esc" "$esc" \
	>"$tmp/names.tsv"
"$BIN" fit "$tmp/names.tsv" -k 1 -q -o "$tmp/names" 2>"$tmp/names.err"
check "names with ESC, BEL and invalid UTF-8: accepted (exit 0)" [ $? -eq 0 ]
check "names: five nodes (hand count: cafe, b, x-ESC-y, ESC-BEL-z, bad-FF-FE)" \
	[ "$(json_get "$tmp/names/run.json" graph.nodes)" = 5 ]
"$BIN" show "$tmp/names" --node "$(printf 'x\033[2Jy')" >"$tmp/shownode.out" 2>&1
check "show --node with ESC in the name: exit 0" [ $? -eq 0 ]
check "show --node: the name is printed escaped (no raw ESC)" no_control_bytes "$tmp/shownode.out"
check "show --node: the escaped name is there" grep -q 'x\\e\[2Jy\|x\\x1b\[2Jy\|x\\033\[2Jy' "$tmp/shownode.out"
"$BIN" show "$tmp/names" --node "$(printf 'bad\377\376')" >"$tmp/showbad.out" 2>&1
check "show --node with invalid UTF-8: exit 0" [ $? -eq 0 ]
check "show --node: invalid UTF-8 shown as \\xff\\xfe" grep -q 'bad\\xff\\xfe' "$tmp/showbad.out"
"$BIN" show "$tmp/names" --community 0 >"$tmp/showcomm.out" 2>&1
check "show --community: no raw control byte in the member list" no_control_bytes "$tmp/showcomm.out"
"$BIN" show "$tmp/names" --node "$(printf 'no\033[2Jsuch')" >"$tmp/nosuch.out" 2>"$tmp/nosuch.err"
check "show --node of an unknown name with ESC: exit 1" [ $? -eq 1 ]
check "show --node of an unknown name: the message is escaped" no_control_bytes "$tmp/nosuch.err"
printf 'x\033[2Jy\n' >"$tmp/escline.tsv"
bad 1 escline fit "$tmp/escline.tsv" -k 1 -o "$keep"
check "a bad line holding ESC: FILE:LINE and the name escaped" \
	says escline "escline.tsv:1: expected two node names, found 1 ('x\\e[2Jy')"

# --- a FIFO and process substitution are read like standard input --------
"$BIN" fit "$karate" -k 3 -q -j 2 --seed 3 -o "$tmp/plain"
if mkfifo "$tmp/pipe.tsv" 2>/dev/null; then
	cat "$karate" >"$tmp/pipe.tsv" &
	bg_pids="$bg_pids $!"
	timeout 60 "$BIN" fit "$tmp/pipe.tsv" -k 3 -q -j 2 --seed 3 -o "$tmp/fifo"
	check "a FIFO as the graph: exit 0" [ $? -eq 0 ]
	check "a FIFO: the same memberships as the plain file" \
		cmp -s "$tmp/plain/memberships.tsv" "$tmp/fifo/memberships.tsv"
fi
if command -v bash >/dev/null 2>&1; then
	gzip -c "$karate" >"$tmp/k.gz"
	timeout 60 bash -c '"$1" fit <(zcat "$2") -k 3 -q -j 2 --seed 3 -o "$3"' sh \
		"$BIN" "$tmp/k.gz" "$tmp/procsub"
	check "<(zcat FILE.gz) as the graph: exit 0" [ $? -eq 0 ]
	check "<(zcat ...): the same memberships as the plain file" \
		cmp -s "$tmp/plain/memberships.tsv" "$tmp/procsub/memberships.tsv"
fi

# --- options ---------------------------------------------------------------
bad 2 kbig fit "$karate" -k 35 -o "$keep"
check "-k above the node count (34, Zachary 1977): says so" \
	says kbig "-k 35 asks for more communities than the graph has nodes (34)"
bad 2 kneg fit "$karate" -k -1 -o "$keep"
bad 2 kword fit "$karate" -k three -o "$keep"
check "-k three: names the option and the value" says kword "-k expects a whole number"
bad 2 kempty fit "$karate" -k "" -o "$keep"
bad 2 khuge fit "$karate" -k 99999999999999999999 -o "$keep"
bad 2 tolneg fit "$karate" -k 3 --tol -1 -o "$keep"
check "--tol -1: gives the range" says tolneg "--tol expects a number from 0 to 1"
bad 2 tolbig fit "$karate" -k 3 --tol 2 -o "$keep"
bad 2 tolinf fit "$karate" -k 3 --tol inf -o "$keep"
bad 2 jzero fit "$karate" -k 3 -j 0 -o "$keep"
bad 2 jhuge fit "$karate" -k 3 -j 100000 -o "$keep"
check "-j 100000: gives the range" says jhuge "-j expects a whole number from 1 to 256"
bad 2 saveevery fit "$karate" -k 3 --save-every 5 -o "$keep"
check "the old --save-every is an unknown option now" says saveevery "save-every"
bad 2 ckzero fit "$karate" -k 3 --checkpoint-every 0 -o "$keep"

# --- an output folder that cannot be written, refused before loading -----
# Root passes permission bits, so the cases that hold for everyone are a
# path below a regular file (fit_errors.sh) and a folder inside /proc, where
# no one may create one.
if [ -d /proc/self ]; then
	bad 1 procout fit "$karate" -k 3 -o /proc/coterie-out
	check "an output folder in /proc: named in the message" says procout "/proc/coterie-out"
	check "an output folder in /proc: refused before loading (no node count)" \
		sh -c '! grep -q "34 nodes" "$1"' sh "$tmp/procout.err"
fi
if [ "$(id -u)" != 0 ]; then
	mkdir "$tmp/ro" && chmod 555 "$tmp/ro"
	bad 1 readonly fit "$karate" -k 3 -o "$tmp/ro"
	check "a read-only output folder: refused before loading" \
		sh -c '! grep -q "34 nodes" "$1"' sh "$tmp/readonly.err"
	chmod 755 "$tmp/ro"
else
	echo "# SKIP running as root: a chmod'ed folder is writable for root"
fi

# --- GML and GraphML that igraph rejects: its message, no abort ----------
printf 'graph [ node [ id 0 ] edge [ source 0 target 5 ] ' >"$tmp/bad.gml"
bad 1 gml fit "$tmp/bad.gml" -k 1 -o "$keep"
check "bad GML: igraph's reason is passed on, naming the file" \
	says gml "bad.gml: cannot read gml: Parse error"
cat >"$tmp/dangling.gml" <<'EOF'
graph [ node [ id 0 ] node [ id 1 ] edge [ source 0 target 7 ] ]
EOF
bad 1 dangling fit "$tmp/dangling.gml" -k 1 -o "$keep"
check "GML with an edge to a missing node: refused with a reason" says dangling "dangling.gml"
printf '<graphml><graph><node id="a"/><edge source="a" target="b"/></graph>' >"$tmp/bad.graphml"
bad 1 graphml fit "$tmp/bad.graphml" -k 1 -o "$keep"
check "bad GraphML: igraph's reason is passed on, naming the file" \
	says graphml "bad.graphml: cannot read graphml"
printf '*Vertices 3\n1 "a"\n*Edges\n1 9\n' >"$tmp/bad.net"
bad 1 pajek fit "$tmp/bad.net" -k 1 -o "$keep"

# --- checkpoints: future version (truncated, corrupt and other-graph ones
# are in fit_resume.sh) ------------------------------------------------------
cp -R "$keep" "$tmp/future"
# result.h: u32 version at bytes 8..11, little-endian; 99 is from the future
printf 'c\000\000\000' | dd of="$tmp/future/checkpoint.cot" bs=1 seek=8 conv=notrunc 2>/dev/null
bad 1 future fit --resume "$tmp/future" -q
check "a checkpoint from a newer coterie: says so" says future "made by a newer coterie"
bad 1 futureshow show "$tmp/future"
bad 1 futureexplore explore "$tmp/future"
: >"$tmp/future/checkpoint.cot"
bad 1 emptyck fit --resume "$tmp/future" -q
check "an empty checkpoint: names the file" says emptyck "checkpoint.cot"
# A FIFO where the checkpoint should be would block a plain open() forever
# (timeout's 124 would show it); a device is refused too.
rm -f "$tmp/future/checkpoint.cot"
if mkfifo "$tmp/future/checkpoint.cot" 2>/dev/null; then
	bad_run 1 fifock timeout 20 "$BIN" fit --resume "$tmp/future" -q
	check "a FIFO as the checkpoint: refused, not waited on" says fifock "not a regular file"
	bad_run 1 fifoshow timeout 20 "$BIN" show "$tmp/future"
	rm -f "$tmp/future/checkpoint.cot"
fi
ln -s /dev/zero "$tmp/future/checkpoint.cot"
bad_run 1 devck timeout 20 "$BIN" fit --resume "$tmp/future" -q
check "/dev/zero as the checkpoint: refused" says devck "not a regular file"

# --- explore refuses the same graphs and -k before it takes the terminal --
bad 1 exempty explore "$tmp/empty.tsv" -k 2 -o "$keep"
check "explore of an empty file: FILE:1: expected two node names" \
	says exempty "empty.tsv:1: expected two node names, found an empty file"
bad 2 exkbig explore "$karate" -k 35 -o "$keep"
check "explore -k 35 on 34 nodes: says so" \
	says exkbig "-k 35 asks for more communities than the graph has nodes (34)"
COTERIE_MEMORY_LIMIT=1M "$BIN" explore "$karate" -k 3 -o "$keep" </dev/null 2>"$tmp/exmem.err"
check "explore on a machine of 1 MiB: exit 1 before the screen" [ $? -eq 1 ]
check "explore on a machine of 1 MiB: the estimate is given" says exmem "not enough memory for this fit"

# --- and after all that, the kept result is as it was ------------------------
check "no failed run wrote over the existing result folder" [ "$(snapshot_keep)" = "$keep_sum" ]
check "no temporary file was left in it" [ -z "$(find "$keep" -name '.*' ! -name . ! -name .coterie.manifest 2>/dev/null)" ]

finish
