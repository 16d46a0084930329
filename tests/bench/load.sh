#!/bin/sh
# Loading figures, best of REPS runs (the machine is shared, so one run means
# little): wall MB/s from `benchtool load`, CPU seconds (user + sys, all
# threads) and peak RSS from /usr/bin/time, and for a .gz file zlib's own
# inflate speed (`benchtool zlib`), the ceiling.
#
#   tests/bench/load.sh [-n REPS] [-b BENCHTOOL] FILE...
#
# Prints one line per file. Asserts nothing.
reps=3
bt=${BENCH_TOOLS:-build/bench}/benchtool
while [ $# -gt 0 ]; do
	case $1 in
	-n) reps=$2; shift 2 ;;
	-b) bt=$2; shift 2 ;;
	*) break ;;
	esac
done
[ -x "$bt" ] || { echo "load.sh: no $bt (make $bt)" >&2; exit 2; }
for f in "$@"; do
	i=0 bw=1e9 bc=1e9 rss=0
	while [ "$i" -lt "$reps" ]; do
		out=$(/usr/bin/time -f "TIME %U %S %M" "$bt" load "$f" 2>&1) || { echo "$out" >&2; exit 1; }
		w=$(echo "$out" | awk '$1 == "load_s" { print $2 }')
		c=$(echo "$out" | awk '$1 == "TIME" { print $2 + $3 }')
		rss=$(echo "$out" | awk '$1 == "peak_rss_mb" { print $2 }')
		bw=$(echo "$bw $w" | awk '{ print ($2 < $1) ? $2 : $1 }')
		bc=$(echo "$bc $c" | awk '{ print ($2 < $1) ? $2 : $1 }')
		i=$((i + 1))
	done
	mb=$(wc -c <"$f" | awk '{ print $1 / 1e6 }')
	line=$(echo "$mb $bw $bc $rss" | awk '{ printf "%.1f MB: best wall %.3f s = %.1f MB/s, best CPU %.2f s, peak RSS %.0f MB", $1, $2, $1 / $2, $3, $4 }')
	case $f in
	*.gz)
		z=$("$bt" zlib "$f" | awk '$1 == "zlib_mbps" { print $2 }')
		line="$line; zlib alone $z MB/s" ;;
	esac
	echo "$f: $line"
done
