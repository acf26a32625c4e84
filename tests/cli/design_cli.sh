#!/bin/sh
# --set on every analysis command, design --worst-case and the design of a
# Zener shunt, as a script sees them: exit statuses with the key named,
# --set equal to editing the file, the worst-case columns equal to the
# tolerance command's worst case at the same value, and the shunt's
# resistor against the breakdown law's closed form RS = (VS + Vz) / -Izt
# (the zener model passes exactly through V(-Izt) = -Vz, see zener.c).
# Usage: design_cli.sh BIASLINE SAMPLES
set -u
bl=$1
samples=$2
. "$(dirname "$0")/tap.sh"

# Check that field F of the CSV row starting with PREFIX in FILE is within
# 1e-9 (relative) of WANT.
expect_field() {
	n=$((n + 1))
	got=$(grep -F -- "$2" "$1" | head -n 1 | cut -d, -f"$3")
	if awk -v g="$got" -v w="$4" 'BEGIN { d = g - w; if (d < 0) d = -d;
	        exit !(g != "" && d <= 1e-9 * (w < 0 ? -w : w)) }'; then
		echo "ok $n - $2 field $3 = $got"
	else
		echo "not ok $n - $2 field $3 = '$got', expected $4"
		fails=$((fails + 1))
	fi
}

# The value of column NAME in row ROW (first field) of CSV FILE.
csv_get() {
	awk -F, -v name="$2" -v row="$3" 'NR == 1 { for (k = 1; k <= NF; k++)
	        if ($k == name) c = k; next } $1 == row { print $c; exit }' "$1"
}

# An invented indicator: a junction from 24 V through 2.2 kohm.
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
ratings:
  resistor_power: 250m
tolerances:
  rs: 5%
  vs: 10%
YAML
# The same with vs and rs edited in the file.
sed -e 's/vs: 24 V/vs: 27 V/' -e 's/rs: 2.2k/rs: 1k/' "$tmp/led.yaml" \
	>"$tmp/edited.yaml"
grep -v -e '^tolerances:' -e '^  rs: 5%' -e '^  vs: 10%' "$tmp/led.yaml" \
	>"$tmp/notol.yaml"

# --set equals editing the file.
expect_exit 0 "$bl" solve -f csv "$tmp/edited.yaml"
mv "$tmp/out" "$tmp/want.csv"
expect_exit 0 "$bl" solve -f csv --set vs=27 --set "rs=1 kohm" "$tmp/led.yaml"
n=$((n + 1))
if cmp -s "$tmp/out" "$tmp/want.csv"; then
	echo "ok $n - --set vs=27 --set rs=1k is the edited file"
else
	echo "not ok $n - --set differs from the edited file"
	fails=$((fails + 1))
fi
# The last of two --set on one key wins; SI prefixes and units.
expect_exit 0 "$bl" solve -f csv --set vs=3 --set "vs=27 V" --set rs=1k \
	"$tmp/led.yaml"
n=$((n + 1))
if cmp -s "$tmp/out" "$tmp/want.csv"; then
	echo "ok $n - the last --set wins"
else
	echo "not ok $n - the last --set does not win"
	fails=$((fails + 1))
fi
# Targets and ratings by their dotted keys.
expect_exit 0 "$bl" solve --set target.current=5m --set \
	ratings.resistor_power=1 "$tmp/led.yaml"
expect_text "$tmp/out" "target current 5 mA"
expect_text "$tmp/out" "of its 1 W rating"

# Malformed: 64; a key the session lacks: 64; a bad value: 65; each
# message names the key.
expect_exit 64 "$bl" solve --set rs "$tmp/led.yaml"
expect_text "$tmp/err" "KEY=VALUE"
expect_exit 64 "$bl" solve --set =1k "$tmp/led.yaml"
expect_exit 64 "$bl" solve --set "rs=" "$tmp/led.yaml"
expect_text "$tmp/err" "rs: no value"
expect_exit 64 "$bl" solve --set gain=3 "$tmp/led.yaml"
expect_text "$tmp/err" "unknown parameter 'gain'"
expect_exit 64 "$bl" solve --set ratings.bogus=3 "$tmp/led.yaml"
expect_text "$tmp/err" "ratings.bogus"
expect_exit 64 "$bl" solve --set source.network.r1=3k "$tmp/led.yaml"
expect_text "$tmp/err" "source.network.r1"
expect_exit 65 "$bl" solve --set "vs=27 A" "$tmp/led.yaml"
expect_text "$tmp/err" "vs: \"27 A\" is a current, expected a voltage"
expect_exit 65 "$bl" solve --set "rs=3 V" "$tmp/led.yaml"
expect_text "$tmp/err" "rs:"
expect_exit 65 "$bl" solve --set rs=-5 "$tmp/led.yaml"
expect_text "$tmp/err" "rs:"
expect_exit 65 "$bl" solve --set saturation_current=0 "$tmp/led.yaml"
expect_text "$tmp/err" "saturation_current"
expect_exit 65 "$bl" solve --set "ratings.resistor_power=2 V" "$tmp/led.yaml"
expect_text "$tmp/err" "ratings.resistor_power"
expect_exit 65 "$bl" solve --set target.series=E7 "$tmp/led.yaml"
expect_text "$tmp/err" "target.series"
expect_exit 65 "$bl" solve --set target.current_min=20m --set \
	target.current_max=10m "$tmp/led.yaml"
