#!/bin/sh
# biasline fit as a script sees it: the sample's points give the sample's
# device section (so the two stay in step), the YAML section loads, the
# CSV tables' shape and residuals, held keys, the session as the source of
# held values and of points, the temperature law, and every refusal with
# its exit status and place in the file.
# Usage: fit_cli.sh BIASLINE SAMPLES_DIR (CSV_STRICT names tests/cli/csv_strict)
set -u
bl=$1
samples=$2
case $bl in /*) ;; *) bl=$PWD/$bl ;; esac
. "$(dirname "$0")/tap.sh"
export SOURCE_DATE_EPOCH=1796256000

expect_exit 0 "$bl" fit --help
expect_text "$tmp/out" "--fix KEY=VALUE"
expect_text "$tmp/out" "--weight W"
expect_text "$tmp/out" "Models: diode, led, zener, power-law, npn, pnp, thermistor, thermistor-sh."
expect_exit 0 "$bl" --help
expect_text "$tmp/out" "fit        fit a device model's parameters to measured points"

# The sample: its device section is exactly what the fit prints.
cd "$samples" || exit 1
expect_exit 0 "$bl" fit --model led --points amber-panel-led.csv --format yaml
cp "$tmp/out" "$tmp/fit.yaml"
sed -n '/^# fitted by/,$p' amber-panel-led.yaml >"$tmp/want.yaml"
n=$((n + 1))
if diff "$tmp/want.yaml" "$tmp/fit.yaml" >"$tmp/diff"; then
	echo "ok $n - the sample's device section is the fit's output"
else
	echo "not ok $n - the sample's device section differs from the fit's"
	cat "$tmp/diff"
	fails=$((fails + 1))
fi
cd - >/dev/null || exit 1

# The section is ready to use: behind a source it checks and solves.
{ printf 'source:\n  vs: 12 V\n  rs: 680\n'; cat "$tmp/fit.yaml"; } >"$tmp/s.yaml"
expect_exit 0 "$bl" check "$tmp/s.yaml"
expect_exit 0 "$bl" solve --format csv "$tmp/s.yaml"
expect_text "$tmp/out" "1,1.99224"

# Text: every parameter, the points, N and the degrees of freedom.
expect_exit 0 "$bl" fit --model led --points "$samples/amber-panel-led.csv"
expect_text "$tmp/out" "forward_voltage          2.0484 V         1.6 mV (0.079 %)"
expect_text "$tmp/out" "N = 11 points, 3 free parameters, 8 degrees of freedom"
expect_text "$tmp/out" "    11    17  2.143 V     30 mA"

# CSV: one table of parameters; the residuals as another, on request.
expect_exit 0 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --format csv
expect_strict_csv "$tmp/out" "fit csv"
tr -d '\r' <"$tmp/out" >"$tmp/p.csv"
mv "$tmp/p.csv" "$tmp/out"
expect_text "$tmp/out" "key,value,standard_error,unit,role,corr_forward_voltage,corr_ideality,corr_series_resistance"
expect_awk "$tmp/out" 'NR > 1 && $5 == "fitted" { k++; if ($2 <= 0 || $3 <= 0) bad = 1 }
	NR > 1 && $5 == "fitted" && $(5 + k) != 1 { bad = 1 }
	END { exit !(k == 3 && !bad) }' "three fitted rows, unit diagonal of the correlations"
expect_exit 0 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --format csv --residuals
expect_strict_csv "$tmp/out" "fit csv --residuals"
tr -d '\r' <"$tmp/out" >"$tmp/p.csv"
mv "$tmp/p.csv" "$tmp/out"
expect_text "$tmp/out" "row,line,voltage_V,current_A,fitted_A,residual_A,relative_residual"
expect_awk "$tmp/out" 'NR > 1 { k++; r = $5 / $4 - 1; d = r - $7; if (d < 0) d = -d
	if (d > 1e-12 || $6 - ($5 - $4) > 1e-15 || $6 - ($5 - $4) < -1e-15) bad = 1 }
	END { exit !(k == 11 && !bad) }' "11 points, residuals fitted - measured"
expect_exit 64 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --residuals

# Held keys stay as given; the others fit around them.
expect_exit 0 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --fix series_resistance=7
expect_text "$tmp/out" "held: series_resistance = 7 ohm"
expect_text "$tmp/out" "2 free parameters, 9 degrees of freedom"

# Three points from a data sheet's graph: an exact fit, and it says the
# standard errors need more points.
printf 'IF (mA), VF (V)\n1, 2.72\n10, 2.95\n20, 3.1\n' >"$tmp/ds.csv"
expect_exit 0 "$bl" fit --model led --points "$tmp/ds.csv"
expect_text "$tmp/out" "ideality                 2.20257          -"
expect_text "$tmp/out" "note: no degrees of freedom"

# A transistor: the session gives what VBE-IC points cannot (current gain,
# supply); the fitted keys come from the points.
cat >"$tmp/q.yaml" <<'YAML'
source:
  vs: 2.2 V
  rs: 47k
device:
  model: npn
  saturation_current: 1e-14
  current_gain: 187
  supply_voltage: 15
  collector_resistance: 3.3k
YAML
printf 'VBE,IC\n0.5417,27.1u\n0.5913,187u\n0.6421,1.31m\n0.6907,8.83m\n' >"$tmp/q.csv"
expect_exit 0 "$bl" fit --model npn --points "$tmp/q.csv" --format yaml "$tmp/q.yaml"
expect_text "$tmp/out" "  current_gain: 187"
expect_text "$tmp/out" "  collector_resistance: 3.3 kohm"
expect_text "$tmp/out" "  saturation_current:"

# The session's own measured points, fitted by a model.
expect_exit 0 "$bl" fit --model diode --fix series_resistance=0 "$samples/measured-diode-curve.yaml"
expect_text "$tmp/out" "diode fitted to 9 points of $samples/measured-diode-curve.yaml"
expect_exit 64 "$bl" fit "$samples/measured-diode-curve.yaml"
expect_text "$tmp/err" "the session's model 'measured' cannot be fitted"

# Points at two temperatures fit the diode's bandgap too.  The points are
# the diode law (Is 4.71 fA at 25 degC, n 1.087, Rs 0.3911 ohm, Eg 1.143
# eV, exponent 3) to four digits.
cat >"$tmp/t.csv" <<'CSV'
V;I;T (degC)
0.5013;2.941e-07;25
0.5617;2.557e-06;25
0.6211;2.145e-05;25
0.6813;0.0001847;25
0.7417;0.001575;25
0.8013;0.01157;25
0.4313;1.484e-06;75
0.4917;9.457e-06;75
0.5511;5.842e-05;75
0.6113;0.0003687;75
0.6711;0.002255;75
0.7313;0.01262;75
CSV
expect_exit 0 "$bl" fit --model diode --points "$tmp/t.csv" --format csv
tr -d '\r' <"$tmp/out" >"$tmp/p.csv"
mv "$tmp/p.csv" "$tmp/out"
expect_awk "$tmp/out" '$1 == "bandgap" { g = $2; s = $3 }
	END { d = g - 1.143; if (d < 0) d = -d; exit !(d < 1e-3 && d < 3 * s) }' \
	"the bandgap comes back within 1 meV and 3 standard errors"
expect_exit 0 "$bl" fit --model diode --points "$tmp/t.csv"
expect_text "$tmp/out" "reference_temperature = 25 degC (chosen by the fit)"
expect_exit 65 "$bl" fit --model led --points "$tmp/t.csv"
expect_text "$tmp/err" "but the led model has no temperature law"

# A thermistor's R-T table, Steinhart-Hart.
printf 'T (degC), R (kohm)\n-20, 97.07\n0, 32.65\n25, 10\n50, 3.603\n85, 1.071\n' >"$tmp/r.csv"
expect_exit 0 "$bl" fit --model thermistor-sh --points "$tmp/r.csv" --format csv
expect_text "$tmp/out" "steinhart_hart_c,"
expect_exit 0 "$bl" fit --model thermistor --points "$tmp/r.csv" --format yaml
expect_text "$tmp/out" "  # dissipation_constant: required, and not in the points: set it here"

# Refusals: exit 65, with the file and line of the rows they name.
printf 'V,I\n0.45,1u\n0.55,12u\n' >"$tmp/two.csv"
expect_exit 65 "$bl" fit --model diode --points "$tmp/two.csv"
expect_text "$tmp/err" "2 points for 3 free parameters (saturation_current, ideality, series_resistance): hold 1 of them, e.g. series_resistance=0"
expect_text "$tmp/err" "hold a parameter with --fix KEY=VALUE"
printf 'V,I\n0.45,1u\n0.55,12u\n0.55,13u\n0.65,0.2m\n' >"$tmp/dup.csv"
expect_exit 65 "$bl" fit --model diode --points "$tmp/dup.csv"
expect_text "$tmp/err" "dup.csv:3: rows 2 and 3 share V = 550 mV"
printf 'V,I\n0.45,1u\n0.55,12u\n0.6,11u\n0.65,0.2m\n' >"$tmp/nm.csv"
expect_exit 65 "$bl" fit --model diode --points "$tmp/nm.csv"
expect_text "$tmp/err" "nm.csv:3: rows 2 and 3: I goes from 12 uA to 11 uA as V rises from 550 mV to 600 mV"
printf 'V,I\n0.45,1u\n0.55,12u\n0.6,1.2.3\n' >"$tmp/bad.csv"
expect_exit 65 "$bl" fit --model diode --points "$tmp/bad.csv"
expect_text "$tmp/err" "bad.csv:4:5: row 3, column 2 (I):"
printf 'V (V), I (mV)\n0.45,1\n' >"$tmp/unit.csv"
expect_exit 65 "$bl" fit --model diode --points "$tmp/unit.csv"
expect_text "$tmp/err" "unit.csv:1:11: column 2 (I): the header gives the unit \"mV\""
expect_exit 66 "$bl" fit --model diode --points "$tmp/absent.csv"
expect_exit 64 "$bl" fit --model tunnel --points "$tmp/two.csv"
expect_text "$tmp/err" "--model 'tunnel' cannot be fitted"
expect_exit 64 "$bl" fit --model diode --points "$tmp/two.csv" --fix ideality
expect_exit 64 "$bl" fit --model diode --points "$tmp/two.csv" --fix color=red
expect_exit 64 "$bl" fit --model diode --points "$tmp/two.csv" --fix ideality=-1
expect_exit 64 "$bl" fit --model diode --points "$tmp/two.csv" --weight loud
expect_exit 64 "$bl" fit --points "$tmp/two.csv"

# --into writes the fitted device into the session and keeps its text:
# every line of the original is still there, in order; the fit's record
# sits above device:; a second fit replaces the record, not adds to it.
cat >"$tmp/panel.yaml" <<'YAML'
# Panel indicator, board rev B
format_version: 1
source:
  vs: 12 V      # the panel rail
  rs: 680       # R14
# the LED as first typed from a catalogue
device:
  model: led
  preset: amber
  test_current: 20m   # as the catalogue states it
notes: |
  Check R14's power at 13.8 V.
YAML
cp "$tmp/panel.yaml" "$tmp/panel0.yaml"
expect_exit 0 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --into "$tmp/panel.yaml"
expect_text "$tmp/err" "wrote the led device into $tmp/panel.yaml: 4 values rewritten, the rest kept as written"
# the points file is recorded beside the values, relative to the session
# when it lies beside it, else whole (the sample's folder here)
expect_text "$tmp/panel.yaml" "  fitted_to: $(cd "$samples" && pwd -P)/amber-panel-led.csv"
n=$((n + 1))
if diff "$tmp/panel0.yaml" "$tmp/panel.yaml" | grep -q '^<'; then
	echo "not ok $n - --into removed or changed a line of the user's text"
	diff "$tmp/panel0.yaml" "$tmp/panel.yaml"; fails=$((fails + 1))
else
	echo "ok $n - --into only added lines to the user's text"
fi
expect_text "$tmp/panel.yaml" "# fitted by biasline fit on 2026-12-03 to 11 points of $samples/amber-panel-led.csv,"
expect_text "$tmp/panel.yaml" "# standard errors: forward_voltage 1.6 mV, ideality 0.031, series_resistance 170 mohm"
expect_text "$tmp/panel.yaml" "  forward_voltage: 2.0484"
# the session now solves as the fitted device does
expect_exit 0 "$bl" solve --format csv "$tmp/panel.yaml"
expect_text "$tmp/out" "1,1.99224"
expect_exit 0 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --fix series_resistance=7 --into "$tmp/panel.yaml"
expect_awk "$tmp/panel.yaml" '/^# fitted by biasline fit/ { k++ } /^  series_resistance: 7$/ { r = 1 }
	END { exit !(k == 1 && r) }' "a second fit replaces the record and the values"
# a measured session fitted by a model becomes that model's device
cp "$samples/measured-diode-curve.yaml" "$tmp/m.yaml"
expect_exit 0 "$bl" fit --model diode --fix series_resistance=0 --into "$tmp/m.yaml"
expect_text "$tmp/err" "the session's measured points are no longer its device"
expect_exit 0 "$bl" check "$tmp/m.yaml"
expect_text "$tmp/m.yaml" "  model: diode"
# refused, and the file untouched: no SESSION; a key the points cannot
# give; a read-only file
expect_exit 64 "$bl" fit --model led --points "$samples/amber-panel-led.csv" --into
printf 'source:\n  vs: 5\n  rs: 1k\ndevice:\n  model: diode\n  saturation_current: 1e-14\n  ideality: 1\n' >"$tmp/th.yaml"
cp "$tmp/th.yaml" "$tmp/th0.yaml"
expect_exit 65 "$bl" fit --model thermistor --points "$tmp/r.csv" --into "$tmp/th.yaml"
expect_text "$tmp/err" "needs dissipation_constant, which the points do not give; hold it with --fix dissipation_constant=VALUE"
expect_exit 0 cmp "$tmp/th.yaml" "$tmp/th0.yaml"
chmod 444 "$tmp/th.yaml"
expect_exit 73 "$bl" fit --model thermistor --points "$tmp/r.csv" --fix dissipation_constant=2m --into "$tmp/th.yaml"
expect_exit 0 cmp "$tmp/th.yaml" "$tmp/th0.yaml"
chmod 644 "$tmp/th.yaml"
expect_exit 0 "$bl" fit --model thermistor --points "$tmp/r.csv" --fix dissipation_constant=2m --into "$tmp/th.yaml"
expect_text "$tmp/th.yaml" "  model: thermistor"

# Every choice the bash completion offers for fit's --format and --weight
# is one fit accepts.
if command -v bash >/dev/null 2>&1; then
	for opt in --format --weight; do
		words=$(PATH="$(dirname "$bl"):$PATH" bash -c '
			. "$1"; COMP_WORDS=(biasline fit "$2" ""); COMP_CWORD=3
			_biasline; printf "%s\n" "${COMPREPLY[@]}"' _ \
			"$samples/../src/cli/completion.bash" "$opt")
		n=$((n + 1))
		if [ -n "$words" ]; then
			echo "ok $n - the completion offers fit $opt:" $words
		else
			echo "not ok $n - the completion offers nothing for fit $opt"
			fails=$((fails + 1))
		fi
		for w in $words; do
			expect_exit 0 "$bl" fit --model led --points \
				"$samples/amber-panel-led.csv" "$opt" "$w"
		done
	done
fi

# Standard output that cannot be written: exit 74.
n=$((n + 1))
"$bl" fit --model led --points "$samples/amber-panel-led.csv" >/dev/full 2>"$tmp/err"
got=$?
if [ "$got" -eq 74 ] && grep -q "cannot write the output" "$tmp/err"; then
	echo "ok $n - a full standard output exits 74"
else
	echo "not ok $n - a full standard output exited $got, expected 74"
	fails=$((fails + 1))
fi

tap_finish
