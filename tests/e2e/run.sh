#!/bin/bash
# run.sh - end-to-end tests of the terminal front end through tmux.
#
# Usage: run.sh SCENARIO BIASLINE SAMPLES_DIR
#
# Each scenario starts the real program in a private tmux server (its own
# socket, HOME and XDG_STATE_HOME under a temporary folder), sends keys and
# reads the screen with capture-pane.  Waits poll with short sleeps and a
# bounded number of tries; nothing asserts on time.  Exit 77 = skipped.
set -u

scenario=$1
bin=$2
samples=$3

if [ "$scenario" != plot ] && ! command -v tmux >/dev/null 2>&1; then
	echo "tmux not found: skipped"
	exit 77
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/biasline-e2e.XXXXXX")
export HOME=$work/home XDG_STATE_HOME=$work/state TERM=xterm-256color
unset TMUX NO_COLOR ESCDELAY
# In sanitizer builds: ignore the one block ncurses itself never frees.
export LSAN_OPTIONS="suppressions=$(cd "$(dirname "$0")" && pwd)/lsan.supp${LSAN_OPTIONS:+:$LSAN_OPTIONS}"
mkdir -p "$HOME"
sock=$work/tmux.sock

# tmux on the private server, ignoring any user configuration.
tmx() { tmux -S "$sock" -f /dev/null "$@"; }

# Stop the server, wait until every pane's session has exited (a program
# that got SIGHUP may still be writing its recovery file), then remove the
# work folder.
cleanup() {
	local pids p k alive
	pids=$(tmx list-panes -a -F '#{pane_pid}' 2>/dev/null)
	tmx kill-server >/dev/null 2>&1
	for ((k = 0; k < 300; k++)); do
		alive=0
		for p in $pids; do
			pgrep -s "$p" >/dev/null 2>&1 && alive=1
		done
		[ "$alive" = 0 ] && break
		sleep 0.1
	done
	rm -rf "$work"
}
trap cleanup EXIT

fail() { echo "FAIL: $*"; echo "--- screen ---"; screen; exit 1; }

# The visible screen as text.
screen() { tmx capture-pane -p 2>/dev/null; }

# Start the program in a W x H window: start W H ARGS...
start() {
	local w=$1 h=$2; shift 2
	local cmd="exec $(printf '%q ' "$bin" "$@") 2>>$(printf '%q' "$work/stderr")"
	# A server still shutting down after kill-server can refuse the first
	# try ("server exited unexpectedly"): try again a few times.
	local k
	for ((k = 0; k < 5; k++)); do
		tmx new-session -d -x "$w" -y "$h" "$cmd" 2>/dev/null && return 0
		sleep 0.2
	done
	tmx new-session -d -x "$w" -y "$h" "$cmd" || fail "tmux could not start"
}

# Wait until the screen contains TEXT (fixed string): wait_for TEXT [TRIES].
# The bound is generous because the machine may be shared and loaded.
wait_for() {
	local tries=${2:-300} k shot
	for ((k = 0; k < tries; k++)); do
		shot=$(screen)
		if grep -qF -- "$1" <<<"$shot"; then
			# No screen of the suite shows a NaN or an infinity to a person.
			grep -qiE '(^|[^a-z])-?(nan|inf)([^a-z]|$)' <<<"$shot" &&
				fail "nan or inf on screen"
			return 0
		fi
		sleep 0.1
	done
	fail "did not see '$1'"
}

# Wait until the screen does not contain TEXT.
wait_gone() {
	local tries=${2:-300} k
	for ((k = 0; k < tries; k++)); do
		screen | grep -qF -- "$1" || return 0
		sleep 0.1
	done
	fail "still see '$1'"
}

# Wait until the tmux server is gone (the program exited).
wait_exit() {
	local k
	for ((k = 0; k < 300; k++)); do
		tmx has-session >/dev/null 2>&1 || return 0
		sleep 0.1
	done
	fail "the program did not exit"
}

# Send keys (tmux key names).
keys() { tmx send-keys "$@"; }

# An engineering value ("4.312m", "2.145", "9.9339 mA", "-3.1e-21") in base units.
eng() {
	awk -v s="$*" 'BEGIN {
		gsub(/ /, "", s); sub(/(V|A|W|ohm|S)$/, "", s); sub(/µ$/, "u", s)
		p = substr(s, length(s), 1); m = 1
		if (p == "f") m = 1e-15; else if (p == "p") m = 1e-12
		else if (p == "n") m = 1e-9; else if (p == "u") m = 1e-6
		else if (p == "m") m = 1e-3; else if (p == "k") m = 1e3
		else if (p == "M") m = 1e6; else if (p == "G") m = 1e9
		if (m != 1) s = substr(s, 1, length(s) - 1)
		printf "%.17g\n", s * m }'
}

# True when A and B agree to relative tolerance TOL.
close_to() {
	awk -v a="$1" -v b="$2" -v t="$3" 'BEGIN {
		d = a - b; if (d < 0) d = -d; m = b < 0 ? -b : b
		exit !(d <= t * m) }'
}

# The operating point in the title bar: sets TV and TI (as displayed).
title_point() {
	local line
	line=$(screen | head -1)
	TV=$(sed -n 's/.*point \([^,]*\), \([^ ]* [^ ]*\).*/\1/p' <<<"$line")
	TI=$(sed -n 's/.*point \([^,]*\), \([^ ]* [^ ]*\).*/\2/p' <<<"$line")
	[ -n "$TV" ] && [ -n "$TI" ] || fail "no operating point in the title"
}

# Rows of the convergence table: lines of the side pane after its header.
table_rows() {
	screen | awk -F'|' 'NF > 1 { print $NF }' |
		awk '/^ *k +V\(V\) +I\(A\)/ { on = 1; next } on && /^ *[0-9]+ / { print }'
}

# Start with pipe-pane capturing the program's output into OUT from its
# first byte: start_piped W H OUT ENV ARGS... (ENV: "" or VAR=value).
start_piped() {
	local w=$1 h=$2 out=$3 envset=$4; shift 4
	tmx new-session -d -x "$w" -y "$h" \
		"read _; exec env $envset $(printf '%q ' "$bin" "$@") 2>>$(printf '%q' "$work/stderr")" ||
		fail "tmux could not start"
	tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
	keys Enter
}

# The program's process id (the pane runs it with exec).
pane_pid() { tmx display -p '#{pane_pid}'; }

# Wait until the file OUT stops growing; prints its size.
settle() {
	local out=$1 last=-1 same=0 size k
	for ((k = 0; k < 100 && same < 3; k++)); do
		size=$(stat -c %s "$out" 2>/dev/null || echo 0)
		if [ "$size" = "$last" ]; then same=$((same + 1)); else same=0; fi
		last=$size
		sleep 0.1
	done
	echo "$last"
}

