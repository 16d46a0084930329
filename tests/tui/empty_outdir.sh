#!/bin/sh
# Quitting the explorer without saving leaves no empty result folder
# behind (issue 14, item 12): a folder the session made for -o (the
# up-front write check makes it) is removed again when nothing was written
# into it; a folder that was there before stays, and so does one that
# holds a result.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"

# quit_unsaved DIR: start with -o DIR, wait for the plateau, quit with d
quit_unsaved()
{
	start_ui 80x24 C.UTF-8 "$g" -k 6 -j 1 --starts 1 -o "$1"
	wait_screen 'levelled off' 30
	keys q
	wait_screen 'Quit\?' 5
	keys d
	wait_gone_ui 20
}

quit_unsaved fresh
check "d quits with status 0" [ "$(ui_rc)" = 0 ]
check "the folder this session made is gone" [ ! -e "$tmp/fresh" ]

mkdir "$tmp/mine"
quit_unsaved mine
check "a folder that was there before stays" [ -d "$tmp/mine" ]

start_ui 80x24 C.UTF-8 "$g" -k 6 -j 1 --starts 1 -o saved
wait_screen 'levelled off' 30
keys w
check "w writes the result" wait_screen 'wrote the result' 20
keys q
wait_gone_ui 20
check "a folder that holds a result stays" [ -s "$tmp/saved/run.json" ]

# the default folder (no -o) is not made at all when nothing is written
start_ui 80x24 C.UTF-8 "$g" -k 6 -j 1 --starts 1
wait_screen 'levelled off' 30
keys q
wait_screen 'Quit\?' 5
keys d
wait_gone_ui 20
left=$(find "$tmp" -mindepth 1 -maxdepth 1 -type d ! -name 'tmux*' ! -name fresh ! -name mine ! -name saved)
check "no default folder is left behind${left:+ ($left)}" [ -z "$left" ]
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"
finish
