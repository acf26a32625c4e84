#!/bin/bash
# run.sh - end-to-end tests of the terminal front end through tmux.
#
# Usage: run.sh SCENARIO BIASLINE SAMPLES_DIR
#
# Each scenario starts the real program in a private tmux server (its own
# socket, HOME and XDG_STATE_HOME under a temporary folder), sends keys and
# reads the screen with capture-pane.  Waits poll with short sleeps and a
# bounded number of tries; nothing asserts on time.  Exit 77 = skipped.
#
# Writing a scenario: add NAME) ... ;; below and NAME to tests/e2e/meson.build.
#   start W H ARGS...      the program in a new private server (retried while
#                          tmux is still shutting an old one down)
#   keys K...              tmux key names: keys Down e 2.2k Enter
#   wait_for TEXT, wait_gone TEXT    poll until the text is (not) on screen
#   expect CHECK ARGS...   poll the screen until CHECK passes; CHECK reads
#                          the capture in $SHOT, returns 1 (setting WHY) while
#                          the state is not there yet: has, has_re, lacks,
#                          title_point (sets TV, TI), has_row, or a function
#                          of your own that reads only $SHOT, e.g.
#       rows() { has "Design:" || return 1
#                got=$(grep -oE 'higher +[0-9.]+ kohm' <<<"$SHOT")
#                [ -n "$got" ] || { WHY="no higher row"; return 1; }; }
#       expect rows
#   Read values from $SHOT inside the check and compare them there, so an
#   old or half-drawn frame means another poll, never a failure; after an
#   expect (or wait_for) $SHOT holds the capture that passed.  Never call
#   screen and grep it once, never sleep a fixed time.  stop_server ends
#   the program (SIGHUP) and waits until it has exited; fail MESSAGE fails.
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
# Every start gets a tmux server of its own (tmux.1.sock, tmux.2.sock, ...):
# a server still shutting down after the previous program exited or after
# kill-server is never asked to start the next one.
nserver=0
sock=$work/tmux.0.sock

# How many times a wait polls the screen (0.1 s apart, plus the time a
# capture takes): generous, because the machine may be shared, loaded and
# running the program under a sanitizer.  Only a failing test waits that
# long; nothing asserts on time.
TRIES=${BIASLINE_E2E_TRIES:-600}

# tmux on the current private server, ignoring any user configuration.
tmx() { tmux -S "$sock" -f /dev/null "$@"; }

# Stop the current server and wait (bounded) until the programs of its
# panes have exited: one that got SIGHUP may still be writing its recovery
# file.  Zombies count as exited.
stop_server() {
	local pids p k alive
	pids=$(tmx list-panes -a -F '#{pane_pid}' 2>/dev/null)
	tmx kill-server >/dev/null 2>&1
	for ((k = 0; k < TRIES; k++)); do
		alive=0
		for p in $pids; do
			ps -o stat= -s "$p" 2>/dev/null | grep -qv '^Z' && alive=1
		done
		[ "$alive" = 0 ] && return 0
		sleep 0.1
	done
	echo "note: the programs of $sock did not exit"
	return 1
}

# Stop every server this test started, then remove the work folder.
cleanup() {
	local s
	for s in "$work"/tmux.*.sock; do
		[ -S "$s" ] || continue
		sock=$s
		stop_server
	done
	rm -rf "$work"
}
trap cleanup EXIT

fail() { echo "FAIL: $*"; echo "--- screen ---"; screen; exit 1; }

# The visible screen as text.
screen() { tmx capture-pane -p 2>/dev/null; }

# Start a new private server with one session: new_server NEW-SESSION-ARGS...
# A try that fails (a loaded machine can make the client give up on a
# server that is still starting: "server exited unexpectedly") is retried
# on a fresh socket, a bounded number of times.
new_server() {
	local k err
	for ((k = 1; k <= 10; k++)); do
		nserver=$((nserver + 1))
		sock=$work/tmux.$nserver.sock
		err=$(tmx new-session -d "$@" 2>&1) && return 0
		echo "note: tmux new-session, try $k: ${err:-failed}"
		stop_server
		sleep 0.5
	done
	fail "tmux could not start: $err"
}

# Start the program in a W x H window: start W H ARGS...
start() {
	local w=$1 h=$2; shift 2
	new_server -x "$w" -y "$h" \
		"exec $(printf '%q ' "$bin" "$@") 2>>$(printf '%q' "$work/stderr")"
}

# No screen of the suite shows a NaN or an infinity to a person.
no_nan() {
	grep -qiE '(^|[^a-z])-?(nan|inf)([^a-z]|$)' <<<"$SHOT" &&
		fail "nan or inf on screen"
	return 0
}

# Poll the screen until CHECK ARGS... succeeds with the capture in SHOT;
# after TRIES captures, fail with the check's last reason (WHY).  Checks
# look at one capture as a whole, so a frame that is still being drawn
# (the old frame, or part of the new one) only means another poll.
expect() {
	local k
	WHY=""
	for ((k = 0; k < TRIES; k++)); do
		SHOT=$(screen)
		if "$@"; then
			no_nan
			return 0
		fi
		sleep 0.1
	done
	fail "${WHY:-$*}"
}

# Checks on SHOT for expect: the fixed string, the extended regular
# expression, or neither of them.
has() { grep -qF -- "$1" <<<"$SHOT" || { WHY="did not see '$1'"; return 1; }; }
has_re() { grep -qE -- "$1" <<<"$SHOT" || { WHY="did not see /$1/"; return 1; }; }
lacks() { ! grep -qF -- "$1" <<<"$SHOT" || { WHY="still see '$1'"; return 1; }; }

