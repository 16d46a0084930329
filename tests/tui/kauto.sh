#!/bin/sh
# explore GRAPH -k auto: the search for k is shown as its points arrive
# (the held-out log-likelihood curve against k and a table with the link
# AUC), then the explorer's normal view opens on the final fit with the k
# chosen, and 'w' writes k-selection.tsv and run.json's k_selection with
# the result. The graph (make_graph in tests/tui/lib) has 6 planted groups
# of 20 nodes (edges inside with probability 0.5, across 0.01), so the
# chosen k must land near 6.
. "$(dirname "$0")/lib"

g=$tmp/planted.tsv
make_graph "$g"

# COTERIE_KSCREEN_WAIT: keep the search screen up after it ends until a key
UI_ENV="COTERIE_KSCREEN_WAIT=600" start_ui 100x32 C.UTF-8 "$g" -k auto -j 2 --starts 1 -o out
check "the search screen appears" wait_screen 'Choosing the number of communities by held-out likelihood' 20
check "it has the table heads, with the link AUC" wait_screen 'k +held-out loglik +link AUC +sweeps +seconds'
check "the first k of the grid is scored (k 2, a log-likelihood and an AUC)" \
	wait_screen '^ +[^ ]? +2 +-[0-9.]+ +0\.[0-9]{4} ' 30
check "the search ends and names the k chosen" wait_screen 'chose k = [0-9]+' 60
chosen=$(screen | sed -n 's/.*chose k = \([0-9]*\).*/\1/p' | head -1)
check "the chosen k ($chosen) is marked in the table" wait_screen "▶ +$chosen +-"
# the curve, in braille (U+2800..U+28FF: UTF-8 e2 a0..a3 xx)
braille() { screen | LC_ALL=C grep -q "$(printf '\342[\240-\243]')"; }
check "the curve is drawn in braille" braille
check "the planted 6 groups: the chosen k ($chosen) is 5 to 8" \
	sh -c '[ "$1" -ge 5 ] && [ "$1" -le 8 ]' sh "${chosen:-0}"
keys Enter
check "a key opens the normal view" wait_screen '─ 1 Likelihood' 20
check "the header gives the chosen k" wait_screen "edges, k $chosen "
check "the fit runs with the chosen k" wait_screen "k $chosen, seed 1"
check "the fit levels off" wait_screen 'levelled off' 60
# pane 5 details the selected edge: the model's probability with the
# background and the communities that make it
check "the weak-edges pane details the selected pair's probability" \
	wait_screen 'P [0-9.e-]+ incl. background(: #[0-9]+ [0-9.e-]+|, no community shared)' 20
keys w
check "w writes the result" wait_screen 'wrote the result' 20
check "k-selection.tsv is written with the result" [ -f "$tmp/out/k-selection.tsv" ]
check "k-selection.tsv marks the chosen k" \
	[ "$(awk -F'\t' '$6 == "yes" { print $1 }' "$tmp/out/k-selection.tsv")" = "$chosen" ]
check "run.json k_selection.chosen is the chosen k" \
	[ "$(json_get "$tmp/out/run.json" k_selection.chosen)" = "$chosen" ]
check "run.json parameters.k is the chosen k" [ "$(json_get "$tmp/out/run.json" parameters.k)" = "$chosen" ]
keys q
check "q quits" wait_gone_ui 20
check "status 0" [ "$(ui_rc)" = 0 ]
check "no sanitizer report" no_sanitizer_report "$tmp/stderr"

# q during the search quits at once with nothing written; Ctrl-C gives 130
UI_ENV="COTERIE_KSCREEN_WAIT=600" start_ui 100x32 C.UTF-8 "$g" -k auto --k-grid 2,3,4,5,6,7,8,9,10,11,12,13,14,15,16,17,18,19,20 -j 1 --starts 1 -o out2
check "the search screen appears again" wait_screen 'Choosing the number of communities' 20
keys q
check "q during the search quits" wait_gone_ui 30
check "q during the search: status 0" [ "$(ui_rc)" = 0 ]
check "q during the search writes nothing" [ ! -e "$tmp/out2/run.json" ]
UI_ENV="COTERIE_KSCREEN_WAIT=600" start_ui 80x24 C "$g" -k auto -j 1 --starts 1 -o out3
check "at 80x24 in ASCII the search screen appears" wait_screen 'Choosing (the number of communities|k) by held-out likelihood: [0-9]+ of [0-9]+ (k )?scored' 20
keys C-c
check "Ctrl-C during the search ends it" wait_gone_ui 30
check "Ctrl-C during the search: status 130" [ "$(ui_rc)" = 130 ]
check "no sanitizer report (Ctrl-C)" no_sanitizer_report "$tmp/stderr"

# a grid longer than the screen (issue 14, item 6): the table shows the
# best k, marked, and says which part of the grid it shows, rather than
# the first rows as if they were all
grid=2,3,4,5,6,7,8,9,10,11,12,13,14,15,16,17,18,19,20,21,22,23,24,25,26
UI_ENV="COTERIE_KSCREEN_WAIT=600" start_ui 60x16 C "$g" -k auto --k-grid $grid -j 1 --starts 1 -o out4
check "at 60x16 the search ends and names the k chosen" wait_screen 'chose k = [0-9]+' 90
chosen=$(screen | sed -n 's/.*chose k = \([0-9]*\).*/\1/p' | head -1)
check "the chosen k ($chosen) is on screen, marked" wait_screen "^ *> +$chosen +-" 5
check "the table's head says which k it shows of the 25" wait_screen 'k [0-9]+-[0-9]+ of 25' 5
check "no line is cut inside the scored count" wait_screen '[0-9]+ of 25 scored' 5
keys q
check "q quits" wait_gone_ui 30

finish