case $scenario in
plot)
	# 'biasline plot' on every sample at three sizes, then its errors.
	for f in "$samples"/*.yaml; do
		for size in 60x20 100x30 200x60; do
			w=${size%x*} h=${size#*x}
			out=$("$bin" plot --width "$w" --height "$h" --steps 4 "$f") ||
				fail "plot $f at $size exited $?"
			[ "$(wc -l <<<"$out")" -eq "$h" ] || fail "plot $f at $size: not $h lines"
			for mark in '#' '*' 'o' 'I^ V>'; do
				grep -qF -- "$mark" <<<"$out" || fail "plot $f at $size: no '$mark'"
			done
			awk -v w="$w" 'length($0) > w { exit 1 }' <<<"$out" ||
				fail "plot $f at $size: a line is wider than $w"
		done
		out=$("$bin" plot --zoom-point "$f") || fail "plot --zoom-point $f"
		grep -qF '@' <<<"$out" || fail "plot --zoom-point $f: no operating point"
		out=$("$bin" plot --unicode --steps 3 "$f") || fail "plot --unicode $f"
		grep -qF "$(printf '\342\227\211')" <<<"$out" || fail "plot --unicode $f: no point mark"
	done
	"$bin" plot --help | grep -q -- "--zoom-point" || fail "plot --help"
	"$bin" plot "$work/missing.yaml" 2>/dev/null; rc=$?
	[ $rc -eq 66 ] || fail "missing file exited $rc, not 66"
	printf 'format_version: 1\nsource: [\n' >"$work/bad.yaml"
	"$bin" plot "$work/bad.yaml" 2>/dev/null; rc=$?
	[ $rc -eq 65 ] || fail "bad data exited $rc, not 65"
	for args in "--width 5 x.yaml" "--steps -1 x.yaml" "--frobnicate x.yaml" "" "a.yaml b.yaml"; do
		# shellcheck disable=SC2086
		"$bin" plot $args 2>/dev/null; rc=$?
		[ $rc -eq 64 ] || fail "plot $args exited $rc, not 64"
	done
	echo "ok: every sample plots at 60x20, 100x30, 200x60; exit codes 64, 65, 66"
	;;
steps)
	# Ten projections give ten new table rows, numbered 1 to 10.
	start 100 30 "$samples/diode-string-reference.yaml"
	wait_for "Convergence"
	for ((k = 1; k <= 10; k++)); do
		keys Space
		wait_for "($k projection"
	done
	rows=$(table_rows)
	for ((k = 1; k <= 10; k++)); do
		grep -qE "^ *$k " <<<"$rows" || fail "table row $k missing"
	done
	n=$(grep -cE '^ *([1-9]|10) ' <<<"$rows")
	[ "$n" -eq 10 ] || fail "expected 10 step rows, found $n"
	# The error ratio in the newest row approaches the predicted g' (a
	# spiral: negative), as the contraction-mapping theorem says (Burden &
	# Faires, Numerical Analysis, 9th ed., 2010, sec. 2.2).
	g=$(screen | grep -oE "predicted: spirals in, \|g'\| = [0-9.e-]+" | awk '{ print $NF }')
	[ -n "$g" ] || fail "no spiral-in prediction shown"
	ratio=$(table_rows | tail -1 | awk '{ print $6 }')
	close_to "$ratio" "-$g" 0.05 || fail "ratio $ratio is not near the predicted -$g"
	echo "ok: newest ratio $ratio, predicted g' -$g"
	# Stepping back removes the newest row.
	keys b
	wait_for "(9 projections"
	table_rows | grep -qE '^ *10 ' && fail "row 10 still shown after b"
	echo "ok: ten steps, ten rows; b removed the newest"
	;;
converge)
	# Running to convergence ends on the solved point.
	file=$samples/indicator-led-24v.yaml
	start 100 30 "$file"
	wait_for "Convergence"
	keys g
	wait_for "converged after"
	title_point
	last=$(table_rows | tail -1)
	rv=$(awk '{ print $2 }' <<<"$last")
	ri=$(awk '{ print $3 }' <<<"$last")
	close_to "$(eng "$rv")" "$(eng "$TV")" 5e-4 || fail "last row V $rv vs point $TV"
	close_to "$(eng "$ri")" "$(eng "$TI")" 5e-4 || fail "last row I $ri vs point $TI"
	echo "ok: converged row V=$rv I=$ri matches the solved point $TV, $TI"
	# The same point as 'biasline solve' prints (6 digits there, 5 here).
	out=$("$bin" solve "$file") || fail "'biasline solve $file' exited $?"
	# The first line holding both a voltage and a current value.
	num='-?[0-9.]+(e-?[0-9]+)? ?(µ|[fpnumkM])?'
	row=$(grep -E -- "$num""V .*[0-9] ?(µ|[fpnumkM])?A\b" <<<"$out" | head -1)
	sv=$(grep -oE -- "$num""V\b" <<<"$row" | head -1)
	si=$(grep -oE -- "$num""A\b" <<<"$row" | head -1)
	[ -n "$sv" ] && [ -n "$si" ] || { echo "$out"; fail "no V and I in 'biasline solve' output"; }
	close_to "$(eng "$sv")" "$(eng "$TV")" 1e-4 || fail "solve V $sv vs TUI $TV"
	close_to "$(eng "$si")" "$(eng "$TI")" 1e-4 || fail "solve I $si vs TUI $TI"
	echo "ok: the screen shows the point 'biasline solve' prints ($sv, $si)"
	;;
order)
	# The demo diverges in its stored order; flipping the order fixes it.
	start 100 30
	wait_for "predicted: spirals out"
	keys g
	wait_for "after"
	screen | tail -1 | grep -q "converged" && fail "the demo converged in the diverging order"
	keys o
	wait_for "predicted: spirals in"
	wait_for "order: voltage from the device"
	keys g
	wait_for "converged after"
	echo "ok: diagnosis changed from spiral out to spiral in; converged after the flip"
	;;
demo)
	# The demo at 80x24: in its stored order the first six steps keep the
	# newest segment (the '=' marks) inside the plot as the path spirals
	# out; after o each of the first four steps changes the plot.
	start 80 24
	wait_for "Convergence"
	plot() { screen | sed -n '2,22p' | cut -c1-47; }
	for ((k = 1; k <= 6; k++)); do
		keys Space
		wait_for "($k projection"
		plot | grep -q '=' || fail "step $k: the newest segment is not in the plot"
	done
	keys o
	wait_for "order: voltage from the device"
	wait_for "predicted: spirals in"
	prev=$(plot)
	for ((k = 1; k <= 4; k++)); do
		keys Space
		wait_for "($k projection"
		now=$(plot)
		[ "$now" != "$prev" ] || fail "step $k after the flip did not change the plot"
		prev=$now
	done
	echo "ok: six steps out stay in view; four steps in each change the plot"
	;;
points)
	# A tunnel diode crossed three times (0.47 V behind 420 ohm): all three
	# points are listed with their stability, numbered on the plot, and
	# selecting each changes the diagnosis.
	f=$work/tunnel.yaml
	printf 'format_version: 1\nsource:\n  vs: 470 mV\n  rs: 420\ndevice:\n  model: tunnel\n' >"$f"
	start 80 24 "$f"
	wait_for "Convergence"
	side=$(screen | cut -c51-)
	for p in 1 2 3; do
		grep -qE "^$p[ >] " <<<"$side" || fail "point $p is not listed"
	done
	grep -qE '^2[ >] .*unstable' <<<"$side" || fail "the middle point is not unstable"
	[ "$(grep -cE '^[13][ >] .*stable' <<<"$side")" = 2 ] || fail "the outer points are not stable"
	last=""
	for p in 2 3 1; do
		keys p
		wait_for "point $p of 3"
		d=$(screen | cut -c51- | awk '/- Diagnosis/ { on = 1 } /- Convergence/ { on = 0 } on')
		grep -q "at point $p" <<<"$d" || fail "the diagnosis does not speak of point $p"
		[ "$d" != "$last" ] || fail "selecting point $p did not change the diagnosis"
		last=$d
	done
	screen | grep -qiE '(^|[^a-z])(nan|inf)([^a-z]|$)' && fail "nan or inf on screen"
	echo "ok: three points listed with stable/unstable/stable; p changes the diagnosis"
	;;
wrap)
	# At 80x24 the diagnosis box wraps its text at word boundaries and
	# keeps the remedy; row 0 of the table shows "-" for its step; typed
	# values carry no padding zeros.
	start 80 24 "$samples/projection-order-matters.yaml"
	wait_for "Convergence"
	# The side pane is the last 32 columns (its bar, a blank, 30 of text);
	# the text itself may hold '|' (as in |g'|), so cut by column.
	bar=$(screen | sed -n '2,23p' | cut -c49 | sort -u)
	[ "$bar" = "|" ] || fail "the side pane's bar is not at column 49"
	side=$(screen | sed -n '2,23p' | cut -c51-)
	# The diagnosis box as one line, wrapped lines joined with blanks.
	box=$(awk '/- Diagnosis/ { on = 1; next } /- Convergence/ { on = 0 }
		on { sub(/^ +/, ""); sub(/ +$/, ""); printf "%s ", $0 }' <<<"$side")
	grep -qF "the other order contracts with |g'| = 0.0118: switch to voltage-from-device" <<<"$box" ||
		fail "the remedy is not shown whole: $box"
	grep -qF "Is       110e-21 A" <<<"$side" || fail "Is not in short form"
	tmx resize-window -x 100 -y 30
	wait_for "step  ratio"
	row0=$(table_rows | grep -E '^ *0 ')
	[ "$(awk '{ print $5 }' <<<"$row0")" = "-" ] || fail "row 0 step is not '-': $row0"
	grep -q nan <<<"$row0" && fail "row 0 shows nan: $row0"
	echo "ok: the remedy wraps whole at 80x24; row 0 step '-'; Is as 110e-21 A"
	;;
extra)
	# A transistor's results beyond V and I show under the operating point:
	# its region and the collector current, which in the active region is
	# beta times the base current (IC = beta IB, common practice).
	start 100 30 "$samples/npn-divider-bias.yaml"
	wait_for "Convergence"
	wait_for "active"
	title_point
	ic=$(screen | grep -oE 'IC [0-9.]+ [munp]?A' | head -1 | cut -c4-)
	[ -n "$ic" ] || fail "no IC shown"
	beta=$(awk '$1 == "current_gain:" { print $2 }' "$samples/npn-divider-bias.yaml")
	[ -n "$beta" ] || fail "no current_gain in the sample"
	want=$(awk -v b="$beta" -v i="$(eng "$TI")" 'BEGIN { printf "%.17g", b * i }')
	close_to "$(eng "$ic")" "$want" 1e-3 || fail "IC $ic is not beta $beta x IB $TI"
	echo "ok: region active, IC $ic = beta $beta x IB $TI"
	;;
eseries)
	# } and { walk RS along E24: 3.3k -> 3.6k -> 3.9k and back; from an
	# off-series value they go to the neighbour on that side (E24 values
	# from IEC 60063:2015).
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	wait_for "RS       3.3 kohm"
	title_point
	before=$TI
	keys Down '}'
	wait_for "RS       3.6 kohm"
	wait_for "(E24)"
	wait_for "[modified]"
	title_point
	[ "$TI" != "$before" ] || fail "the point did not move"
	keys '}'
	wait_for "RS       3.9 kohm"
	keys '{' '{'
	wait_for "RS       3.3 kohm"
	keys e 3.5k Enter
	wait_for "RS       3.5 kohm"
	keys '{'
	wait_for "RS       3.3 kohm"
	keys Up '}'
	wait_for "select RS, RP or a network resistor"
	echo "ok: RS stepped 3.3k, 3.6k, 3.9k, back to 3.3k; 3.5k down to 3.3k"
	;;
design)
	# D asks for a target (the sample has no target section); the view
	# lists the exact RS and the E24 values either side, the same as
	# 'biasline design' prints, with the nearer one chosen; Enter applies it.
	file=$samples/indicator-led-24v.yaml
	out=$("$bin" design --current 10m "$file") || fail "'biasline design' exited $?"
	want=$(awk '$1 == "higher" { print $2 " " $3; exit }' <<<"$out")
	[ -n "$want" ] || { echo "$out"; fail "no higher row from 'biasline design'"; }
	grep -qE '^ +higher .*\(nearest\)' <<<"$out" || { echo "$out"; fail "the CLI does not call higher nearest"; }
	start 100 30 "$file"
	wait_for "Convergence"
	keys D
	wait_for "design: target ("
	keys 10m Enter
	wait_for "Design: device current 10 mA, solving for RS (E24)"
	got=$(screen | grep -oE 'higher +[0-9.]+ [kM]?ohm' | awk '{ print $2 " " $3 }')
	close_to "$(eng "$got")" "$(eng "$want")" 1e-9 || fail "higher row $got, CLI says $want"
	screen | grep -qE ' exact +[0-9.]+ [kM]?ohm' || fail "no exact row"
	screen | grep -qE ' lower +[0-9.]+ [kM]?ohm' || fail "no lower row"
	# The nearer standard value is chosen first (the CLI's nearest).
	screen | grep -qE '> higher +[0-9.]+ [kM]?ohm.*nearest' || fail "higher is not chosen first"
	screen | grep -qF "no tolerances: % on a value adds one" || fail "no word on the missing tolerances"
	keys Enter
	wait_for "(the higher row of the design"
	wait_gone "Design: device current"
	wait_for "RS       $got"
	wait_for "[modified]"
	title_point
	tcli=$(awk '$1 == "higher" { print $6 " " $7; exit }' <<<"$out")
	close_to "$(eng "$TI")" "$(eng "$tcli")" 1e-4 || fail "point $TI after applying, CLI says $tcli"
	# u takes the design back.
	keys u
	wait_for "RS       3.3 kohm"
	# A target that is no quantity is refused in the prompt; Esc cancels.
	keys D
	wait_for "Design: device current 10 mA"
	keys t
	wait_for "design: target ("
	keys C-u 10ohm Enter
	wait_for "is a resistance, expected a current"
	screen | grep -qF "Design: device" && fail "a resistance was taken as a target"
	keys Escape
	wait_for "cancelled"
	echo "ok: design view higher row $got (CLI $want) chosen and applied; point $TI; undone"
	;;
tolerance)
	# T on a session without tolerances says so; with them it shows the
	# worst case, and m runs 10000 seeded Monte Carlo trials; both agree
	# with 'biasline tolerance' (seed 1, 8 bins) on the same file.
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys T
	wait_for "no tolerances in this session"
	keys Escape
	wait_gone "no tolerances"
	tmx kill-server
	cp "$samples/indicator-led-24v.yaml" "$work/tol.yaml"
	printf 'tolerances:\n  rs: 5%%\n  vs: {min: 22.5, max: 25.5}\n' >>"$work/tol.yaml"
	out=$("$bin" tolerance --bins 8 --seed 1 --trials 10000 "$work/tol.yaml") ||
		fail "'biasline tolerance' exited $?"
	cli_min=$(awk '$1 == "current" { print $4 " " $5; exit }' <<<"$out")
	cli_max=$(awk '$1 == "current" { print $6 " " $7; exit }' <<<"$out")
	cli_bin=$(awk '/current histogram/ { getline; print $NF; exit }' <<<"$out")
	[ -n "$cli_min" ] && [ -n "$cli_bin" ] || { echo "$out"; fail "no CLI worst case or histogram"; }
	start 100 30 "$work/tol.yaml"
	wait_for "Convergence"
	keys T
	wait_for "worst case over 4 corners"
	# Columns nominal, minimum, maximum, as the CLI prints them.
	screen | grep -qE '\| +nominal +minimum +maximum' || fail "columns not nominal, minimum, maximum"
	row=$(screen | grep -oE 'current +[0-9.]+ [munp]?A +[0-9.]+ [munp]?A +[0-9.]+ [munp]?A')
	tmin=$(awk '{ print $4 " " $5 }' <<<"$row")
	tmax=$(awk '{ print $6 " " $7 }' <<<"$row")
	close_to "$(eng "$tmin")" "$(eng "$cli_min")" 1e-4 || fail "worst min $tmin, CLI $cli_min"
	close_to "$(eng "$tmax")" "$(eng "$cli_max")" 1e-4 || fail "worst max $tmax, CLI $cli_max"
	screen | grep -qF "Monte Carlo, 10000" && fail "the trials ran before m"
	keys m
	wait_for "Monte Carlo, 10000 trials"
	bin1=$(screen | grep -oE '[0-9] [munp]?A \|#* +[0-9]+' | head -1 | awk '{ print $NF }')
	[ "$bin1" = "$cli_bin" ] || fail "first bin holds $bin1 trials, CLI says $cli_bin"
	echo "ok: worst case $tmin ... $tmax and first histogram bin $bin1 match the CLI"
	;;
sensitivity)
	# S lists the normalised sensitivities of the point; the % of I per %
	# of RS is the one 'biasline solve --sensitivity' prints.
	out=$("$bin" solve --sensitivity --format csv "$samples/indicator-led-24v.yaml") ||
		fail "'biasline solve --sensitivity' exited $?"
	# Columns by their header names; records end in CR LF (RFC 4180).
	cli_si=$(tr -d '\r' <<<"$out" | awk -F, 'NR == 1 { for (k = 1; k <= NF; k++) c[$k] = k }
		$2 == "rs" { print $c["sens_I"]; exit }')
	[ -n "$cli_si" ] || { echo "$out"; fail "no rs row in the CLI's sensitivities"; }
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys S
	wait_for "Sensitivities at the first operating point"
	si=$(screen | grep -oE ' rs +[0-9.]+ [kM]?ohm +[-+0-9.e]+ +[-+0-9.e]+' |
		awk '{ print $NF; exit }')
	[ -n "$si" ] || { screen; fail "no rs row on screen"; }
	close_to "$si" "$cli_si" 2e-3 || fail "S(I) to rs on screen $si, CLI $cli_si"
	keys Escape
	wait_gone "Sensitivities at the first"
	echo "ok: the sensitivity of I to rs on screen ($si) matches the CLI ($cli_si)"
	;;
sweep)
	# W asks what to sweep, starting from the selected row: RS from RS/10
	# to RS*10 on a log axis; the mark for RS = 3.3k sits between the
	# 1 kohm and 10 kohm ticks (log10 3300 = 3.52); } moves it; Esc goes back.
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys Down W
	wait_for "sweep (parameter FROM..TO, then log or lin) = rs 330ohm..33kohm log"
	keys Enter
	wait_for "I vs RS (log) @ 3.3 kohm"
	wait_for "I^ RS>"
	plot=$(screen | sed -n '2,29p' | cut -c1-56)
	labels=$(tail -1 <<<"$plot")
	grep -qF " 1 kohm" <<<"$labels" && grep -qF "10 kohm" <<<"$labels" ||
		fail "no 1 kohm and 10 kohm labels: $labels"
	# The tick columns of 1k and 10k: the '+' after the corner on the axis.
	axis=$(tail -2 <<<"$plot" | head -1)
	read -r c1 c10 <<<"$(awk '{ n = 0; for (k = 1; k <= length($0); k++)
		if (substr($0, k, 1) == "+" && ++n > 1) printf "%d ", k }' <<<"$axis")"
	[ -n "$c1" ] && [ -n "$c10" ] || fail "no decade ticks on the axis: $axis"
	cat=$(grep -n '@' <<<"$plot" | grep -v 'I vs RS' | head -1)
	[ -n "$cat" ] || fail "no mark on the sweep"
	cm=$(awk -F: '{ print index(substr($0, length($1) + 2), "@") }' <<<"$cat")
	# Log scale: 3.3k is 52 % of the way from 1k to 10k (log10 3.3 = 0.519);
	# one cell of rounding is 4 % of this decade.
	frac=$(awk -v m="$cm" -v a="$c1" -v b="$c10" 'BEGIN { printf "%.3f", (m - a) / (b - a) }')
	close_to "$frac" 0.519 0.1 || fail "mark at $frac of the decade, log10(3.3) = 0.519"
	keys '}'
	wait_for "I vs RS (log) @ 3.6 kohm"
	# Any parameter: the temperature, linear; a bad range says why.
	keys W C-u "temperature -40..125 lin" Enter
	wait_for "I vs T @ 25 degC"
	keys W C-u "temperature 5..5 lin" Enter
	wait_for "FROM and TO are the same"
	keys C-u "vs -5..5 log" Enter
	wait_for "a log sweep needs FROM and TO of one sign"
	keys C-u "nosuch 1..2" Enter
	wait_for "nosuch"
	keys Escape
	keys Escape
	wait_for "I^ V>"
	wait_gone "I vs"
	echo "ok: sweep mark at $frac of the 1k-10k decade; } moved it to 3.6k; T swept; bad ranges refused"
	;;
folds)
	# A tunnel diode behind 300 ohm has a folded curve: swept in VS the
	# circuit jumps up at one value and down at a lower one (hysteresis),
	# the values 'biasline sweep' reports as its folds.
	cp "$samples/tunnel-diode-negative-slope.yaml" "$work/t.yaml"
	out=$("$bin" sweep --set rs=300 --param vs --from 0 --to 1 --points 61 "$work/t.yaml") ||
		fail "'biasline sweep' exited $?"
	nf=$(grep -ciE 'fold' <<<"$out")
	[ "$nf" -ge 1 ] || { echo "$out"; fail "the CLI reports no fold"; }
	start 100 30 "$work/t.yaml"
	wait_for "Convergence"
	keys Down e C-u 300 Enter
	wait_for "RS       300 ohm"
	keys W C-u "vs 0..1 lin" Enter
	wait_for "I vs VS @ 225.85 mV"
	wait_for "':' marks the jumps: at"
	line=$(screen | grep -oE "at [0-9.]+ mV going up, at [0-9.]+ mV going down")
	up=$(awk '{ print $2 }' <<<"$line")
	down=$(awk '{ print $7 }' <<<"$line")
	awk -v u="$up" -v d="$down" 'BEGIN { exit !(u > d) }' || fail "jump up $up mV not above jump down $down mV"
	# The jumps are the CLI's folds: going up at the higher, down at the lower.
	read -r f1 f2 <<<"$(grep -E '^ *fold:' <<<"$out" | grep -oE 'vs = [0-9.]+ mV' | awk '{ print $3 }' | sort -n | tr '\n' ' ')"
	close_to "$up" "$f2" 2e-3 || fail "jump up at $up mV, the CLI's upper fold is $f2 mV"
	close_to "$down" "$f1" 2e-3 || fail "jump down at $down mV, the CLI's lower fold is $f1 mV"
	[ "$(screen | grep -c ':')" -ge 10 ] || fail "no column of ':' on the plot"
	echo "ok: the jumps at $up mV going up and $down mV going down are marked"
	;;
thermal)
	# The runaway sample: H shows the thermal plane, g runs the thermal
	# loop past the 150 degC maximum (G > 1 on the way); an emitter resistor
	# of 1 ohm typed in makes it converge, with G below 1, and the load line
	# below follows the junction; Esc goes back to the load line.
	start 100 30 "$samples/npn-fixed-base-runaway.yaml"
	wait_for "Convergence"
	wait_for "thermal runaway"
	keys H
	wait_for "heat removed"
	wait_for "Diagnosis (thermal loop)"
	wait_for "load line at Tj 40 degC"
	keys Space Space Space
	wait_for "   3 "
	keys g
	wait_for "thermal runaway: the junction passed its maximum"
	wait_for "diverging"
	screen | grep -qE 'diverging: G [0-9.]+ here' ||
		fail "no G at the newest step"
	g=$(screen | grep -oE 'diverging: G [0-9.]+' | awk '{ print $3 }')
	awk -v g="$g" 'BEGIN { exit !(g > 1) }' || fail "G $g is not above 1"
	keys Down Down Down Down Down
	keys e
	wait_for "RE ="
	keys 1 Enter
	wait_for "RE       1 ohm"
	wait_for "Tj "
	keys g
	wait_for "thermal loop converged"
	screen | grep -qE 'G 0\.[0-9]+ at [0-9.]+ degC: stable' ||
		fail "no stable balance"
	tj=$(screen | grep -oE 'converged: Tj = [0-9.]+' | awk '{ print $4 }')
	wait_for "load line at Tj $tj degC"
	keys Escape
	wait_for "I^ V>"
	wait_for "Convergence"
	wait_gone "heat removed"
	echo "ok: ran away with G $g; RE = 1 ohm converged at $tj degC"
	;;
network)
	# A network source lists its parts first; typing a part's value reduces
	# the network again.  Upper divider 68k -> 56k with 22k below it from
	# +15 V and 4.7k to -5 V gives, by Thevenin's theorem (common
	# practice), VS = 15 V x 22/(56 + 22) + 5 V and RS = 56k || 22k + 4.7k.
	cp "$samples/split-supply-bias.yaml" "$work/split.yaml"
	start 100 30 "$work/split.yaml"
	wait_for "Convergence"
	wait_for "upper divider 68 kohm"
	title_point
	before=$TI
	keys Down Down
	keys e
	wait_for "upper divider ="
	keys 56k Enter
	wait_for "upper divider 56 kohm"
	wait_for "[modified]"
	title_point
	[ "$TI" != "$before" ] || fail "the point did not move"
	keys Down Down Down Down
	wait_for "RS (net)"
	wait_for "VS (net)"
	vs=$(screen | grep -oE 'VS \(net\) [0-9.]+ [mk]?V' | awk '{ print $3 " " $4 }')
	rs=$(screen | grep -oE 'RS \(net\) [0-9.]+ [mk]?ohm' | awk '{ print $3 " " $4 }')
	[ -n "$vs" ] && [ -n "$rs" ] || fail "no VS (net) or RS (net) shown"
	close_to "$(eng "$vs")" "$(awk 'BEGIN { printf "%.17g", 15 * 22 / 78 + 5 }')" 1e-4 ||
		fail "VS (net) $vs"
	close_to "$(eng "$rs")" "$(awk 'BEGIN { printf "%.17g", 56e3 * 22e3 / 78e3 + 4.7e3 }')" 1e-4 ||
		fail "RS (net) $rs"
	# The equivalent itself stays read-only; } steps a network resistor.
	keys e
	wait_for "change one of the network"
	keys Up Up Up Up '}'
	wait_for "upper divider 62 kohm"
	# Saving writes the part's new value into the network.
	keys s
	wait_for "saved"
	grep -qE 'resistor: *(62000|62 ?k)' "$work/split.yaml" || fail "the saved file lacks 62k"
	echo "ok: upper divider 56k gives VS (net) $vs, RS (net) $rs; } stepped it to 62k"
	;;
edit)
	# Typing RS = 2.2k moves the point; a bad value is refused and kept.
	start 100 30 "$samples/projection-order-matters.yaml"
	wait_for "Convergence"
	title_point
	before="$TV, $TI"
	keys Down e
	wait_for "RS ="
	keys 2.2x Enter
	wait_for "unknown"
	keys BSpace k Enter
	wait_for "RS       2.2 kohm"
	wait_for "[modified]"
	title_point
	[ "$TV, $TI" != "$before" ] || fail "the point did not move ($before)"
	# Esc cancels a prompt and keeps the value.
	keys e 47 Escape
	wait_for "cancelled"
	wait_for "RS       2.2 kohm"
	echo "ok: point moved from $before to $TV, $TI"
	;;
resize)
	# Axes and the table survive resizes to 80x24 and 200x60; tiny waits.
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys Space Space Space
	wait_for "(3 projections"
	for size in 80x24 200x60 50x15 100x30; do
		tmx resize-window -x "${size%x*}" -y "${size#*x}"
		if [ "$size" = 50x15 ]; then
			wait_for "terminal too small"
			continue
		fi
		wait_gone "terminal too small"
		wait_for "I^ V>"
		# the old frame stays on screen until the new one is drawn: poll
		for ((k = 0; k < 100; k++)); do
			screen | grep -qE '^ *[0-9.]+ [munp]?A\+' &&
				screen | grep -qE '\+-+\+' &&
				table_rows | grep -qE '^ *3 ' && break
			sleep 0.1
		done
		screen | grep -qE '^ *[0-9.]+ [munp]?A\+' || fail "no current axis at $size"
		screen | grep -qE '\+-+\+' || fail "no voltage axis at $size"
		wait_for "Convergence"
		# (the redraw after a resize may still be under way: poll)
		for ((t = 0; t < 50; t++)); do
			table_rows | grep -qE '^ *3 ' && break
			sleep 0.1
		done
		table_rows | grep -qE '^ *3 ' || fail "table lost row 3 at $size"
	done
	echo "ok: axes and table at 80x24, 200x60; too-small screen at 50x15"
	;;
save)
	# Save, quit, reopen: the same state.
	cp "$samples/diode-string-reference.yaml" "$work/string.yaml"
	start 100 30 "$work/string.yaml"
	wait_for "Convergence"
	was=$(screen | grep -oE 'Diagnosis \(V from (line|device)' | awk '{ print $NF }')
	[ -n "$was" ] || fail "no order shown"
	now=line
	[ "$was" = line ] && now=device
	keys o
	wait_for "[modified]"
	wait_for "V from $now"
	keys s
	wait_for "saved"
	wait_gone "[modified]"
	keys q
	wait_exit
	grep -q "order: voltage-from-$now" "$work/string.yaml" ||
		fail "the saved file lacks order voltage-from-$now"
	start 100 30 "$work/string.yaml"
	wait_for "Convergence"
	wait_for "V from $now"
	screen | grep -qF "[modified]" && fail "reopened file shows as modified"
	screen | grep -qF "recovery" && fail "a recovery prompt after a clean save"
	keys q
	wait_exit
	echo "ok: order flipped from $was to $now survived save, quit and reopen"
	;;
hangup)
	# Killing the tmux server (SIGHUP) leaves a recovery file with the edit.
	cp "$samples/projection-order-matters.yaml" "$work/order.yaml"
	start 100 30 "$work/order.yaml"
	wait_for "Convergence"
	keys Down e 2.2k Enter
	wait_for "RS       2.2 kohm"
	tmx kill-server
	for ((k = 0; k < 50; k++)); do
		rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
		[ -n "$rec" ] && break
		sleep 0.1
	done
	[ -n "$rec" ] || fail "no recovery file under $XDG_STATE_HOME/biasline"
	"$bin" check "$rec" >/dev/null || fail "the recovery file is not a valid session"
	grep -qE 'rs: *(2200|2\.2 ?k)' "$rec" || { cat "$rec"; fail "the recovery file lacks rs = 2.2k"; }
	# Reopening offers it back; y restores the edit.
	start 100 30 "$work/order.yaml"
	wait_for "restore them?"
	keys y
	wait_for "RS       2.2 kohm"
	wait_for "[modified]"
	echo "ok: recovery file $(basename "$rec") holds rs = 2.2k and restores"
	;;
saveas)
	# Save-as onto an existing file asks first and no is the default: the
	# file is untouched; y replaces it.  "~/" is the home folder.
	cp "$samples/indicator-led-24v.yaml" "$work/led.yaml"
	echo "someone else's file" >"$HOME/other.yaml"
	before=$(cksum <"$HOME/other.yaml")
	start 80 24 "$work/led.yaml"
	wait_for "Convergence"
	keys Down '}'
	wait_for "[modified]"
	keys A
	wait_for "save as: $work/led.yaml"
	keys C-u
	keys "~/other.yaml" Enter
	wait_for "$HOME/other.yaml exists: replace it? (y/N)"
	keys Enter
	wait_for "not replaced: type another name"
	wait_for "save as: ~/other.yaml"
	[ "$(cksum <"$HOME/other.yaml")" = "$before" ] || fail "Enter (no) changed the file"
	screen | grep -qF "[modified]" || fail "no longer marked modified after no"
	keys Enter
	wait_for "exists: replace it?"
	keys n
	wait_for "not replaced"
	[ "$(cksum <"$HOME/other.yaml")" = "$before" ] || fail "n changed the file"
	keys Enter
	wait_for "exists: replace it?"
	keys y
	wait_for "saved other.yaml"
	wait_gone "[modified]"
	"$bin" check "$HOME/other.yaml" >/dev/null || fail "the replaced file is not a valid session"
	# The session's own file is saved without a question.
	keys '}' A
	wait_for "save as: $HOME/other.yaml"
	keys Enter
	wait_for "saved other.yaml"
	keys q
	wait_exit
	echo "ok: save-as onto an existing file asked; Enter and n kept it, y replaced it"
	;;
picture)
	# P writes the view as SVG named after the session, beside it; an
	# existing picture is replaced only after y, never over the session
	# file; with the sweep open, P writes the sweep.
	cp "$samples/indicator-led-24v.yaml" "$work/led.yaml"
	session=$(cksum <"$work/led.yaml")
	start 80 24 "$work/led.yaml"
	wait_for "Convergence"
	keys Space Space Space
	wait_for "Convergence (3 projections)"
	keys P
	wait_for "wrote the view as $work/led.svg"
	grep -q "<desc>biasline plot area" "$work/led.svg" || fail "led.svg is not the plot"
	if command -v xmllint >/dev/null 2>&1; then
		xmllint --noout "$work/led.svg" || fail "led.svg is not well-formed"
	fi
	echo "ours, not to be lost" >"$work/led.svg"
	before=$(cksum <"$work/led.svg")
	keys P
	wait_for "$work/led.svg exists: replace it? (y/N)"
	keys Enter
	wait_for "not replaced: type another name"
	wait_for "write SVG as: $work/led.svg"
	[ "$(cksum <"$work/led.svg")" = "$before" ] || fail "Enter (no) replaced the picture"
	keys C-u "$work/led.yaml" Enter
	wait_for "that is the session file"
	keys C-u "$work/other.svg" Enter
	wait_for "wrote the view as $work/other.svg"
	grep -q "<desc>biasline plot area" "$work/other.svg" || fail "other.svg is not the plot"
	keys P
	wait_for "exists: replace it? (y/N)"
	keys y
	wait_for "wrote the view as $work/led.svg"
	grep -q "<desc>biasline plot area" "$work/led.svg" || fail "y did not replace led.svg"
	keys Down W
	wait_for "sweep (parameter FROM..TO"
	keys Enter
	wait_for "I vs RS (log)"
	keys P
	wait_for "wrote the view as $work/led-sweep.svg"
	grep -q "source resistance RS" "$work/led-sweep.svg" ||
		grep -q "<title>I vs RS" "$work/led-sweep.svg" || fail "led-sweep.svg is not the sweep"
	[ "$(cksum <"$work/led.yaml")" = "$session" ] || fail "the session file changed"
	keys Escape q
	wait_exit
	# The thermal view's picture is the thermal plane.
	cp "$samples/led-warm-enclosure-self-heating.yaml" "$work/warm.yaml"
	start 80 24 "$work/warm.yaml"
	wait_for "Convergence"
	keys H
	wait_for "heat removed"
	keys P
	wait_for "wrote the view as $work/warm-thermal.svg"
	grep -q "junction temperature" "$work/warm-thermal.svg" ||
		grep -q "<title>$work/warm.yaml</title>" "$work/warm-thermal.svg" ||
		fail "warm-thermal.svg is not the thermal plane"
	keys Escape q
	wait_exit
	echo "ok: P wrote the plot, the sweep and the thermal plane as SVG; an existing file only after y"
	;;
readonly)
	# A save into a folder the user cannot write fails, the session stays
	# open and unsaved, and save-as to another folder then works.  Root
	# may write anywhere, so as root the program runs as nobody.
	run=()
	if [ "$(id -u)" = 0 ]; then
		run=(setpriv --reuid=65534 --regid=65534 --clear-groups --)
		chmod 755 "$work"
		"${run[@]}" test -x "$bin" ||
			{ echo "nobody cannot run $bin: skipped"; exit 77; }
	fi
	mkdir -p "$work/user/ro" "$work/user/rw" "$work/user/state"
	cp "$samples/indicator-led-24v.yaml" "$work/user/ro/led.yaml"
	[ "$(id -u)" = 0 ] && chown -R 65534:65534 "$work/user"
	chmod 555 "$work/user/ro"
	before=$(cksum <"$work/user/ro/led.yaml")
	tmx new-session -d -x 80 -y 24 \
		"exec env HOME=$(printf '%q' "$work/user") XDG_STATE_HOME=$(printf '%q' "$work/user/state") ${run[*]} $(printf '%q ' "$bin" "$work/user/ro/led.yaml") 2>>$(printf '%q' "$work/stderr")" ||
		fail "tmux could not start"
	wait_for "Convergence"
	keys Down '}'
	wait_for "[modified]"
	keys s
	wait_for "not saved"
	wait_for "save as: $work/user/ro/led.yaml"
	screen | grep -qF "[modified]" || fail "not marked modified after the failed save"
	[ "$(cksum <"$work/user/ro/led.yaml")" = "$before" ] || fail "the read-only copy changed"
	ls -A "$work/user/ro" | grep -q '^\.' && fail "a temporary file was left in the folder"
	keys C-u
	keys "~/rw/led.yaml" Enter
	wait_for "saved led.yaml"
	wait_gone "[modified]"
	"$bin" check "$work/user/rw/led.yaml" >/dev/null || fail "the saved copy is not valid"
	grep -qF 'rs: 3.6 kΩ' "$work/user/rw/led.yaml" || fail "the saved copy lacks rs 3.6k"
	keys q
	wait_exit
	echo "ok: save into a read-only folder refused and kept unsaved; saved elsewhere"
	;;
recovery)
	# A recovery file newer than the file is offered at start, the question
	# whole at 80x24 and at 60x15 (where the notice asks for a bigger
	# screen); n sets it aside (kept, no longer offered); one older than
	# the file is set aside without a question.
	cp "$samples/projection-order-matters.yaml" "$work/order.yaml"
	start 100 30 "$work/order.yaml"
	wait_for "Convergence"
	keys Down e 2.2k Enter
	wait_for "RS       2.2 kohm"
	tmx kill-server
	for ((k = 0; k < 50; k++)); do
		rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
		[ -n "$rec" ] && break
		sleep 0.1
	done
	[ -n "$rec" ] || fail "no recovery file"
	for size in 80x24 60x15 40x12; do
		start "${size%x*}" "${size#*x}" "$work/order.yaml"
		wait_for "restore them?"
		text=$(screen | tr '\n' ' ' | tr -s ' ')
		for part in "a recovery file holds unsaved changes from" "newer than the file" \
			"(y restores, n sets the recovery file aside)"; do
			grep -qF "$part" <<<"$text" || fail "at $size the question lacks '$part'"
		done
		screen | awk -v w="${size%x*}" 'length($0) > w { exit 1 }' || fail "a line wider than the screen"
		# q and other keys do not answer it; they say what does.
		keys q
		wait_for "press y or n"
		tmx kill-server
		sleep 0.2
	done
	start 60 15 "$work/order.yaml"
	wait_for "restore them?"
	keys n
	wait_for "recovery file set aside as"
	[ -f "$rec" ] && fail "the recovery file is still offered"
	ls "$XDG_STATE_HOME"/biasline/*.aside-*.yaml >/dev/null 2>&1 || fail "no set-aside copy"
	"$bin" check "$XDG_STATE_HOME"/biasline/*.aside-*.yaml >/dev/null || fail "the set-aside copy is not valid"
	keys q
	wait_exit
	# An older recovery file: the file was saved after it.
	cp "$XDG_STATE_HOME"/biasline/*.aside-*.yaml "$rec"
	touch -d '1 hour ago' "$rec"
	start 80 24 "$work/order.yaml"
	wait_for "the file is newer than its recovery file"
	screen | grep -qF "restore them?" && fail "an older recovery file was offered"
	[ "$(ls "$XDG_STATE_HOME"/biasline/*.aside-*.yaml | wc -l)" -eq 2 ] || fail "the older file was not set aside"
	keys q
	wait_exit
	echo "ok: recovery offered whole at 80x24, 60x15, 40x12; n and an older file set it aside"
	;;
sigquit)
	# Ctrl-\ (SIGQUIT) is handled like SIGTERM: terminal restored, the
	# recovery file written and valid, status 131.
	esc=$(printf '\033')
	cp "$samples/indicator-led-24v.yaml" "$work/led.yaml"
	out=$work/quit.bytes
	tmx new-session -d -x 80 -y 24 \
		"read _; $(printf '%q ' "$bin" "$work/led.yaml") 2>/dev/null; echo \"status=\$?\"; stty -a | tr ' ;' '\n\n' | grep -x -e echo -e -echo -e icanon -e -icanon; read _" ||
		fail "tmux could not start"
	tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
	keys Enter
	wait_for "Convergence"
	keys Down e 1.8k Enter
	wait_for "RS       1.8 kohm"
	t0=$(date +%s%N)
	keys 'C-\'
	wait_for "status=131"
	t1=$(date +%s%N)
	echo "Ctrl-\\ to the shell's prompt: $(( (t1 - t0) / 1000000 )) ms (polled every 100 ms)"
	grep -q "$esc\[?1049l" "$out" || fail "the terminal was not restored after SIGQUIT"
	screen | grep -qx echo || fail "echo is off after SIGQUIT"
	screen | grep -qx icanon || fail "the terminal is left in cbreak mode"
	rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
	[ -n "$rec" ] || fail "no recovery file after SIGQUIT"
	"$bin" check "$rec" >/dev/null || fail "the recovery file is not a valid session"
	grep -qE 'rs: *1800' "$rec" || fail "the recovery file lacks rs = 1.8k"
	keys Enter
	wait_exit
	echo "ok: SIGQUIT restored the terminal, wrote a valid recovery file, status 131"
	;;
interrupt)
	# Ctrl-C is q: with no changes it quits at once; with changes it asks;
	# at the question it answers no, like Esc; in a view it closes the view.
	start 80 24 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys S
	wait_for "Sensitivities at the first"
	keys C-c
	wait_gone "Sensitivities at the first"
	keys Down '}'
	wait_for "[modified]"
	keys C-c
	wait_for "unsaved changes: quit without saving? (y/n)"
	keys C-c
	wait_for "not quitting"
	keys q
	wait_for "quit without saving?"
	keys y
	wait_exit
	start 80 24 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys C-c
	wait_exit
	ls "$XDG_STATE_HOME"/biasline/*.yaml >/dev/null 2>&1 && fail "a recovery file after a clean quit"
	echo "ok: Ctrl-C quits like q, asks when unsaved, cancels the question, closes a view"
	;;
keeptext)
	# Saving a commented file changes only the edited line: comments, units,
	# key order and the notes stay byte for byte; an unchanged save leaves
	# the file identical.  A change to the file behind our back is noticed.
	file=$work/led.yaml
	{
		echo "# Status LED on the 24 V rail - bench notebook p. 12"
		echo "#"
		echo "# R7 was 3.3k on rev A; rev B tries other values."
		echo
		sed '/^#/d' "$samples/indicator-led-24v.yaml" | sed 's/^  rs: .*/  rs: 3.3 kΩ   # R7 on the board/'
	} >"$file"
	cp "$file" "$work/original.yaml"
	start 80 24 "$file"
	wait_for "Convergence"
	keys s
	wait_for "saved led.yaml (nothing had changed)"
	cmp -s "$file" "$work/original.yaml" || fail "an unchanged save changed the file"
	keys Down '}'
	wait_for "RS       3.6 kohm"
	keys s
	wait_for "saved led.yaml: 1 value rewritten, the rest kept as written"
	diff "$work/original.yaml" "$file" >"$work/diff"
	echo "--- diff of the saved file against the original ---"
	cat "$work/diff"
	[ "$(grep -c '^[<>]' "$work/diff")" -eq 2 ] || fail "more than the edited line changed"
	grep -qx '<   rs: 3.3 kΩ   # R7 on the board' "$work/diff" || fail "the old rs line is not the one removed"
	grep -qx '>   rs: 3.6 kΩ   # R7 on the board' "$work/diff" || fail "the new rs line is not in the user's style"
	# Someone edits the file meanwhile: saving asks before replacing it.
	keys '}'
	wait_for "RS       3.9 kohm"
	echo "# a colleague's note" >>"$file"
	keys s
	wait_for "changed on disk since it was read: replace it"
	keys Enter
	wait_for "not replaced"
	grep -qF "# a colleague's note" "$file" || fail "the colleague's edit was lost"
	keys Escape
	keys q
	wait_for "quit without saving?"
	keys y
	wait_exit
	echo "ok: only the rs line changed (3.3 kΩ -> 3.6 kΩ, comment kept); an outside edit was not overwritten"
	;;