expect_text "$tmp/err" "target.current_max"

# Tolerances by key, written as in the file; none takes one away.
expect_exit 0 "$bl" tolerance -n 0 --set tolerances.rs=1% "$tmp/led.yaml"
expect_text "$tmp/out" "2.178 kohm"
expect_exit 0 "$bl" tolerance -n 0 --set tolerances.rs=none "$tmp/led.yaml"
expect_text "$tmp/out" "worst case (2 corners)"
expect_exit 0 "$bl" tolerance -n 0 --set \
	"tolerances.saturation_current={plus_minus: 30%, distribution: normal}" \
	"$tmp/led.yaml"
expect_text "$tmp/out" "worst case (8 corners)"
expect_exit 0 "$bl" design --worst-case --set "tolerances.vs={min: 22, max: 26}" \
	--set tolerances.rs=none "$tmp/notol.yaml"
expect_text "$tmp/out" "at worst"
expect_exit 64 "$bl" tolerance --set tolerances.gain=5% "$tmp/led.yaml"
expect_text "$tmp/err" "tolerances.gain"
expect_exit 65 "$bl" tolerance --set tolerances.rs=150% "$tmp/led.yaml"
expect_text "$tmp/err" "tolerances.rs"
expect_exit 65 "$bl" tolerance --set "tolerances.rs=5 V" "$tmp/led.yaml"
expect_text "$tmp/err" "is a voltage, expected a resistance"
expect_exit 65 "$bl" tolerance --set "tolerances.vs={min: 26, max: 22}" \
	"$tmp/led.yaml"
expect_text "$tmp/err" "tolerances.vs.max"
expect_exit 0 "$bl" design --set target.current=none --current 9m "$tmp/led.yaml"
expect_exit 64 "$bl" design --set target.current=none "$tmp/led.yaml"
expect_text "$tmp/err" "no target"
expect_exit 65 "$bl" solve --set solver.method=none "$tmp/led.yaml"

# Every analysis command takes --set, and refuses a bad one the same way.
expect_exit 0 "$bl" design --set rs=1k -f csv "$tmp/led.yaml"
expect_exit 0 "$bl" sweep --set vs=27 --param rs --from 1k --to 2k \
	--points 3 -f csv "$tmp/led.yaml"
expect_text "$tmp/out" "0,1000,1,1,"
expect_exit 0 "$bl" tolerance --set vs=27 -n 0 "$tmp/led.yaml"
expect_text "$tmp/out" "27 V"
expect_exit 0 "$bl" plot --set vs=27 "$tmp/led.yaml"
expect_exit 0 "$bl" reduce --set "rs=4.7 kohm" "$tmp/led.yaml"
expect_text "$tmp/out" "4.7"
sweep="--param rs --from 1k --to 2k"
for cmd in design sweep tolerance plot reduce; do
	args=
	[ $cmd = sweep ] && args=$sweep
	expect_exit 64 "$bl" $cmd $args --set gain=3 "$tmp/led.yaml"
	expect_exit 65 "$bl" $cmd $args --set "vs=1 A" "$tmp/led.yaml"
	expect_text "$tmp/err" "vs:"
done
# fit takes --set on its SESSION, whose values it holds.
pts="$samples/amber-panel-led.csv"
expect_exit 0 "$bl" fit --model diode --points "$pts" --fix series_resistance=0 \
	--set temperature=61.3 "$tmp/led.yaml"
expect_text "$tmp/out" "temperature = 61.3 degC"
expect_exit 64 "$bl" fit --model diode --points "$pts" --set temperature=40
expect_text "$tmp/err" "--set changes a SESSION"
expect_exit 64 "$bl" fit --model diode --points "$pts" --set temperature=40 \
	--into "$tmp/led.yaml"