# Wait until the screen contains TEXT (fixed string): wait_for TEXT.
wait_for() { expect has "$1"; }

# Wait until the screen does not contain TEXT.
wait_gone() { expect lacks "$1"; }

# Wait until the program in the current server has exited (its session,
# and with it the server, is gone).
wait_exit() {
	local k
	for ((k = 0; k < TRIES; k++)); do
		tmx has-session >/dev/null 2>&1 || return 0
		sleep 0.1
	done
	fail "the program did not exit"
}

# Wait until the file FILE holds the extended regular expression RE.
wait_file() {
	local file=$1 re=$2 k
	for ((k = 0; k < TRIES; k++)); do
		grep -qE -- "$re" "$file" 2>/dev/null && return 0
		sleep 0.1
	done
	return 1
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

# The operating point in the title bar of SHOT: sets TV and TI (as
# displayed); a check for expect.
title_point() {
	local line
	line=$(head -1 <<<"$SHOT")
	TV=$(sed -n 's/.*point \([^,]*\), \([^ ]* [^ ]*\).*/\1/p' <<<"$line")
	TI=$(sed -n 's/.*point \([^,]*\), \([^ ]* [^ ]*\).*/\2/p' <<<"$line")
	[ -n "$TV" ] && [ -n "$TI" ] || { WHY="no operating point in the title"; return 1; }
}

# The title's point differs from BEFORE ("V, I"): a check for expect.
point_moved() {
	title_point || return 1
	[ "$TV, $TI" != "$1" ] || { WHY="the point did not move from $1"; return 1; }
}

# The title's current differs from BEFORE: a check for expect.
current_moved() {
	title_point || return 1
	[ "$TI" != "$1" ] || { WHY="the current did not move from $1"; return 1; }
}

# Rows of the convergence table in SHOT: lines of the side pane after its
# header.
table_rows() {
	awk -F'|' 'NF > 1 { print $NF }' <<<"$SHOT" |
		awk '/^ *k +V\(V\) +I\(A\)/ { on = 1; next } on && /^ *[0-9]+ / { print }'
}

# The table in SHOT has row K: a check for expect.
has_row() {
	table_rows | grep -qE "^ *$1 " || { WHY="no table row $1"; return 1; }
}

# The table in SHOT lacks row K: a check for expect.
lacks_row() {
	! table_rows | grep -qE "^ *$1 " || { WHY="table row $1 still shown"; return 1; }
}

# Start with pipe-pane capturing the program's output into OUT from its
# first byte: start_piped W H OUT ENV ARGS... (ENV: "" or VAR=value).
start_piped() {
	local w=$1 h=$2 out=$3 envset=$4; shift 4
	new_server -x "$w" -y "$h" \
		"read _; exec env $envset $(printf '%q ' "$bin" "$@") 2>>$(printf '%q' "$work/stderr")"
	tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
	keys Enter
}

# The program's process id (the pane runs it with exec).
pane_pid() { tmx display -p '#{pane_pid}'; }

# Wait until the file OUT holds the first full draw (its last row, the
# first key hint "Space steps, g runs, ? lists every key", is written last)
# and then stops growing; prints its size.  pipe-pane copies what the
# program writes asynchronously, so the file may lag the screen.
settle() {
	local out=$1 last=-1 same=0 size k
	wait_file "$out" 'lists every key' || fail "$out never held the first key hint"
	for ((k = 0; k < 100 && same < 5; k++)); do
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
	# The rows sit below the table's header: wait for the whole table.
	ten_rows() {
		local k n
		for ((k = 1; k <= 10; k++)); do
			has_row "$k" || return 1
		done
		n=$(table_rows | grep -cE '^ *([1-9]|10) ')
		[ "$n" -eq 10 ] || { WHY="expected 10 step rows, found $n"; return 1; }
		has_re "predicted: spirals in, \|g'\| = [0-9.e-]+"
	}
	expect ten_rows
	# The error ratio in the newest row approaches the predicted g' (a
	# spiral: negative), as the contraction-mapping theorem says (Burden &
	# Faires, Numerical Analysis, 9th ed., 2010, sec. 2.2).
	g=$(grep -oE "predicted: spirals in, \|g'\| = [0-9.e-]+" <<<"$SHOT" | awk '{ print $NF }')
	ratio=$(table_rows | tail -1 | awk '{ print $6 }')
	close_to "$ratio" "-$g" 0.05 || fail "ratio $ratio is not near the predicted -$g"
	echo "ok: newest ratio $ratio, predicted g' -$g"
	# Stepping back removes the newest row.
	keys b
	wait_for "(9 projections"
	expect lacks_row 10
	echo "ok: ten steps, ten rows; b removed the newest"
	;;
converge)
	# Running to convergence ends on the solved point.
	file=$samples/indicator-led-24v.yaml
	start 100 30 "$file"
	wait_for "Convergence"
	keys g
	wait_for "converged after"
	# The table's last row and the title show the same point.
	same_point() {
		title_point || return 1
		last=$(table_rows | tail -1)
		rv=$(awk '{ print $2 }' <<<"$last")
		ri=$(awk '{ print $3 }' <<<"$last")
		close_to "$(eng "$rv")" "$(eng "$TV")" 5e-4 || { WHY="last row V $rv vs point $TV"; return 1; }
		close_to "$(eng "$ri")" "$(eng "$TI")" 5e-4 || { WHY="last row I $ri vs point $TI"; return 1; }
	}
	expect same_point
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
	tail -1 <<<"$SHOT" | grep -q "converged" && fail "the demo converged in the diverging order"
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
	plot() { sed -n '2,22p' <<<"$SHOT" | cut -c1-47; }
	step_in_view() {
		has "($1 projection" || return 1
		plot | grep -q '=' || { WHY="step $1: the newest segment is not in the plot"; return 1; }
	}
	for ((k = 1; k <= 6; k++)); do
		keys Space
		expect step_in_view "$k"
	done
	keys o
	flipped() { has "order: voltage from the device" && has "predicted: spirals in" &&
		has "(0 projection"; }
	expect flipped
	prev=$(plot)
	changed() {
		has "($1 projection" || return 1
		now=$(plot)
		[ "$now" != "$prev" ] || { WHY="step $1 after the flip did not change the plot"; return 1; }
	}
	for ((k = 1; k <= 4; k++)); do
		keys Space
		expect changed "$k"
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
	three_points() {
		local side p
		side=$(cut -c51- <<<"$SHOT")
		for p in 1 2 3; do
			grep -qE "^${p}[ >] " <<<"$side" || { WHY="point $p is not listed"; return 1; }
		done
		grep -qE '^2[ >] .*unstable' <<<"$side" || { WHY="the middle point is not unstable"; return 1; }
		[ "$(grep -cE '^[13][ >] .*stable' <<<"$side")" = 2 ] ||
			{ WHY="the outer points are not stable"; return 1; }
	}
	expect three_points
	last=""
	diagnosis_of() {
		has "point $1 of 3" || return 1
		d=$(cut -c51- <<<"$SHOT" | awk '/- Diagnosis/ { on = 1 } /- Convergence/ { on = 0 } on')
		grep -q "at point $1" <<<"$d" || { WHY="the diagnosis does not speak of point $1"; return 1; }
		[ "$d" != "$last" ] || { WHY="selecting point $1 did not change the diagnosis"; return 1; }
	}
	for p in 2 3 1; do
		keys p
		expect diagnosis_of "$p"
		last=$d
	done
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
	wrapped() {
		local bar side
		bar=$(sed -n '2,23p' <<<"$SHOT" | cut -c49 | sort -u)
		[ "$bar" = "|" ] || { WHY="the side pane's bar is not at column 49"; return 1; }
		side=$(sed -n '2,23p' <<<"$SHOT" | cut -c51-)
		# The diagnosis box as one line, wrapped lines joined with blanks.
		box=$(awk '/- Diagnosis/ { on = 1; next } /- Convergence/ { on = 0 }
			on { sub(/^ +/, ""); sub(/ +$/, ""); printf "%s ", $0 }' <<<"$side")
		grep -qF "the other order contracts with |g'| = 0.0118: switch to voltage-from-device" <<<"$box" ||
			{ WHY="the remedy is not shown whole: $box"; return 1; }
		grep -qF "Is       110e-21 A" <<<"$side" || { WHY="Is not in short form"; return 1; }
	}
	expect wrapped
	tmx resize-window -x 100 -y 30
	row_zero() {
		has "step  ratio" || return 1
		row0=$(table_rows | grep -E '^ *0 ')
		[ "$(awk '{ print $5 }' <<<"$row0")" = "-" ] || { WHY="row 0 step is not '-': $row0"; return 1; }
	}
	expect row_zero
	grep -q nan <<<"$row0" && fail "row 0 shows nan: $row0"
	echo "ok: the remedy wraps whole at 80x24; row 0 step '-'; Is as 110e-21 A"
	;;
extra)
	# A transistor's results beyond V and I show under the operating point:
	# its region and the collector current, which in the active region is
	# beta times the base current (IC = beta IB, common practice).
	start 100 30 "$samples/npn-divider-bias.yaml"
	wait_for "Convergence"
	ic_shown() {
		has "active" && title_point || return 1
		ic=$(grep -oE 'IC [0-9.]+ [munp]?A' <<<"$SHOT" | head -1 | cut -c4-)
		[ -n "$ic" ] || { WHY="no IC shown"; return 1; }
	}
	expect ic_shown
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
	expect title_point
	before=$TI
	keys Down '}'
	wait_for "RS       3.6 kohm"
	wait_for "(E24)"
	wait_for "[modified]"
	expect current_moved "$before"
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
	tcli=$(awk '$1 == "higher" { print $6 " " $7; exit }' <<<"$out")
	start 100 30 "$file"
	wait_for "Convergence"
	keys D
	wait_for "design: target ("
	keys 10m Enter
	design_rows() {
		has "Design: device current 10 mA, solving for RS (E24)" || return 1
		has_re ' exact +[0-9.]+ [kM]?ohm' || { WHY="no exact row"; return 1; }
		has_re ' lower +[0-9.]+ [kM]?ohm' || { WHY="no lower row"; return 1; }
		got=$(grep -oE 'higher +[0-9.]+ [kM]?ohm' <<<"$SHOT" | awk '{ print $2 " " $3 }')
		close_to "$(eng "$got")" "$(eng "$want")" 1e-9 || { WHY="higher row $got, CLI says $want"; return 1; }
		# The nearer standard value is chosen first (the CLI's nearest).
		has_re '> higher +[0-9.]+ [kM]?ohm.*nearest' || { WHY="higher is not chosen first"; return 1; }
		has "no tolerances: % on a value adds one" || { WHY="no word on the missing tolerances"; return 1; }
	}
	expect design_rows
	keys Enter
	wait_for "(the higher row of the design"
	wait_gone "Design: device current"
	wait_for "RS       $got"
	wait_for "[modified]"
	applied() {
		has "RS       $got" && title_point || return 1
		close_to "$(eng "$TI")" "$(eng "$tcli")" 1e-4 || { WHY="point $TI after applying, CLI says $tcli"; return 1; }
	}
	expect applied
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
	grep -qF "Design: device" <<<"$SHOT" && fail "a resistance was taken as a target"
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
	stop_server
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
	worst_case() {
		has "worst case over 4 corners" || return 1
		# Columns nominal, minimum, maximum, as the CLI prints them.
		has_re '\| +nominal +minimum +maximum' || { WHY="columns not nominal, minimum, maximum"; return 1; }
		row=$(grep -oE 'current +[0-9.]+ [munp]?A +[0-9.]+ [munp]?A +[0-9.]+ [munp]?A' <<<"$SHOT")
		tmin=$(awk '{ print $4 " " $5 }' <<<"$row")
		tmax=$(awk '{ print $6 " " $7 }' <<<"$row")
		close_to "$(eng "$tmin")" "$(eng "$cli_min")" 1e-4 || { WHY="worst min $tmin, CLI $cli_min"; return 1; }
		close_to "$(eng "$tmax")" "$(eng "$cli_max")" 1e-4 || { WHY="worst max $tmax, CLI $cli_max"; return 1; }
	}
	expect worst_case
	grep -qF "Monte Carlo, 10000" <<<"$SHOT" && fail "the trials ran before m"
	keys m
	first_bin() {
		has "Monte Carlo, 10000 trials" || return 1
		bin1=$(grep -oE '[0-9] [munp]?A \|#* +[0-9]+' <<<"$SHOT" | head -1 | awk '{ print $NF }')
		[ "$bin1" = "$cli_bin" ] || { WHY="first bin holds $bin1 trials, CLI says $cli_bin"; return 1; }
	}
	expect first_bin
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
	rs_row() {
		has "Sensitivities at the first operating point" || return 1
		si=$(grep -oE ' rs +[0-9.]+ [kM]?ohm +[-+0-9.e]+ +[-+0-9.e]+' <<<"$SHOT" |
			awk '{ print $NF; exit }')
		[ -n "$si" ] || { WHY="no rs row on screen"; return 1; }
		close_to "$si" "$cli_si" 2e-3 || { WHY="S(I) to rs on screen $si, CLI $cli_si"; return 1; }
	}
	expect rs_row
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
	sweep_mark() {
		local plot labels axis at cm
		has "I vs RS (log) @ 3.3 kohm" && has "I^ RS>" || return 1
		plot=$(sed -n '2,29p' <<<"$SHOT" | cut -c1-56)
		labels=$(tail -1 <<<"$plot")
		grep -qF " 1 kohm" <<<"$labels" && grep -qF "10 kohm" <<<"$labels" ||
			{ WHY="no 1 kohm and 10 kohm labels: $labels"; return 1; }
		# The tick columns of 1k and 10k: the '+' after the corner on the axis.
		axis=$(tail -2 <<<"$plot" | head -1)
		read -r c1 c10 <<<"$(awk '{ n = 0; for (k = 1; k <= length($0); k++)
			if (substr($0, k, 1) == "+" && ++n > 1) printf "%d ", k }' <<<"$axis")"
		[ -n "$c1" ] && [ -n "$c10" ] || { WHY="no decade ticks on the axis: $axis"; return 1; }
		at=$(grep -n '@' <<<"$plot" | grep -v 'I vs RS' | head -1)
		[ -n "$at" ] || { WHY="no mark on the sweep"; return 1; }
		cm=$(awk -F: '{ print index(substr($0, length($1) + 2), "@") }' <<<"$at")
		# Log scale: 3.3k is 52 % of the way from 1k to 10k (log10 3.3 =
		# 0.519); one cell of rounding is 4 % of this decade.
		frac=$(awk -v m="$cm" -v a="$c1" -v b="$c10" 'BEGIN { printf "%.3f", (m - a) / (b - a) }')
		close_to "$frac" 0.519 0.1 || { WHY="mark at $frac of the decade, log10(3.3) = 0.519"; return 1; }
	}
	expect sweep_mark
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
	jumps() {
		has "I vs VS @ 225.85 mV" && has "':' marks the jumps: at" || return 1
		line=$(grep -oE "at [0-9.]+ mV going up, at [0-9.]+ mV going down" <<<"$SHOT")
		[ -n "$line" ] || { WHY="no jump going up and down"; return 1; }
		[ "$(grep -c ':' <<<"$SHOT")" -ge 10 ] || { WHY="no column of ':' on the plot"; return 1; }
	}
	expect jumps
	up=$(awk '{ print $2 }' <<<"$line")
	down=$(awk '{ print $7 }' <<<"$line")
	awk -v u="$up" -v d="$down" 'BEGIN { exit !(u > d) }' || fail "jump up $up mV not above jump down $down mV"
	# The jumps are the CLI's folds: going up at the higher, down at the lower.
	read -r f1 f2 <<<"$(grep -E '^ *fold:' <<<"$out" | grep -oE 'vs = [0-9.]+ mV' | awk '{ print $3 }' | sort -n | tr '\n' ' ')"
	close_to "$up" "$f2" 2e-3 || fail "jump up at $up mV, the CLI's upper fold is $f2 mV"
	close_to "$down" "$f1" 2e-3 || fail "jump down at $down mV, the CLI's lower fold is $f1 mV"
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
	expect has_re 'diverging: G [0-9.]+ here'
	g=$(grep -oE 'diverging: G [0-9.]+' <<<"$SHOT" | awk '{ print $3 }')
	awk -v g="$g" 'BEGIN { exit !(g > 1) }' || fail "G $g is not above 1"
	keys Down Down Down Down Down
	keys e
	wait_for "RE ="
	keys 1 Enter
	wait_for "RE       1 ohm"
	wait_for "Tj "
	keys g
	balance() {
		has "thermal loop converged" || return 1
		has_re 'G 0\.[0-9]+ at [0-9.]+ degC: stable' || { WHY="no stable balance"; return 1; }
		has_re 'converged: Tj = [0-9.]+'
	}
	expect balance
	tj=$(grep -oE 'converged: Tj = [0-9.]+' <<<"$SHOT" | awk '{ print $4 }')
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
	expect title_point
	before=$TI
	keys Down Down
	keys e
	wait_for "upper divider ="
	keys 56k Enter
	wait_for "upper divider 56 kohm"
	wait_for "[modified]"
	expect current_moved "$before"
	keys Down Down Down Down
	wait_for "RS (net)"
	equivalent() {
		has "VS (net)" && has "RS (net)" || return 1
		vs=$(grep -oE 'VS \(net\) [0-9.]+ [mk]?V' <<<"$SHOT" | awk '{ print $3 " " $4 }')
		rs=$(grep -oE 'RS \(net\) [0-9.]+ [mk]?ohm' <<<"$SHOT" | awk '{ print $3 " " $4 }')
		[ -n "$vs" ] && [ -n "$rs" ] || { WHY="no VS (net) or RS (net) shown"; return 1; }
		close_to "$(eng "$vs")" "$(awk 'BEGIN { printf "%.17g", 15 * 22 / 78 + 5 }')" 1e-4 ||
			{ WHY="VS (net) $vs"; return 1; }
		close_to "$(eng "$rs")" "$(awk 'BEGIN { printf "%.17g", 56e3 * 22e3 / 78e3 + 4.7e3 }')" 1e-4 ||
			{ WHY="RS (net) $rs"; return 1; }
	}
	expect equivalent
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
	expect title_point
	before="$TV, $TI"
	keys Down e
	wait_for "RS ="
	keys 2.2x Enter
	wait_for "unknown"
	keys BSpace k Enter
	wait_for "RS       2.2 kohm"
	wait_for "[modified]"
	expect point_moved "$before"
	# Esc cancels a prompt and keeps the value.
	keys e 47 Escape
	wait_for "cancelled"
	wait_for "RS       2.2 kohm"
	echo "ok: point moved from $before to $TV, $TI"
	;;
