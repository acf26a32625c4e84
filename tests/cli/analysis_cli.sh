#!/bin/sh
# biasline design, sweep, tolerance and solve --sensitivity as a script sees
# them: exit statuses, CSV shape, reproducible seeds, the caution, and the
# worst case of a resistive divider against its closed form
# I = VS / (RS + RL) (Ohm's law; extremes at the corners).
# Usage: analysis_cli.sh BIASLINE (CSV_STRICT names tests/cli/csv_strict)
set -u
bl=$1
. "$(dirname "$0")/tap.sh"

# Check that the number in field 4 of the CSV row starting with PREFIX in
# FILE is within 1e-9 (relative) of WANT.
expect_value() {
	n=$((n + 1))
	got=$(grep -F -- "$2" "$1" | head -n 1 | cut -d, -f4)
	if awk -v g="$got" -v w="$3" 'BEGIN { d = g - w; if (d < 0) d = -d;
	        exit !(g != "" && d <= 1e-9 * (w < 0 ? -w : w)) }'; then
		echo "ok $n - $2 = $got"
	else
		echo "not ok $n - $2 = '$got', expected $3"
		fails=$((fails + 1))
	fi
}

# An invented indicator case: a junction from 24 V, with a target,
# ratings and tolerances.
cat >"$tmp/led.yaml" <<'YAML'
source:
  vs: 24 V
  rs: 2.2k
device:
  model: diode
  saturation_current: 6.3e-21
  ideality: 1.93
  series_resistance: 6.8
target:
  current: 10m
  current_min: 9m
  current_max: 11m
ratings:
  resistor_power: 250m
tolerances:
  rs: 5%
  vs: 10%
YAML
# A resistive divider: RL = 1 V / 1 mA = 1 kohm behind 10 V and 1 kohm.
cat >"$tmp/divider.yaml" <<'YAML'
source:
  vs: 10
  rs: 1k
device:
  model: power-law
  reference_voltage: 1
  reference_current: 1m
  exponent: 1
tolerances:
  vs: 10%
  rs: {plus_minus: 50, distribution: normal}
YAML
# A mains-level DC case for the caution.
cat >"$tmp/high.yaml" <<'YAML'
source:
  vs: 230
  rs: 22k
device:
  model: diode
  saturation_current: 1e-14
  ideality: 1.8
tolerances:
  vs: 10%
YAML
cat >"$tmp/plain.yaml" <<'YAML'
source:
  vs: 5
  rs: 1k
device:
  model: diode
  saturation_current: 1e-14
  ideality: 1.8
YAML

# design
expect_exit 0 "$bl" design "$tmp/led.yaml"
expect_text "$tmp/out" "lower"
expect_text "$tmp/out" "common practice"
expect_exit 0 "$bl" design --current 10m --format csv "$tmp/plain.yaml"
expect_text "$tmp/out" "row,rs_ohm,voltage_V,current_A,power_W,resistor_power_W,source_power_W,error_percent,points,suggested_resistor_W"
expect_text "$tmp/out" "exact,"
expect_text "$tmp/out" "higher,"
# 5 V, 10 mA: the junction takes about 1.28 V, so RS is about 372 ohm,
# between 360 and 390 in E24 and 365 and 374 in E96 (IEC 60063 tables).
expect_exit 0 "$bl" design -c 10m -f csv "$tmp/plain.yaml"
expect_text "$tmp/out" "exact,372.2"
expect_text "$tmp/out" "lower,360,"
expect_text "$tmp/out" "higher,390,"
expect_exit 0 "$bl" design --current 10m --series E96 -f csv "$tmp/plain.yaml"
expect_text "$tmp/out" "lower,365,"
expect_text "$tmp/out" "higher,374,"
expect_exit 0 "$bl" design --current 10m --solve-for vs -f csv "$tmp/plain.yaml"
expect_text "$tmp/out" "row,vs_V,"
expect_exit 0 "$bl" design --power 20m "$tmp/plain.yaml"
expect_exit 0 "$bl" design --voltage 0.7 "$tmp/plain.yaml"
expect_exit 3 "$bl" design --voltage 6 "$tmp/plain.yaml"
expect_text "$tmp/err" "not above the device voltage"
expect_exit 3 "$bl" design --current -10m "$tmp/plain.yaml"
expect_text "$tmp/err" "wrong sign"
expect_exit 64 "$bl" design "$tmp/plain.yaml"
expect_text "$tmp/err" "no target"
expect_exit 64 "$bl" design --current 10m --voltage 2 "$tmp/plain.yaml"
expect_exit 64 "$bl" design --current 10m --series E25 "$tmp/plain.yaml"
expect_exit 64 "$bl" design --current 10 V "$tmp/plain.yaml"
expect_exit 66 "$bl" design --current 10m "$tmp/missing.yaml"
expect_exit 0 "$bl" design --help
expect_text "$tmp/out" "--solve-for"
expect_exit 0 "$bl" design --current 1m "$tmp/high.yaml"
expect_text "$tmp/out" "CAUTION"

# sweep
expect_exit 0 "$bl" sweep --param rs --from 100 --to 10k --points 17 --log \
	--format csv "$tmp/plain.yaml"