bytes)
	# Bytes written for the first full draw and for each Space step.
	out=$work/pane.bytes
	start_piped 100 30 "$out" "" "$samples/diode-string-reference.yaml"
	wait_for "Convergence"
	full=$(settle "$out")
	prev=$full total=0
	for ((s = 1; s <= 10; s++)); do
		keys Space
		wait_for "($s projection"
		now=$(settle "$out")
		total=$((total + now - prev))
		prev=$now
	done
	avg=$((total / 10))
	echo "bytes: first full draw $full, average Space step $avg (100x30)"
	[ "$full" -gt 1000 ] || fail "the full draw is implausibly small ($full bytes)"
	[ $((avg * 100)) -le $((full * 15)) ] || fail "a step costs $avg bytes, over 15% of $full"
	echo "ok: a step costs $((avg * 100 / full))% of the full draw"
	;;
color)
	# Colour codes (setaf 1-6) appear by default, never with NO_COLOR or
	# --no-color; bold and reverse still carry the meaning then.
	esc=$(printf '\033')
	for mode in default NO_COLOR no-color; do
		out=$work/$mode.bytes
		case $mode in
		default) start_piped 100 30 "$out" "" ;;
		NO_COLOR) start_piped 100 30 "$out" "NO_COLOR=1" ;;
		no-color) start_piped 100 30 "$out" "" --no-color ;;
		esac
		wait_for "Convergence"
		settle "$out" >/dev/null
		n=$(grep -c "$esc\[[0-9;]*3[1-6]m" "$out")
		if [ "$mode" = default ]; then
			[ "$n" -gt 0 ] || fail "no colour codes by default"
		else
			[ "$n" -eq 0 ] || fail "$n colour codes with $mode"
			grep -q "$esc\[[0;]*7m" "$out" || fail "no inverted (A_REVERSE) cells with $mode"
		fi
		keys q
		wait_exit
	done
	echo "ok: colour by default, none with NO_COLOR or --no-color"
	;;
