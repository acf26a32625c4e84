#!/bin/sh
# What loading and long commands promise: a table of files whose derived
# quantities a double cannot hold (or whose numbers underflow on
# reading), each refused as bad data (65) naming its key; and a long
# Monte Carlo run or sweep that SIGTERM or SIGINT stops at once, saying
# how far it got, with the signal's exit status.
# Usage: guarantees_cli.sh BIASLINE
set -u
bl=$1
. "$(dirname "$0")/tap.sh"

# name|key the error must name|device lines (source: 5 V through 1 k)
while IFS='|' read -r name key dev; do
	[ -n "$name" ] || continue
	printf 'format_version: 1\nsource:\n  vs: 5\n  rs: 1k\ndevice:\n' \
		>"$tmp/$name.yaml"
	printf '%s\n' "$dev" | tr ';' '\n' | sed 's/^/  /' >>"$tmp/$name.yaml"
	expect_exit 65 "$bl" check "$tmp/$name.yaml"
	expect_text "$tmp/err" "$key"
done <<'TABLE'
is-overflows|saturation_current|model: diode;saturation_current: 1e-14;ideality: 1;reference_temperature: -263
is-underflows|saturation_current|model: diode;saturation_current: 1e-14;ideality: 1;reference_temperature: 25;temperature: -270
is-subnormal|saturation_current|model: diode;saturation_current: 1e-310;ideality: 1
is-underflows-reading|saturation_current|model: diode;saturation_current: 1e-400;ideality: 1
rs-underflows-reading|series_resistance|model: diode;saturation_current: 1e-14;ideality: 1;series_resistance: 1e-400
tunnel-no-constants|valley_current|model: tunnel;valley_current: 0.9m
TABLE

# rs: 1e-400 in the source section is refused too, not read as 0.
printf 'format_version: 1\nsource:\n  vs: 5\n  rs: 1e-400\ndevice:\n  model: diode\n  saturation_current: 1e-14\n  ideality: 1\n' >"$tmp/src.yaml"
expect_exit 65 "$bl" check "$tmp/src.yaml"
expect_text "$tmp/err" "rs"
expect_text "$tmp/err" "too small"

# A self-heated thermistor's Monte Carlo run of 10^7 trials, stopped.
cat >"$tmp/therm.yaml" <<'YAML'
format_version: 1
source:
  vs: 40 V
  rs: 2k
device:
  model: thermistor
  resistance_at_reference: 10k
  beta: 3977
  dissipation_constant: 1.5 mW/K
tolerances:
  rs: 5%
  vs: 10%
  beta: 2%
YAML
# Stop SIG after 1.5 s; the command must end within 0.5 s with the
# signal's status (128 + its number) and say how far it got.  The time is
# wall time seen from outside, so a machine busy with other work can take
# the CPU from the program for longer than the bound: a run over 0.5 s is
# tried again, up to three runs, and each run is shown.  A program that
# checks its stop flag too seldom misses the bound every time; a wrong
# status fails at once.
stop_check() {
	sig=$1 want=$2; shift 2
	n=$((n + 1))
	local k seen=""
	for k in 1 2 3; do
		"$@" >"$tmp/out" 2>"$tmp/err" &
		pid=$!
		sleep 1.5
		kill -"$sig" "$pid"
		t0=$(date +%s%N)
		wait "$pid"
		got=$?
		t1=$(date +%s%N)
		ms=$(( (t1 - t0) / 1000000 ))
		seen="$seen ${ms}ms"
		[ "$got" -eq "$want" ] || break
		[ "$ms" -le 500 ] && break
	done
	if [ "$got" -eq "$want" ] && [ "$ms" -le 500 ]; then
		echo "ok $n - SIG$sig stops '$*' with $got (runs:$seen)"
	else
		echo "not ok $n - SIG$sig: '$*' ended $got (runs:$seen)"
		cat "$tmp/err"
		fails=$((fails + 1))
	fi
}
# (the limit in time set to a day, so that only the signal stops them)
export BIASLINE_WORK_LIMIT=86400
stop_check TERM 143 "$bl" tolerance --trials 10000000 "$tmp/therm.yaml"
expect_text "$tmp/err" "stopped after"
stop_check INT 130 "$bl" sweep --param beta --from 3000 --to 5000 --points 1000000 "$tmp/therm.yaml"
expect_text "$tmp/err" "stopped after"
stop_check QUIT 131 "$bl" tolerance --trials 10000000 "$tmp/therm.yaml"
expect_text "$tmp/err" "stopped after"
stop_check HUP 129 "$bl" sweep --param beta --from 3000 --to 5000 --points 1000000 "$tmp/therm.yaml"
expect_text "$tmp/err" "stopped after"

