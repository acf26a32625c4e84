#!/bin/sh
# Self-heating through the commands: solve reports the junction
# temperature, the loop gain and the margins to runaway (text and CSV),
# the runaway sample finds no point and says what a stable balance needs,
# a sweep of the ambient finds the runaway fold and tells it from a
# balance crossing the maximum junction temperature, tolerances vary the
# thermal resistance and the ambient, and the junction temperature cannot
# be varied once it is solved.
# Usage: thermal_cli.sh BIASLINE SAMPLES_DIR (CSV_STRICT names
# tests/cli/csv_strict)
set -u
bl=$1
dir=$2
. "$(dirname "$0")/tap.sh"

led="$dir/led-warm-enclosure-self-heating.yaml"
run="$dir/npn-fixed-base-runaway.yaml"
re="$dir/npn-emitter-resistor-stable.yaml"

expect_exit 0 "$bl" solve "$led"
expect_text "$tmp/out" "junction 51.892 degC (ambient 45 degC + 260 K/W x 26.51 mW); loop gain G = -0.00518: thermally stable"
expect_text "$tmp/out" "junction at 51.89 degC, 48.1 K below its 100 degC maximum: within rating"
expect_text "$tmp/out" "thermal loop (Tj <- Ta + theta P(Tj)): G = -0.00518"
expect_text "$tmp/out" "margin to runaway"
expect_text "$tmp/out" "thermal_resistance   260 K/W now; no runaway up to Tj 250 degC; Tj reaches Tjmax 100 degC at"

expect_exit 0 "$bl" solve --format csv "$re"
cp "$tmp/out" "$tmp/re.csv"
expect_strict_csv "$tmp/re.csv" "solve --format csv of a self-heated stage"
expect_awk "$tmp/re.csv" 'NR == 1 { for (k = 1; k <= NF; k++) c[$k] = k }
	NR == 2 { t = $c["junction_temperature_C"]; g = $c["thermal_loop_gain"]
	          ok = t > 79 && t < 81 && g > 0.3 && g < 0.45 &&
	               $c["thermally_stable"] == "yes" &&
	               ("runaway_thermal_resistance_K_per_W" in c) &&
	               ("runaway_ambient_temperature_C" in c) &&
	               ("runaway_vs_V" in c) }
	END { exit !(NR == 2 && ok) }' \
	"the CSV has the junction temperature, G and the margin columns"

expect_exit 3 "$bl" solve "$run"
expect_text "$tmp/err" "no operating point: thermal runaway (the loop gain G passes 1)"
expect_text "$tmp/out" "what a stable balance needs"
expect_text "$tmp/out" "thermal_resistance   33 K/W now; needs at most 29.278 K/W"
expect_text "$tmp/out" "CAUTION: this case involves a junction above 60 degC"

# The runaway threshold found by the margin agrees with a sweep's fold.
expect_exit 0 "$bl" solve --set thermal_resistance=29.2 "$run"
expect_exit 3 "$bl" solve --set thermal_resistance=29.4 "$run"
expect_exit 0 "$bl" sweep --param ambient_temperature --from 30 --to 50 \
	--points 9 --set thermal_resistance=28 "$run"
expect_text "$tmp/out" "Tj          G"
expect_text "$tmp/out" "(thermal runaway: a cool and a hot balance meet, G = 1)"
expect_exit 0 "$bl" sweep --format csv --param vs --from 600m --to 700m \
	--points 5 --set thermal_resistance=28 "$run"
expect_strict_csv "$tmp/out" "sweep --format csv of a self-heated stage"
expect_text "$tmp/out" "heat_W,junction_temperature_C,thermal_loop_gain"
expect_text "$tmp/err" "fold: 1 -> 0 operating points at vs = 659.844 mV"

# The solved temperature is no parameter; the ambient is.
expect_exit 64 "$bl" sweep --param temperature --from 20 --to 40 "$led"
expect_text "$tmp/err" "vary ambient_temperature instead"

# Tolerances on the thermal resistance and the ambient.
cp "$led" "$tmp/tol.yaml"
printf 'tolerances:\n  thermal_resistance: 20%%\n  ambient_temperature: {min: 35, max: 55}\n' \
	>>"$tmp/tol.yaml"
expect_exit 0 "$bl" tolerance -n 200 "$tmp/tol.yaml"
expect_text "$tmp/out" "current max at: thermal_resistance = 312 K/W, ambient_temperature = 55 degC"

tap_finish