signals)
	# SIGTERM with an unsaved edit: recovery file, status 143, terminal
	# restored.  A fatal signal: the handler still restores the terminal.
	esc=$(printf '\033')
	cp "$samples/indicator-led-24v.yaml" "$work/led.yaml"
	out=$work/term.bytes
	tmx new-session -d -x 100 -y 30 \
		"read _; $(printf '%q ' "$bin" "$work/led.yaml") 2>/dev/null; echo \"status=\$?\"; read _" ||
		fail "tmux could not start"
	tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
	keys Enter
	wait_for "Convergence"
	keys Down e 1.8k Enter
	wait_for "RS       1.8 kohm"
	pid=$(pgrep -P "$(pane_pid)" -x biasline || true)
	[ -n "$pid" ] || fail "no biasline process"
	kill -TERM "$pid"
	wait_for "status=143"
	grep -q "$esc\[?1049l" "$out" || fail "the terminal was not restored after SIGTERM"
	ls "$XDG_STATE_HOME"/biasline/*.yaml >/dev/null 2>&1 || fail "no recovery file after SIGTERM"
	keys Enter
	wait_exit
	out=$work/segv.bytes
	start_piped 100 30 "$out" "" "$work/led.yaml"
	wait_for "restore them?"
	pid=$(pane_pid)
	kill -SEGV "$pid"
	wait_exit
	tail -c 200 "$out" | grep -q "$esc\[?1049l" || fail "no reset written after SIGSEGV"
	echo "ok: SIGTERM saved the recovery file and exited 143; SIGSEGV restored the terminal"
	;;
badterm)
	# An unknown TERM gets a clear message and status 69, not a crash.
	tmx new-session -d -x 100 -y 30 \
		"TERM=no-such-terminal-here $(printf '%q ' "$bin"); echo \"status=\$?\"; read _" ||
		fail "tmux could not start"
	wait_for "status=69"
	wait_for "set TERM to e.g. xterm-256color"
	keys Enter
	wait_exit
	echo "ok: unknown TERM: message and status 69"
	;;
idle)
	# Waiting for a key costs no CPU: the read blocks.
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	pid=$(pane_pid)
	t0=$(awk '{ print $14 + $15 }' "/proc/$pid/stat")
	sleep 1
	t1=$(awk '{ print $14 + $15 }' "/proc/$pid/stat")
	echo "CPU ticks while idle for a second: $((t1 - t0))"
	[ $((t1 - t0)) -le 2 ] || fail "the program uses CPU while idle"
	state=$(awk '{ print $3 }' "/proc/$pid/stat")
	[ "$state" = S ] || fail "idle process state is $state, not S (sleeping)"
	echo "ok: asleep in a blocking read while idle"
	;;
ledquestion)
	# The whole question from the front end alone, on one 80x24 screen,
	# from a session without tolerances, ratings or target: RS +-5 %, VS
	# +-10 %, a 10 mA target, a 250 mW resistor; design, apply the nearest
	# E24 value, read its worst case and verdict, save; the saved file
	# differs only by the new sections and RS, and 'biasline design
	# --worst-case' on it gives the same worst case.
	cp "$samples/indicator-led-24v.yaml" "$work/led.yaml"
	grep -qE '^(tolerances|ratings|target):' "$work/led.yaml" && fail "the sample already has the sections"
	start 80 24 "$work/led.yaml"
	wait_for "Convergence"
	keys Down %
	wait_for "tolerance on RS"
	keys C-u 5% Enter
	wait_for "RS       3.3 kohm +-5%"
	keys Up %
	wait_for "tolerance on VS"
	keys C-u 10% Enter
	wait_for "VS       24 V +-10%"
	keys t
	wait_for "target ("
	keys C-u 10mA Enter
	wait_for "target 10 mA: error"
	keys R
	wait_for "rating KEY=VALUE"
	keys C-u resistor_power=250m Enter
	wait_for "Ratings: caution"
	wait_for "RS 145.3 mW"
	keys D
	wait_for "Design: device current 10 mA, solving for RS (E24)"
	wait_for "worst case over the tolerances"
	row=$(screen | grep -E '^ *\| > (lower|higher) ' | tail -1 | sed 's/^ *| > //; s/ *|.*$//')
	[ -n "$row" ] || fail "no chosen row in the worst-case table"
	read -r kind v1 v2 imin1 imin2 imax1 imax2 p1 p2 rest <<<"$row"
	verdict=$(grep -oE '(within rating|caution|over rating|no rating)' <<<"$rest")
	screen | grep -qF "$kind $v1 $v2: RS dissipates" || fail "no worst-case words for the chosen row"
	keys Enter
	wait_for "(the $kind row of the design"
	wait_for "RS       $v1 $v2 +-5%"
	# The verdict at worst, in the tolerance view of the applied design.
	keys T
	wait_for "ratings at worst (each part at its own extreme): $verdict"
	tline=$(screen | grep -oE 'RS dissipates [0-9.]+ mW at worst')
	keys Escape
	wait_gone "Tolerance:"
	keys s
	wait_for "saved led.yaml"
	d=$(diff "$samples/indicator-led-24v.yaml" "$work/led.yaml")
	# Only RS and the three new sections differ.
	changed=$(grep -E '^[<>]' <<<"$d" | grep -vE '^> *(target:|ratings:|tolerances:|current:|resistor_power:|rs:|vs:)' |
		grep -vE '^[<>] +rs: ')
	[ -z "$changed" ] || { echo "$d"; fail "the save changed more than RS and the new sections"; }
	grep -qE '^< +rs: +3.3 k' <<<"$d" && grep -qE '^> +rs: ' <<<"$d" || { echo "$d"; fail "RS not rewritten in place"; }
	"$bin" check "$work/led.yaml" >/dev/null || fail "the saved file does not check"
	out=$("$bin" design --worst-case "$work/led.yaml") || fail "'biasline design --worst-case' exited $?"
	cli=$(awk -v k="$kind" '/worst case over/ { on = 1 } on && $1 == k && $NF != "" { print; exit }' <<<"$out")
	[ -n "$cli" ] || { echo "$out"; fail "no $kind row in the CLI's worst case"; }
	read -r ck cv1 cv2 cn1 cn2 cmin1 cmin2 cmax1 cmax2 cp1 cp2 cverdict <<<"$cli"
	close_to "$(eng "$v1 $v2")" "$(eng "$cv1 $cv2")" 1e-9 || fail "value $v1 $v2, CLI $cv1 $cv2"
	close_to "$(eng "$imin1 $imin2")" "$(eng "$cmin1 $cmin2")" 1e-3 || fail "I min $imin1 $imin2, CLI $cmin1 $cmin2"
	close_to "$(eng "$imax1 $imax2")" "$(eng "$cmax1 $cmax2")" 1e-3 || fail "I max $imax1 $imax2, CLI $cmax1 $cmax2"
	close_to "$(eng "$p1 $p2")" "$(eng "$cp1 $cp2")" 1e-3 || fail "P(RS) max $p1 $p2, CLI $cp1 $cp2"
	[ "${cverdict#$verdict}" != "$cverdict" ] || fail "verdict '$verdict', CLI '$cverdict'"
	grep -qF "$tline" <<<"$("$bin" tolerance "$work/led.yaml")" || fail "'$tline' is not what 'biasline tolerance' says"
	echo "ok: $kind $v1 $v2: I $imin1 $imin2 .. $imax1 $imax2, P(RS) $p1 $p2, $verdict, as 'design --worst-case'; saved"
	;;
zenerdesign)
	# A Zener shunt on a negative supply designed in the front end for a
	# reverse current: the rows and the worst case are the CLI's.
	cp "$samples/zener-shunt-5v1.yaml" "$work/z.yaml"
	out=$("$bin" design --current -8m --worst-case "$work/z.yaml") || fail "'biasline design' exited $?"
	start 80 24 "$work/z.yaml"
	wait_for "Convergence"
	keys D
	wait_for "Design: device current -5 mA, solving for RS (E24)"
	keys t
	wait_for "design: target ("
	keys C-u -8mA Enter
	wait_for "Design: device current -8 mA, solving for RS (E24)"
	row=$(screen | grep -E '^ *\| > (lower|higher) ' | head -1 | sed 's/^ *| > //')
	read -r kind v1 v2 vv1 vv2 i1 i2 rest <<<"$row"
	cli=$(awk -v k="$kind" '$1 == k { print; exit }' <<<"$out")
	grep -qF "(nearest)" <<<"$cli" || { echo "$out"; fail "the chosen $kind row is not the CLI's nearest"; }
	read -r ck cv1 cv2 cvv1 cvv2 ci1 ci2 crest <<<"$cli"
	close_to "$(eng "$v1 $v2")" "$(eng "$cv1 $cv2")" 1e-9 || fail "value $v1 $v2, CLI $cv1 $cv2"
	close_to "$(eng "$i1 $i2")" "$(eng "$ci1 $ci2")" 1e-3 || fail "current $i1 $i2, CLI $ci1 $ci2"
	wrow=$(screen | grep -E '^ *\| > (lower|higher) ' | sed -n 2p | sed 's/^ *| > //')
	read -r wk wv1 wv2 wmin1 wmin2 wrest <<<"$wrow"
	wcli=$(awk -v k="$kind" '/worst case over/ { on = 1 } on && $1 == k { print; exit }' <<<"$out")
	read -r x1 x2 x3 x4 x5 cmin1 cmin2 xrest <<<"$wcli"
	close_to "$(eng "$wmin1 $wmin2")" "$(eng "$cmin1 $cmin2")" 1e-3 || fail "I min $wmin1 $wmin2, CLI $cmin1 $cmin2"
	keys Enter
	wait_for "(the $kind row of the design"
	title_point
	close_to "$(eng "$TI")" "$(eng "$i1 $i2")" 1e-3 || fail "point $TI after applying, the row said $i1 $i2"
	echo "ok: Zener shunt for -8 mA: $kind $v1 $v2 gives $i1 $i2 (CLI $ci1 $ci2), applied"
	;;
networkdesign)
	# A part of a network source designed and swept: D solves for the first
	# resistor (never "RS"), as 'design --solve-for source.network.NAME';
	# W then sweeps that part (its Thevenin resistance is finite).
	cp "$samples/split-supply-bias.yaml" "$work/n.yaml"
	part="source.network.upper divider"
	out=$("$bin" design --current 2m --solve-for "$part" "$work/n.yaml") || fail "'biasline design' exited $?"
	near=$(awk '/\(nearest\)/ { print $1 " " $2 " " $3; exit }' <<<"$out")
	[ -n "$near" ] || { echo "$out"; fail "no nearest row from the CLI"; }
	start 80 24 "$work/n.yaml"
	wait_for "Convergence"
	keys D
	wait_for "design: target ("
	keys C-u 2m Enter
	wait_for "Design: device current 2 mA, solving for upper divider (E24)"
	screen | grep -qF "solving for RS" && fail "the network design claims RS"
	row=$(screen | grep -E '^ *\| > (lower|higher) ' | head -1 | sed 's/^ *| > //')
	read -r kind v1 v2 rest <<<"$row"
	[ "$kind $v1 $v2" = "$near" ] || fail "chosen row $kind $v1 $v2, the CLI's nearest is $near"
	keys Enter
	wait_for "upper divider $v1 $v2"
	title_point
	ci=$(awk -v k="$kind" '$1 == k { print $6 " " $7; exit }' <<<"$out")
	close_to "$(eng "$TI")" "$(eng "$ci")" 1e-3 || fail "point $TI, CLI $ci"
	# Another part by its name: s in the view.
	keys D
	wait_for "Design: device current 2 mA"
	keys s
	wait_for "design: solve for"
	keys C-u "emitter resistor" Enter
	wait_for "solving for emitter resistor (E24)"
	keys Escape
	# The sweep starts at the applied part, a decade either side.
	keys W
	wait_for "sweep (parameter FROM..TO, then log or lin) = upper divider "
	keys Enter
	wait_for "I vs upper divider (log) @ $v1 $v2"
	screen | grep -qF "no finite" && fail "the sweep refused the network"
	echo "ok: network part designed ($kind $v1 $v2, CLI $near), applied and swept"
	;;
fitview)
	# F overlays the points the device was fitted to (device.fitted_to) on
	# its curve with each point's residual; f fits the model to them and
	# the parameters and residuals are those of 'biasline fit'.  A measured
	# device's own points are fitted with a model typed at the prompt, the
	# fit taken and undone.
	cp "$samples/amber-panel-led.yaml" "$samples/amber-panel-led.csv" "$work/"
	out=$("$bin" fit --model led --points "$work/amber-panel-led.csv") || fail "'biasline fit' exited $?"
	cres=$(awk '$1 == "1" && $2 ~ /^[0-9]+$/ { print $(NF - 1); exit }' <<<"$out")
	cvf=$(awk '$1 == "forward_voltage" { print $2 " " $3; exit }' <<<"$out")
	[ -n "$cres" ] && [ -n "$cvf" ] || { echo "$out"; fail "no residual or forward_voltage from the CLI"; }
	start 80 24 "$work/amber-panel-led.yaml"
	wait_for "Convergence"
	keys F
	wait_for "Points and residuals"
	wait_for "11 points of"
	[ "$(screen | cut -c1-47 | grep -o 'x' | wc -l)" -ge 8 ] || fail "fewer than 8 points marked on the plot"
	wait_for "the led: RMS"
	keys f
	wait_for "fit: RMS 1.5 %, 8 dof"
	tres=$(screen | grep -E '^\| .* 1\.702 V +500 uA' | grep -oE '[-+][0-9.]+ %' | head -1 | awk '{ print $1 }')
	close_to "$tres" "$cres" 0.02 || fail "first residual $tres %, CLI $cres %"
	tvf=$(screen | grep -oE 'Vf [0-9.]+ [mk]?V' | awk '{ print $2 " " $3 }')
	close_to "$(eng "$tvf")" "$(eng "$cvf")" 1e-4 || fail "Vf $tvf, CLI $cvf"
	keys Escape
	wait_gone "Points and residuals"
	tmx kill-server
	# The measured device: its own points, fitted with a typed model.
	start 80 24 "$samples/measured-diode-curve.yaml"
	wait_for "Convergence"
	keys F
	wait_for "the measured device's 9 points"
	keys f
	wait_for "fit which model"
	keys C-u diode Enter
	wait_for "fit: RMS"
	keys Enter
	wait_for "the device is the fitted diode now"
	wait_for "Parameters (diode)"
	keys u
	wait_for "undone: the device is the measured again"
	wait_for "Parameters (measured)"
	tmx kill-server
	# A device with no points says how to get them.
	start 80 24 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys F
	wait_for "device.fitted_to"
	echo "ok: fitted points shown; residual $tres % (CLI $cres %), Vf $tvf (CLI $cvf); measured points fitted and undone"
	;;
valgrind)
	command -v valgrind >/dev/null 2>&1 || { echo "valgrind not found: skipped"; exit 77; }
	log=$work/valgrind.log
	tmx new-session -d -x 100 -y 30 \
		"exec valgrind --error-exitcode=1 --leak-check=full --errors-for-leak-kinds=definite --log-file=$(printf '%q' "$log") $(printf '%q ' "$bin" "$samples/indicator-led-24v.yaml")"
	wait_for "Convergence" 1500
	keys Space Space
	wait_for "(2 projections" 1000
	keys g
	wait_for "after" 1000
	keys o Down e 4.7k Enter
	wait_for "RS       4.7 kohm" 1000
	tmx resize-window -x 80 -y 24
	wait_for "Convergence" 1000
	keys '?'
	wait_for "Keys (any key" 1000
	keys x q
	wait_for "quit without saving" 1000
	keys y
	wait_exit
	for ((k = 0; k < 100; k++)); do
		grep -q "ERROR SUMMARY" "$log" 2>/dev/null && break
		sleep 0.1
	done
	grep -q "ERROR SUMMARY: 0 errors" "$log" || { cat "$log"; fail "valgrind found errors"; }
	grep -E "definitely lost|ERROR SUMMARY" "$log" | sed 's/^==[0-9]*== *//'
	echo "ok: valgrind clean over a scripted session"
	;;
*)
	echo "unknown scenario $scenario"
	exit 2
	;;
esac
if [ -s "$work/stderr" ]; then
	echo "--- stderr of the program ---"
	cat "$work/stderr"
fi
exit 0