# The limit in time: work estimated past it is stopped after its first
# second, saying how much would fit, with status 64 (a limit of 1 s here,
# so that any run over a second is past it however fast the machine).
export BIASLINE_WORK_LIMIT=1
for cmd in "tolerance --trials 10000000" \
           "sweep --param beta --from 3000 --to 5000 --points 1000000"; do
	t0=$(date +%s%N)
	# shellcheck disable=SC2086
	expect_exit 64 "$bl" $cmd "$tmp/therm.yaml"
	t1=$(date +%s%N)
	expect_text "$tmp/err" "more than the 1 s a command may take"
	expect_text "$tmp/err" "fit: --"
	n=$((n + 1))
	# not a speed test: only that it did not run the whole work
	if [ $(( (t1 - t0) / 1000000 )) -lt 30000 ]; then
		echo "ok $n - '$cmd' stopped at its limit, not run to the end"
	else
		echo "not ok $n - '$cmd' ran $(( (t1 - t0) / 1000000 )) ms"
		fails=$((fails + 1))
	fi
done
# It offers a count, and short work is never stopped.
fit=$(sed -n 's/.*fit: --points \([0-9]*\)$/\1/p' "$tmp/err")
expect_exit 0 "$bl" tolerance --trials 100 "$tmp/therm.yaml"
unset BIASLINE_WORK_LIMIT
n=$((n + 1))
if [ -n "$fit" ] && [ "$fit" -ge 1 ]; then
	echo "ok $n - the refusal offers a count ($fit)"
else
	echo "not ok $n - no count offered"; fails=$((fails + 1))
fi

# No nan or inf without a meaning: an nmos stage fed by an ideal current
# source has ID but no VDS (the source terminal's voltage is not set);
# text says "not defined here", CSV leaves the fields empty (the man page:
# an empty field means the quantity does not exist for that row).
cat >"$tmp/fet-is.yaml" <<'YAML'
format_version: 1
source:
  is: 2.3m
device:
  model: nmos
  transconductance_parameter: 2.2e-3
  threshold_voltage: 1.35 V
  supply_voltage: 12 V
  drain_resistance: 1.8k
YAML
for args in "solve" "solve --sensitivity --trace" \
            "sweep --param is --from 0.5m --to 4m --points 9"; do
	# shellcheck disable=SC2086
	expect_exit 0 "$bl" $args "$tmp/fet-is.yaml"
	n=$((n + 1))
	if grep -q -w -i -E 'nan|inf|-nan|-inf' "$tmp/out" "$tmp/err"; then
		echo "not ok $n - '$args' on an FET fed by an ideal current source shows nan or inf"
		grep -n -w -i -E 'nan|inf' "$tmp/out" "$tmp/err"; fails=$((fails + 1))
	else
		echo "ok $n - '$args' on an FET fed by an ideal current source: no nan or inf"
	fi
done
expect_exit 0 "$bl" solve "$tmp/fet-is.yaml"
expect_text "$tmp/out" "VDS = not defined here"
expect_text "$tmp/out" "region: saturation (assumed)"
expect_exit 0 "$bl" solve -f csv "$tmp/fet-is.yaml"
expect_strict_csv "$tmp/out" "solve csv of an FET on an ideal current source"
"$CSV_STRICT" -c drain_source_voltage_V "$tmp/out" >"$tmp/col"
expect_same_text() {
	n=$((n + 1))
	if [ "$(cat "$1")" = "$2" ]; then
		echo "ok $n - $3"
	else
		echo "not ok $n - $3: got '$(cat "$1")'"; fails=$((fails + 1))
	fi
}
expect_same_text "$tmp/col" "" "its drain_source_voltage_V field is empty"
n=$((n + 1))
if grep -q -i -E '(^|,)-?(nan|inf)(,|$)' "$tmp/out"; then
	echo "not ok $n - the CSV has a nan or inf field"; fails=$((fails + 1))
else
	echo "ok $n - the CSV has no nan or inf field"
fi

# reduce refuses a bad option before it prints anything.
printf 'format_version: 1\nsource:\n  network:\n    device_between: [a, ground]\n    parts:\n      - name: cell\n        voltage_source: 9 V\n        from: ground\n        to: top\n      - name: r1\n        resistor: 4.7k\n        from: top\n        to: a\ndevice:\n  model: diode\n  saturation_current: 2.2e-14\n  ideality: 1.04\n' >"$tmp/net.yaml"
expect_exit 0 "$bl" reduce --nodes "$tmp/net.yaml"
for bad in "--bogus" "--format xml" "--nodes --reference nowhere" \
           "--reference a" "--nodes --format"; do
	# shellcheck disable=SC2086
	expect_exit 64 "$bl" reduce $bad "$tmp/net.yaml"
	expect_empty "$tmp/out" "reduce $bad prints nothing before refusing"
done

tap_finish