expect_text "$tmp/out" "step,rs_ohm,point,count,voltage_V,current_A,power_W"
n=$((n + 1))
if [ "$(wc -l <"$tmp/out")" -eq 18 ]; then echo "ok $n - 17 rows"
else echo "not ok $n - $(wc -l <"$tmp/out") lines"; fails=$((fails + 1)); fi
expect_text "$tmp/out" "16,10000,1,1,"
expect_exit 0 "$bl" sweep --param temperature --from -20 --to 85 "$tmp/plain.yaml"
expect_exit 64 "$bl" sweep --param gain --from 1 --to 2 "$tmp/plain.yaml"
expect_text "$tmp/err" "unknown parameter"
expect_exit 64 "$bl" sweep --param rs --from 0 --to 1k --log "$tmp/plain.yaml"
expect_exit 64 "$bl" sweep --param rs --from 1A --to 1k "$tmp/plain.yaml"
expect_exit 64 "$bl" sweep --param rs --from 1 "$tmp/plain.yaml"
expect_exit 64 "$bl" sweep --param rs --from 1 --to 2 --points 0 "$tmp/plain.yaml"

# tolerance
expect_exit 0 "$bl" tolerance "$tmp/led.yaml"
expect_text "$tmp/out" "worst case (4 corners)"
expect_text "$tmp/out" "yield"
expect_text "$tmp/out" "of its 250 mW rating: over rating"
expect_exit 0 "$bl" tolerance --format csv --trials 0 "$tmp/divider.yaml"
expect_value "$tmp/out" "worst_case,current_A,max," 0.0056410256410256410
expect_value "$tmp/out" "worst_case,current_A,min," 0.0043902439024390244
expect_text "$tmp/out" "worst_case,current_A,max_at_rs,950"
n=$((n + 1))
if grep -q '^monte_carlo' "$tmp/out"; then
	echo "not ok $n - --trials 0 ran Monte Carlo"; fails=$((fails + 1))
else
	echo "ok $n - --trials 0 is the worst case only"
fi
"$bl" tolerance -f csv -n 2000 -s 99 "$tmp/led.yaml" >"$tmp/a" 2>/dev/null
"$bl" tolerance -f csv -n 2000 -s 99 "$tmp/led.yaml" >"$tmp/b" 2>/dev/null
"$bl" tolerance -f csv -n 2000 -s 98 "$tmp/led.yaml" >"$tmp/c" 2>/dev/null
n=$((n + 1))
if cmp -s "$tmp/a" "$tmp/b" && ! cmp -s "$tmp/a" "$tmp/c"; then
	echo "ok $n - the same seed gives the same numbers"
else
	echo "not ok $n - seeds do not reproduce"; fails=$((fails + 1))
fi
expect_text "$tmp/a" "yield,all,fraction,"
expect_text "$tmp/a" "histogram,current_A,upper_edge,"
expect_exit 65 "$bl" tolerance "$tmp/plain.yaml"
expect_text "$tmp/err" "no tolerances"
expect_exit 64 "$bl" tolerance --trials -3 "$tmp/led.yaml"
expect_exit 64 "$bl" tolerance --bins 0 "$tmp/led.yaml"
expect_exit 0 "$bl" tolerance --trials 100 "$tmp/high.yaml"
expect_text "$tmp/out" "CAUTION"

# solve --sensitivity
expect_exit 0 "$bl" solve --sensitivity "$tmp/plain.yaml"
expect_text "$tmp/out" "sensitivities"
expect_exit 0 "$bl" solve --sensitivity --format csv "$tmp/plain.yaml"
expect_text "$tmp/out" "point,parameter,value,unit,dV_dp,dI_dp,dP_dp,sens_V,sens_I,sens_P"
expect_text "$tmp/out" "1,vs,5,V,"
expect_exit 64 "$bl" solve --sensitivity --trace --format csv "$tmp/plain.yaml"

# A Norton source keeps its own keys: is and rp, never vs and rs.
cat >"$tmp/norton.yaml" <<'YAML'
source:
  is: 30 mA
  rp: 330
device:
  model: diode
  saturation_current: 2.7e-12
  ideality: 1.83
YAML
expect_exit 0 "$bl" solve --sensitivity --format csv "$tmp/norton.yaml"
cp "$tmp/out" "$tmp/norton.csv"
"$CSV_STRICT" -c parameter "$tmp/norton.csv" | head -2 | tr '\n' ' ' \
	>"$tmp/keys"
expect_text "$tmp/keys" "is rp "
# dI/d(rp) = (is - I)/(rp + r_d) > 0 (circuit theory): the normalised
# sensitivity of I to rp is positive (it was printed as -0.99 when the row
# held vs fixed instead of is).
expect_awk "$tmp/norton.csv" '$2 == "rp" { found = 1; if (!($9 > 0)) exit 1 }
	END { exit !found }' "Norton S(I) to rp is positive"
expect_exit 64 "$bl" sweep --param vs --from 1 --to 2 "$tmp/norton.yaml"
expect_text "$tmp/err" "its keys: is, rp"
expect_exit 0 "$bl" sweep --param rp --from 100 --to 1k --points 3 \
	"$tmp/norton.yaml"
expect_exit 64 "$bl" sweep --param rp --from 1 --to 2 "$tmp/plain.yaml"
expect_text "$tmp/err" "its keys: vs, rs"
printf 'tolerances:\n  rs: 5%%\n' >>"$tmp/norton.yaml"
expect_exit 65 "$bl" check "$tmp/norton.yaml"
expect_text "$tmp/err" 'tolerances.rs: "rs" is not a key of this Norton source; its keys: is, rp,'

tap_finish