resize)
	# Axes and the table survive resizes to 80x24 and 200x60; below 80x24
	# the notice says so, whole and within the width, down to 40x12.
	start 100 30 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys Space Space Space
	wait_for "(3 projections"
	# One whole frame at W x H, neither the old one nor one half drawn:
	# the title spans the width, every row between it and the key hint on
	# the last row has the side pane's bar at its column, both axes are
	# there and the table still has row 3.
	whole_frame() {
		local w=$1 h=$2 side
		side=$((w >= 140 ? 52 : w >= 100 ? 44 : 32))
		[ "$(wc -l <<<"$SHOT")" -eq "$h" ] || { WHY="not $h rows"; return 1; }
		awk -v w="$w" -v h="$h" -v bar=$((w - side + 1)) '
			NR == 1 && (length($0) < w - 1 || $0 !~ /\? help$/) { bad = 1 }
			NR > 1 && NR < h && substr($0, bar, 1) != "|" { bad = 1 }
			NR == h && $0 !~ /^Space step/ { bad = 1 }
			END { exit bad }' <<<"$SHOT" || { WHY="no whole frame at ${w}x$h"; return 1; }
		has_re '^ *[0-9.]+ [munp]?A\+' || { WHY="no current axis at ${w}x$h"; return 1; }
		has_re '\+-+\+' || { WHY="no voltage axis at ${w}x$h"; return 1; }
		has "Convergence" || return 1
		has_row 3 || { WHY="table lost row 3 at ${w}x$h"; return 1; }
	}
	# The notice for the size W x H, every line within the width.
	too_small() {
		local w=$1 h=$2
		has "terminal too small: ${w}x$h" && has "needs at least 80x24" &&
			has "resize the window, or press q to quit" || return 1
		awk -v w="$w" 'length($0) > w { exit 1 }' <<<"$SHOT" ||
			{ WHY="a line wider than $w"; return 1; }
	}
	for size in 80x24 200x60 50x15 40x12 100x30; do
		w=${size%x*} h=${size#*x}
		tmx resize-window -x "$w" -y "$h"
		if [ "$w" -lt 80 ]; then
			expect too_small "$w" "$h"
		else
			expect whole_frame "$w" "$h"
		fi
	done
	echo "ok: axes and table at 80x24, 200x60; the too-small notice whole at 50x15, 40x12"
	;;
save)
	# Save, quit, reopen: the same state.
	cp "$samples/diode-string-reference.yaml" "$work/string.yaml"
	start 100 30 "$work/string.yaml"
	wait_for "Convergence"
	expect has_re 'Diagnosis \(V from (line|device)'
	was=$(grep -oE 'Diagnosis \(V from (line|device)' <<<"$SHOT" | awk '{ print $NF }')
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
	grep -qF "[modified]" <<<"$SHOT" && fail "reopened file shows as modified"
	grep -qF "recovery" <<<"$SHOT" && fail "a recovery prompt after a clean save"
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
	# the program writes its recovery file before it exits
	stop_server || fail "the program did not exit after SIGHUP"
	rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
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
	wait_for "[modified]"
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
	new_server -x 80 -y 24 \
		"exec env HOME=$(printf '%q' "$work/user") XDG_STATE_HOME=$(printf '%q' "$work/user/state") ${run[*]} $(printf '%q ' "$bin" "$work/user/ro/led.yaml") 2>>$(printf '%q' "$work/stderr")"
	wait_for "Convergence"
	keys Down '}'
	wait_for "[modified]"
	keys s
	wait_for "not saved"
	wait_for "save as: $work/user/ro/led.yaml"
	wait_for "[modified]"
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
	# the program writes its recovery file before it exits
	stop_server || fail "the program did not exit after SIGHUP"
	rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
	[ -n "$rec" ] || fail "no recovery file"
	for size in 80x24 60x15 40x12; do
		start "${size%x*}" "${size#*x}" "$work/order.yaml"
		question_whole() {
			local text part
			has "restore them?" || return 1
			text=$(tr '\n' ' ' <<<"$SHOT" | tr -s ' ')
			for part in "a recovery file holds unsaved changes from" "newer than the file" \
				"(y restores, n sets the recovery file aside)"; do
				grep -qF "$part" <<<"$text" || { WHY="at $size the question lacks '$part'"; return 1; }
			done
			awk -v w="${size%x*}" 'length($0) > w { exit 1 }' <<<"$SHOT" ||
				{ WHY="a line wider than the screen"; return 1; }
		}
		expect question_whole
		# q and other keys do not answer it; they say what does.
		keys q
		wait_for "press y or n"
		stop_server
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
	grep -qF "restore them?" <<<"$SHOT" && fail "an older recovery file was offered"
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
	new_server -x 80 -y 24 \
		"read _; $(printf '%q ' "$bin" "$work/led.yaml") 2>/dev/null; echo \"status=\$?\"; stty -a | tr ' ;' '\n\n' | grep -x -e echo -e -echo -e icanon -e -icanon; echo 'end of the checks'; read _"
	tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
	keys Enter
	wait_for "Convergence"
	keys Down e 1.8k Enter
	wait_for "RS       1.8 kohm"
	keys 'C-\'
	# the shell prints the status, then the terminal's modes, then the end
	wait_for "end of the checks"
	grep -qx "status=131" <<<"$SHOT" || fail "the status is not 131"
	grep -qx echo <<<"$SHOT" || fail "echo is off after SIGQUIT"
	grep -qx icanon <<<"$SHOT" || fail "the terminal is left in cbreak mode"
	# pipe-pane copies the bytes asynchronously: the file may lag the screen
	wait_file "$out" "$esc\[\?1049l" || fail "the terminal was not restored after SIGQUIT"
	rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
	[ -n "$rec" ] || fail "no recovery file after SIGQUIT"
	"$bin" check "$rec" >/dev/null || fail "the recovery file is not a valid session"
	grep -qE 'rs: *1800' "$rec" || fail "the recovery file lacks rs = 1.8k"
	keys Enter
	wait_exit
	echo "ok: SIGQUIT restored the terminal, wrote a valid recovery file, status 131"
	;;
