#!/bin/sh
# A node name holding an escape sequence (ESC [ 31 m, which would turn the
# terminal red) and a bell (BEL) reaches the screen escaped: the capture
# shows the text \e[31m and \x07, not a colour change, and the terminal
# never rings. The same under a non-UTF-8 locale.
. "$(dirname "$0")/lib"

g=$tmp/hostile.tsv
{
	printf 'a\tb\nb\tc\na\tc\nc\td\nd\te\ne\tf\nd\tf\n'
	printf '\033[31mred\007\ta\n\033[31mred\007\tb\n'
} >"$g"

for loc in C.UTF-8 C; do
	start_ui 100x30 "$loc" "$g" -k 2 -j 1 -o "out-$loc"
	check "$loc: the panes appear" wait_screen '5 (Weak edges|Missing links)'
	keys /
	wait_screen 'Find a node' 5
	keys r e d
	check "$loc: the find box lists the name escaped" wait_screen '\\e\[31mred\\x07'
	keys Enter
	check "$loc: the node pane shows the name escaped" wait_node '^ ?\\e\[31mred\\x07$'
	# tmux keeps what the program printed; an ESC sent raw would have been
	# taken as a colour and the text "\e[31m" would not be on the screen
	plain()
	{
		! $T capture-pane -p -e | grep -q "$(printf '\033')\[31mred"
	}
	check "$loc: no raw escape sequence reached the terminal" plain
	bells()
	{
		[ "$($T display-message -p '#{window_bell_flag}')" = 0 ]
	}
	check "$loc: the terminal did not ring" bells
	keys q
	wait_screen 'Quit\?' 5
	keys d
	check "$loc: the explorer ends" wait_gone_ui 10
	check "$loc: no sanitizer report" no_sanitizer_report "$tmp/stderr"
done
finish
