#!/bin/sh
# '/' finds a node by any part of its name, in any case, and Enter jumps
# the node pane (and the communities and members panes) to it.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"
# "Zanzibar Quay" has 24 edges in the file (make_graph in lib), each once
deg=$(grep -c '^Zanzibar Quay	' "$g")

start_ui 120x40 C.UTF-8 "$g" -k 6 -j 2 -o out
check "the node pane appears" wait_screen '─ 4 Node'
keys /
check "/ opens the find box" wait_screen 'Find a node'
keys z A n Z
check "typing 'zAnZ' matches one node, case ignored" wait_screen '1 node matches'
check "the match is listed with its degree ($deg, from the file)" \
	wait_screen "Zanzibar Quay +degree $deg"
keys Enter
check "Enter closes the box" wait_screen '─ 5 Weak edges'
check "the node pane shows Zanzibar Quay" wait_node '^ ?Zanzibar Quay$'
check "the node pane gives its degree $deg" wait_screen "degree $deg, "
check "the footer says what was found" wait_screen 'found Zanzibar Quay'

# a part in the middle of a name: "quay" ends "Zanzibar Quay"
keys /
wait_screen 'Find a node' 5
keys q u a Y
check "a substring in the middle of a name matches" wait_screen '1 node matches'
keys BSpace BSpace BSpace BSpace x y z z y
check "a name no node has finds nothing" wait_screen '0 nodes match'
keys Escape
check "Esc leaves the search" wait_screen '─ 5 Weak edges'
keys q
wait_screen 'Quit\?' 5
keys d
check "the explorer ends" wait_gone_ui 10
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