longwork)
	# Long work in a view shows its progress on the bottom line and stops
	# on Esc or Ctrl-C, the view staying open and saying how far it got.
	# A self-heated transistor's 10000 Monte Carlo trials take seconds.
	cp "$samples/npn-emitter-resistor-stable.yaml" "$work/npn.yaml"
	printf 'tolerances:\n  rs: 5%%\n  vs: 10%%\n' >>"$work/npn.yaml"
	start 80 24 "$work/npn.yaml"
	wait_for "Convergence"
	keys T
	wait_for "m run the Monte Carlo trials (10000)"
	for stop in Escape C-c; do
		keys m
		progress() {
			has_re 'Monte Carlo, 10000 trials: [0-9]+ %, about [0-9]+ s left \(Esc stops\)'
		}
		expect progress
		keys "$stop"
		stopped() {
			has_re 'Monte Carlo stopped after [0-9]+ of 10000 trials: m runs it again' &&
				has "Tolerance: 2 parameters varied"
		}
		expect stopped
	done
	# The view is still there and answers its keys; the program runs on.
	keys Escape
	wait_gone "Tolerance: 2 parameters varied"
	tmx has-session 2>/dev/null || fail "the program ended"
	echo "ok: progress shown at 80x24; Esc and Ctrl-C stop the trials, the view stays"
	;;
