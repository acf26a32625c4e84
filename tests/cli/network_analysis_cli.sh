#!/bin/sh
# biasline sweep, tolerance and solve --sensitivity on a network source
# (samples/split-supply-bias.yaml): part keys source.network.<part name>,
# the equivalent's keys refused, and every sweep row and worst-case corner
# on the load line of the divider's Thevenin equivalent by hand,
#   Vth = 15 V R2 / (R1 + R2) + 5 V,   Rth = R1 R2 / (R1 + R2) + Re
# (voltage divider and Thevenin's theorem, common practice).
# Usage: network_analysis_cli.sh BIASLINE SAMPLES_DIR
set -u
bl=$1
sample=$2/split-supply-bias.yaml
. "$(dirname "$0")/tap.sh"

# Check that V (volts) and I (amperes) lie on the equivalent's load line
# for R1 and R2 (ohm) within 1e-9 of Vth; WHAT names the check.
expect_on_line() {
	n=$((n + 1))
	if awk -v v="$1" -v i="$2" -v r1="$3" -v r2="$4" 'BEGIN {
	        re = 4700; vth = 15 * r2 / (r1 + r2) + 5;
	        rth = r1 * r2 / (r1 + r2) + re; d = v + rth * i - vth;
	        if (d < 0) d = -d; exit !(v != "" && i > 0 && d <= 1e-9 * vth) }'
	then
		echo "ok $n - $5 on the load line"
	else
		echo "not ok $n - $5: V=$1 I=$2 is off the load line"
		fails=$((fails + 1))
	fi
}

# A sweep of the lower divider resistor, by its session key path.
expect_exit 0 "$bl" sweep --param "source.network.lower divider" \
	--from 15k --to 33.7k --points 5 --format csv "$sample"
expect_text "$tmp/out" "step,source.network.lower divider_ohm,point,count,"
cp "$tmp/out" "$tmp/sweep.csv"
rows=$(tail -n +2 "$tmp/sweep.csv" | wc -l)
n=$((n + 1))
if [ "$rows" -eq 5 ]; then
	echo "ok $n - five sweep rows"
else
	echo "not ok $n - $rows sweep rows, expected 5"; fails=$((fails + 1))
fi
tail -n +2 "$tmp/sweep.csv" | while IFS=, read -r step r2 pt cnt v i p; do
	echo "$step $r2 $v $i"
done >"$tmp/rows"
while read -r step r2 v i; do
	expect_on_line "$v" "$i" 68000 "$r2" "sweep step $step (R2 = $r2)"
done <"$tmp/rows"
expect_exit 0 "$bl" sweep --param "source.network.lower divider" \
	--from 15k --to 33.7k --points 3 "$sample"
expect_text "$tmp/out" "source.network.lower divider"
expect_text "$tmp/out" "1/1"
# The equivalent cannot vary; an unknown part lists the real ones.
expect_exit 64 "$bl" sweep --param rs --from 1k --to 2k "$sample"
expect_text "$tmp/err" "source.network.emitter resistor"
expect_exit 64 "$bl" sweep --param "source.network.lower" --from 1k \
	--to 2k "$sample"
expect_text "$tmp/err" "no part called 'lower'"
expect_exit 64 "$bl" sweep --param "source.network.lower divider" \
	--from 0 --to 2k "$sample"

# Tolerances on parts (quoted keys with spaces) in a temporary session.
cp "$sample" "$tmp/tol.yaml"
cat >>"$tmp/tol.yaml" <<'YAML'
tolerances:
  "source.network.upper divider": 5%
  "source.network.lower divider": 5%
YAML
expect_exit 0 "$bl" tolerance --trials 200 "$tmp/tol.yaml"
# The equivalent resistance is no physical part: no rating advice for it
# (safety: each real resistor's power comes from reduce --nodes).
expect_text "$tmp/out" "check each one with 'biasline reduce --nodes'"
expect_text "$tmp/out" "source.network.upper divider"
expect_text "$tmp/out" "worst case (4 corners)"
expect_exit 0 "$bl" tolerance --trials 0 --format csv "$tmp/tol.yaml"
cp "$tmp/out" "$tmp/tol.csv"
expect_text "$tmp/tol.csv" \
	"worst_case,current_A,min_at_source.network.upper divider,71400"
expect_text "$tmp/tol.csv" \
	"worst_case,current_A,min_at_source.network.lower divider,23100"
# The current and voltage both fall at the same corner (a monotone
# junction), so the minima are one point of that corner's load line.
imin=$(grep -F "worst_case,current_A,min," "$tmp/tol.csv" | cut -d, -f4)
vmin=$(grep -F "worst_case,voltage_V,min," "$tmp/tol.csv" | cut -d, -f4)
expect_on_line "$vmin" "$imin" 71400 23100 "worst-case minimum"
imax=$(grep -F "worst_case,current_A,max," "$tmp/tol.csv" | cut -d, -f4)
vmax=$(grep -F "worst_case,voltage_V,max," "$tmp/tol.csv" | cut -d, -f4)
expect_on_line "$vmax" "$imax" 64600 20900 "worst-case maximum"
# The tidied session keeps the keys and loads again.
expect_exit 0 "$bl" tidy "$tmp/tol.yaml"
cp "$tmp/out" "$tmp/tidy.yaml"
expect_exit 0 "$bl" tolerance --trials 0 "$tmp/tidy.yaml"
# vs stands for the equivalent: refused, with the parts suggested.
cp "$sample" "$tmp/vs.yaml"
printf 'tolerances:\n  vs: 5%%\n' >>"$tmp/vs.yaml"
expect_exit 65 "$bl" tolerance "$tmp/vs.yaml"
expect_text "$tmp/err" "source.network.positive supply"

# solve --sensitivity lists the parts, not vs and rs.
expect_exit 0 "$bl" solve --sensitivity --format csv "$sample"
expect_text "$tmp/out" "1,source.network.lower divider,22000,"
n=$((n + 1))
if grep -q "^1,vs," "$tmp/out"; then
	echo "not ok $n - vs listed for a network source"; fails=$((fails + 1))
else
	echo "ok $n - vs not listed for a network source"
fi

# design names a part of the network; the equivalent's rs is refused.
expect_exit 64 "$bl" design --current 1m "$sample"
expect_text "$tmp/err" "--solve-for source.network.NAME"
expect_exit 0 "$bl" design --current 400u --solve-for "source.network.upper divider" \
	--format csv "$sample"
expect_text "$tmp/out" "row,part_ohm,voltage_V,current_A"
# The exact row meets the target, and its value re-solves to it.
n=$((n + 1))
if awk -F, 'NR==2 { d=($4-400e-6)/400e-6; if (d<0) d=-d; exit !($1=="exact" && d < 1e-9) }' "$tmp/out"; then
	echo "ok $n - the exact part value meets the target current"
else
	echo "not ok $n - exact part value misses the target"; cat "$tmp/out"; fails=$((fails + 1))
fi

tap_finish