expect_text "$tmp/err" "give one of them"
expect_exit 64 "$bl" fit --model diode --points "$pts" --set gain=3 "$tmp/led.yaml"
expect_text "$tmp/err" "gain"
expect_exit 65 "$bl" fit --model diode --points "$pts" --set "temperature=3 V" \
	"$tmp/led.yaml"
expect_text "$tmp/err" "temperature"
# A part of a network source by its key path: 12 V over 39k and 12k
# gives Vth = 12 V x 12 / 51 = 2.82353 V (the divider rule).
expect_exit 0 "$bl" reduce --nodes --set "source.network.upper divider=39k" \
	"$samples/npn-divider-bias.yaml"
expect_text "$tmp/out" "Vth  2.82353 V"

# design --worst-case: each standard row's columns equal the tolerance
# command's worst case with RS at that value.
expect_exit 0 "$bl" design --worst-case -f csv "$tmp/led.yaml"
cp "$tmp/out" "$tmp/design.csv"
expect_text "$tmp/design.csv" "current_min_A,current_max_A"
expect_text "$tmp/design.csv" "higher,2200,"
expect_awk "$tmp/design.csv" 'NR > 1 && $1 == "higher" { ok = ($11 == "yes") }
	END { exit !ok }' "the nearer value (2.2k, -0.66 %) is marked"
for row in lower higher; do
	rs=$(csv_get "$tmp/design.csv" rs_ohm $row)
	expect_exit 0 "$bl" tolerance -n 0 -f csv --set rs="$rs" "$tmp/led.yaml"
	cp "$tmp/out" "$tmp/tol.csv"
	for pair in current_min_A:current_A,min current_max_A:current_A,max \
	            resistor_power_max_W:resistor_power_W,max; do
		col=${pair%%:*}
		key=${pair#*:}
		want=$(grep -F "worst_case,${key%,*},${key#*,}," "$tmp/tol.csv" |
		       cut -d, -f4)
		expect_field "$tmp/design.csv" "$row," \
			"$(head -n 1 "$tmp/design.csv" | tr , '\n' | grep -n -x "$col" |
			   cut -d: -f1)" "$want"
	done
done
expect_exit 0 "$bl" design --worst-case "$tmp/led.yaml"
expect_text "$tmp/out" "I nominal    I min        I max"
expect_text "$tmp/out" "at worst"
expect_text "$tmp/out" "(nearest)"
expect_exit 65 "$bl" design --worst-case "$tmp/notol.yaml"
expect_text "$tmp/err" "no tolerances"

# A Zener shunt for 5 mA reverse current: RS = (12 - 5.1) / 5m = 1380 ohm.
expect_exit 0 "$bl" design --current -5m -f csv "$samples/zener-shunt-5v1.yaml"
expect_field "$tmp/out" "exact," 2 1380
expect_exit 3 "$bl" design --current 5m "$samples/zener-shunt-5v1.yaml"
expect_text "$tmp/err" "reverse current"
expect_exit 0 "$bl" design --power 25.5m -f csv "$samples/zener-shunt-5v1.yaml"
expect_field "$tmp/out" "exact," 2 1380

# A transistor stage by its collector current: the upper divider resistor
# or the emitter resistor (the core test checks both against the base-loop
# equation); a FET by its drain current; the wrong kind of device refused.
npn="$samples/npn-divider-bias.yaml"
expect_exit 0 "$bl" design --collector-current 2m \
	--solve-for "source.network.upper divider" -f csv "$npn"
expect_text "$tmp/out" "exact,70298"
expect_exit 0 "$bl" design --collector-current 2m --solve-for emitter_resistance \
	"$npn"
expect_text "$tmp/out" "collector_current 2 mA, solving for emitter_resistance"
expect_text "$tmp/out" "(nearest)"
expect_exit 0 "$bl" design --vce 6 --solve-for "source.network.upper divider" \
	"$npn"
expect_exit 64 "$bl" design --collector-current 2m "$samples/jfet-self-bias.yaml"
expect_text "$tmp/err" "needs an npn or pnp device"
expect_exit 64 "$bl" design --collector-current 2m --solve-for bogus "$npn"
expect_text "$tmp/err" "bogus"
expect_exit 0 "$bl" design --drain-current 3m -f csv "$samples/jfet-self-bias.yaml"
expect_text "$tmp/out" "exact,334.35"
expect_exit 64 "$bl" design --drain-current 3m "$tmp/led.yaml"

tap_finish