longsignal)
	# SIGTERM, Ctrl-\ (SIGQUIT) and SIGHUP while the front end runs a long
	# Monte Carlo run: the program exits within half a second of the
	# signal with the signal's status, the terminal restored (echo and
	# canonical mode on, the alternate screen left) and a valid recovery
	# file holding the unsaved edit.  The time is measured from the
	# signal to the process's exit; the bound asserted is 2 s, four times
	# the requirement, because a loaded machine under a sanitizer can
	# stall any process for a while: this is not a speed test (the
	# program checks its stop flag at every evaluation, and a signal
	# obeyed only when the trials end would take many seconds).
	esc=$(printf '\033')
	cp "$samples/npn-emitter-resistor-stable.yaml" "$work/npn.yaml"
	printf 'tolerances:\n  rs: 5%%\n  vs: 10%%\n' >>"$work/npn.yaml"
	for sig in TERM QUIT HUP; do
		rm -f "$XDG_STATE_HOME"/biasline/*.yaml
		out=$work/$sig.bytes
		new_server -x 80 -y 24 \
			"read _; $(printf '%q ' "$bin" "$work/npn.yaml") 2>/dev/null; echo \"status=\$?\"; stty -a | tr ' ;' '\n\n' | grep -x -e echo -e -echo -e icanon -e -icanon; echo 'end of the checks'; read _"
		tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
		keys Enter
		wait_for "Convergence"
		keys Down e 30 Enter
		wait_for "RS       30 ohm"
		keys T
		wait_for "m run the Monte Carlo trials (10000)"
		keys m
		expect has_re 'Monte Carlo, 10000 trials: [0-9]+ %'
		pid=$(pgrep -P "$(pane_pid)" -x biasline || true)
		[ -n "$pid" ] || fail "no biasline process"
		t0=$(date +%s%N)
		if [ "$sig" = QUIT ]; then
			keys 'C-\'
		else
			kill -"$sig" "$pid"
		fi
		# gone, or a zombie the shell has not yet reaped
		while ps -o stat= -p "$pid" 2>/dev/null | grep -qv '^Z'; do
			sleep 0.005
		done
		t1=$(date +%s%N)
		ms=$(( (t1 - t0) / 1000000 ))
		echo "SIG$sig during the Monte Carlo run: the program exited $ms ms after the signal"
		[ "$ms" -le 2000 ] || fail "SIG$sig: exited $ms ms after the signal"
		# with HUP the shell's read ends too; the status line comes first
		wait_for "end of the checks"
		case $sig in TERM) want=143 ;; QUIT) want=131 ;; HUP) want=129 ;; esac
		grep -qx "status=$want" <<<"$SHOT" || fail "the status after SIG$sig is not $want"
		grep -qx echo <<<"$SHOT" || fail "echo is off after SIG$sig"
		grep -qx icanon <<<"$SHOT" || fail "the terminal is left in cbreak mode after SIG$sig"
		wait_file "$out" "$esc\[\?1049l" || fail "the alternate screen was not left after SIG$sig"
		rec=$(ls "$XDG_STATE_HOME"/biasline/*.yaml 2>/dev/null | head -1)
		[ -n "$rec" ] || fail "no recovery file after SIG$sig"
		"$bin" check "$rec" >/dev/null || fail "the recovery file after SIG$sig is not a valid session"
		grep -qE 'rs: *30$' "$rec" || { cat "$rec"; fail "the recovery file lacks rs = 30"; }
		"$bin" solve "$rec" >/dev/null ||
			fail "the recovery file after SIG$sig does not solve"
		keys Enter
		stop_server
	done
	echo "ok: SIGTERM, SIGQUIT and SIGHUP during a Monte Carlo run: quick exit, terminal restored, valid recovery file"
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
	# The shell around the program keeps the pane open after it: tmux
	# drops what it has not yet copied to pipe-pane when a pane closes.
	esc=$(printf '\033')
	cp "$samples/indicator-led-24v.yaml" "$work/led.yaml"
	for sig in TERM SEGV; do
		out=$work/$sig.bytes
		new_server -x 100 -y 30 \
			"read _; $(printf '%q ' "$bin" "$work/led.yaml") 2>/dev/null; echo \"status=\$?\"; read _"
		tmx pipe-pane -o "cat >> $(printf '%q' "$out")"
		keys Enter
		if [ "$sig" = TERM ]; then
			wait_for "Convergence"
			keys Down e 1.8k Enter
			wait_for "RS       1.8 kohm"
		else
			wait_for "restore them?"
		fi
		pid=$(pgrep -P "$(pane_pid)" -x biasline || true)
		[ -n "$pid" ] || fail "no biasline process"
		kill -"$sig" "$pid"
		wait_for "status="
		if [ "$sig" = TERM ]; then
			grep -qx "status=143" <<<"$SHOT" || fail "the status after SIGTERM is not 143"
			ls "$XDG_STATE_HOME"/biasline/*.yaml >/dev/null 2>&1 || fail "no recovery file after SIGTERM"
		fi
		# pipe-pane copies the bytes asynchronously: the file may lag
		# the screen; the reset is among the last bytes written
		for ((k = 0; k < TRIES; k++)); do
			tail -c 200 "$out" | grep -q "$esc\[?1049l" && break
			sleep 0.1
		done
		tail -c 200 "$out" | grep -q "$esc\[?1049l" || fail "no reset written after SIG$sig"
		keys Enter
		wait_exit
	done
	echo "ok: SIGTERM saved the recovery file and exited 143; SIGSEGV restored the terminal"
	;;
badterm)
	# An unknown TERM gets a clear message and status 69, not a crash.
	new_server -x 100 -y 30 \
		"TERM=no-such-terminal-here $(printf '%q ' "$bin"); echo \"status=\$?\"; read _"
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
	# the first draw may still be on its way out: wait until it sleeps
	for ((k = 0; k < TRIES; k++)); do
		state=$(awk '{ print $3 }' "/proc/$pid/stat")
		[ "$state" = S ] && break
		sleep 0.1
	done
	[ "$state" = S ] || fail "idle process state is $state, not S (sleeping)"
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
	# The chosen row of the worst-case table, its verdict and its words.
	chosen_worst() {
		has "Design: device current 10 mA, solving for RS (E24)" &&
			has "worst case over the tolerances" || return 1
		row=$(grep -E '^ *\| > (lower|higher) ' <<<"$SHOT" | tail -1 | sed 's/^ *| > //; s/ *|.*$//')
		[ -n "$row" ] || { WHY="no chosen row in the worst-case table"; return 1; }
		read -r kind v1 v2 imin1 imin2 imax1 imax2 p1 p2 rest <<<"$row"
		verdict=$(grep -oE '(within rating|caution|over rating|no rating)' <<<"$rest")
		[ -n "$verdict" ] || { WHY="no verdict in the chosen row: $row"; return 1; }
		has "$kind $v1 $v2: RS dissipates" || { WHY="no worst-case words for the chosen row"; return 1; }
	}
	expect chosen_worst
	keys Enter
	wait_for "(the $kind row of the design"
	wait_for "RS       $v1 $v2 +-5%"
	# The verdict at worst, in the tolerance view of the applied design.
	keys T
	worst_words() {
		has "ratings at worst (each part at its own extreme): $verdict" || return 1
		tline=$(grep -oE 'RS dissipates [0-9.]+ mW at worst' <<<"$SHOT")
		[ -n "$tline" ] || { WHY="no worst power of RS in the tolerance view"; return 1; }
	}
	expect worst_words
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
	# The chosen row and its worst case, both the CLI's.
	zener_rows() {
		has "Design: device current -8 mA, solving for RS (E24)" || return 1
		row=$(grep -E '^ *\| > (lower|higher) ' <<<"$SHOT" | head -1 | sed 's/^ *| > //')
		read -r kind v1 v2 vv1 vv2 i1 i2 rest <<<"$row"
		cli=$(awk -v k="$kind" '$1 == k { print; exit }' <<<"$out")
		grep -qF "(nearest)" <<<"$cli" ||
			{ WHY="the chosen $kind row is not the CLI's nearest: $out"; return 1; }
		read -r ck cv1 cv2 cvv1 cvv2 ci1 ci2 crest <<<"$cli"
		close_to "$(eng "$v1 $v2")" "$(eng "$cv1 $cv2")" 1e-9 || { WHY="value $v1 $v2, CLI $cv1 $cv2"; return 1; }
		close_to "$(eng "$i1 $i2")" "$(eng "$ci1 $ci2")" 1e-3 || { WHY="current $i1 $i2, CLI $ci1 $ci2"; return 1; }
		wrow=$(grep -E '^ *\| > (lower|higher) ' <<<"$SHOT" | sed -n 2p | sed 's/^ *| > //')
		read -r wk wv1 wv2 wmin1 wmin2 wrest <<<"$wrow"
		wcli=$(awk -v k="$kind" '/worst case over/ { on = 1 } on && $1 == k { print; exit }' <<<"$out")
		read -r x1 x2 x3 x4 x5 cmin1 cmin2 xrest <<<"$wcli"
		close_to "$(eng "$wmin1 $wmin2")" "$(eng "$cmin1 $cmin2")" 1e-3 ||
			{ WHY="I min $wmin1 $wmin2, CLI $cmin1 $cmin2"; return 1; }
	}
	expect zener_rows
	keys Enter
	wait_for "(the $kind row of the design"
	zener_applied() {
		title_point || return 1
		close_to "$(eng "$TI")" "$(eng "$i1 $i2")" 1e-3 ||
			{ WHY="point $TI after applying, the row said $i1 $i2"; return 1; }
	}
	expect zener_applied
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
	nearest_row() {
		has "Design: device current 2 mA, solving for upper divider (E24)" || return 1
		row=$(grep -E '^ *\| > (lower|higher) ' <<<"$SHOT" | head -1 | sed 's/^ *| > //')
		read -r kind v1 v2 rest <<<"$row"
		[ "$kind $v1 $v2" = "$near" ] ||
			{ WHY="chosen row $kind $v1 $v2, the CLI's nearest is $near"; return 1; }
	}
	expect nearest_row
	grep -qF "solving for RS" <<<"$SHOT" && fail "the network design claims RS"
	keys Enter
	wait_for "upper divider $v1 $v2"
	ci=$(awk -v k="$kind" '$1 == k { print $6 " " $7; exit }' <<<"$out")
	net_applied() {
		title_point || return 1
		close_to "$(eng "$TI")" "$(eng "$ci")" 1e-3 || { WHY="point $TI, CLI $ci"; return 1; }
	}
	expect net_applied
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
	grep -qF "no finite" <<<"$SHOT" && fail "the sweep refused the network"
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
	points_shown() {
		has "Points and residuals" && has "11 points of" && has "the led: RMS" || return 1
		[ "$(cut -c1-47 <<<"$SHOT" | grep -o 'x' | wc -l)" -ge 8 ] ||
			{ WHY="fewer than 8 points marked on the plot"; return 1; }
	}
	expect points_shown
	keys f
	fitted() {
		has "fit: RMS 1.5 %, 8 dof" || return 1
		tres=$(grep -E '^\| .* 1\.702 V +500 uA' <<<"$SHOT" | grep -oE '[-+][0-9.]+ %' | head -1 | awk '{ print $1 }')
		close_to "$tres" "$cres" 0.02 || { WHY="first residual $tres %, CLI $cres %"; return 1; }
		tvf=$(grep -oE 'Vf [0-9.]+ [mk]?V' <<<"$SHOT" | awk '{ print $2 " " $3 }')
		close_to "$(eng "$tvf")" "$(eng "$cvf")" 1e-4 || { WHY="Vf $tvf, CLI $cvf"; return 1; }
	}
	expect fitted
	keys Escape
	wait_gone "Points and residuals"
	stop_server
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
	stop_server
	# A device with no points says how to get them.
	start 80 24 "$samples/indicator-led-24v.yaml"
	wait_for "Convergence"
	keys F
	wait_for "device.fitted_to"
	echo "ok: fitted points shown; residual $tres % (CLI $cres %), Vf $tvf (CLI $cvf); measured points fitted and undone"
	;;
valgrind)
	command -v valgrind >/dev/null 2>&1 || { echo "valgrind not found: skipped"; exit 77; }
	# the program runs many times slower under valgrind
	TRIES=$((TRIES * 3))
	log=$work/valgrind.log
	new_server -x 100 -y 30 \
		"exec valgrind --error-exitcode=1 --leak-check=full --errors-for-leak-kinds=definite --log-file=$(printf '%q' "$log") $(printf '%q ' "$bin" "$samples/indicator-led-24v.yaml")"
	wait_for "Convergence"
	keys Space Space
	wait_for "(2 projections"
	keys g
	wait_for "after"
	keys o Down e 4.7k Enter
	wait_for "RS       4.7 kohm"
	tmx resize-window -x 80 -y 24
	wait_for "Convergence"
	keys '?'
	wait_for "Keys (any key"
	keys x q
	wait_for "quit without saving"
	keys y
	wait_exit
	# valgrind writes its summary as it exits, and it has exited
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
