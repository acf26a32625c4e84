#!/bin/sh
# What every command writes: each CSV output parsed by a strict RFC 4180
# reader (tests/cli/csv_strict.c; Shafranovich, RFC 4180, 2005) with
# network part names holding commas, quotes and spaces; a unique CSV
# header for every model; no "nan" or "inf" in text output; every command
# exits 74 with a message when standard output is /dev/full; and the man
# page's exit statuses are the program's table.
# Usage: output_cli.sh BIASLINE SAMPLES_DIR MAN_PAGE
# (CSV_STRICT names tests/cli/csv_strict)
set -u
bl=$1
samples=$2
man=$3
. "$(dirname "$0")/tap.sh"

# A network whose part names hold a comma, double quotes and spaces.
cat >"$tmp/net.yaml" <<'YAML'
source:
  network:
    device_between: [base, ground]
    parts:
      - name: supply
        voltage_source: 11.3 V
        from: ground
        to: rail
      - name: upper, divider
        resistor: 43k
        from: rail
        to: base
      - name: 'the "lower" divider'
        resistor: 9.1k
        from: base
        to: ground
      - name: 'trim, "fine" adjust'
        current_source: 27u
        from: ground
        to: base
device:
  model: npn
  saturation_current: 9f
  current_gain: 173
  emitter_resistance: 390
  collector_resistance: 1.8k
  supply_voltage: 11.3 V
target:
  current: 21u
tolerances:
  'source.network.upper, divider': 5%
  'source.network.the "lower" divider': {plus_minus: 2%, distribution: normal}
  'source.network.trim, "fine" adjust': 10%
  current_gain: 20%
YAML

# Run a CSV command into $tmp/out and check it strictly; WHAT names it.
csv_case() {
	what=$1; shift
	expect_exit 0 "$@"
	cp "$tmp/out" "$tmp/case.csv"
	expect_strict_csv "$tmp/case.csv" "$what"
}

csv_case "solve csv" "$bl" solve -f csv "$tmp/net.yaml"
csv_case "solve csv --trace" "$bl" solve -f csv --trace "$tmp/net.yaml"
csv_case "solve csv --sensitivity" "$bl" solve -f csv --sensitivity \
	"$tmp/net.yaml"
"$CSV_STRICT" -c parameter "$tmp/case.csv" >"$tmp/params"
expect_text "$tmp/params" 'source.network.upper, divider'
expect_text "$tmp/params" 'source.network.the "lower" divider'
expect_text "$tmp/params" 'source.network.trim, "fine" adjust'
csv_case "sweep csv of a part with a comma" "$bl" sweep -f csv \
	--param 'source.network.upper, divider' --from 39k --to 47k --points 4 \
	"$tmp/net.yaml"
expect_text "$tmp/out" '"source.network.upper, divider_ohm"'
csv_case "sweep csv of a part with quotes" "$bl" sweep -f csv \
	--param 'source.network.the "lower" divider' --from 8k --to 10k \
	--points 3 "$tmp/net.yaml"
csv_case "tolerance csv" "$bl" tolerance -f csv -n 200 "$tmp/net.yaml"
"$CSV_STRICT" -c name "$tmp/case.csv" >"$tmp/names"
expect_text "$tmp/names" 'max_at_source.network.trim, "fine" adjust'
csv_case "tolerance csv, worst case only" "$bl" tolerance -f csv -n 0 \
	"$tmp/net.yaml"
csv_case "design csv of a part" "$bl" design -f csv \
	--solve-for 'source.network.the "lower" divider' "$tmp/net.yaml"
csv_case "reduce csv" "$bl" reduce -f csv "$tmp/net.yaml"
csv_case "reduce --nodes csv" "$bl" reduce --nodes -f csv "$tmp/net.yaml"
"$CSV_STRICT" -c name "$tmp/case.csv" >"$tmp/names"
expect_text "$tmp/names" 'trim, "fine" adjust'
expect_text "$tmp/names" 'the "lower" divider'
csv_case "design csv of rs" "$bl" design -f csv --current 7m \
	"$samples/indicator-led-24v.yaml"
csv_case "sweep csv of rs" "$bl" sweep -f csv --param rs --from 1k \
	--to 3k --points 5 "$samples/indicator-led-24v.yaml"
csv_case "fit csv" "$bl" fit -f csv -m led -p "$samples/amber-panel-led.csv"

# Every model has a sample, and each sample's CSV outputs are strict, so
# every model's header is unique.
printf 'source: {vs: 5, rs: 1k}\ndevice: {model: no-such-model}\n' \
	>"$tmp/bad.yaml"
"$bl" check "$tmp/bad.yaml" 2>&1 | sed -n 's/.*expected a model name (\(.*\))$/\1/p' |
	tr -d ' ' | tr ',' '\n' >"$tmp/models"
n=$((n + 1))
if [ "$(wc -l <"$tmp/models")" -ge 12 ]; then
	echo "ok $n - the model list is read from the loader's message"
else
	echo "not ok $n - no model list in the loader's message"
	fails=$((fails + 1))
fi
while read -r m; do
	n=$((n + 1))
	if grep -l -q -E "^  model: $m\$" "$samples"/*.yaml; then
		echo "ok $n - model $m has a sample"
	else
		echo "not ok $n - model $m has no sample"; fails=$((fails + 1))
	fi
done <"$tmp/models"
for f in "$samples"/*.yaml; do
	name=$(basename "$f")
	"$bl" solve -f csv "$f" >"$tmp/s.csv" 2>/dev/null
	expect_strict_csv "$tmp/s.csv" "solve csv of $name"
	"$bl" solve -f csv --sensitivity "$f" >"$tmp/s.csv" 2>/dev/null
	expect_strict_csv "$tmp/s.csv" "solve csv --sensitivity of $name"
	"$bl" solve -f csv --trace "$f" >"$tmp/s.csv" 2>/dev/null
	expect_strict_csv "$tmp/s.csv" "solve csv --trace of $name"
	# The other tables, where the sample has what they need (a
	# tolerances: section, a target:): strict when the command runs.
	for cmd in "tolerance -n 50" "design" "reduce --nodes"; do
		# shellcheck disable=SC2086
		if "$bl" $cmd -f csv "$f" >"$tmp/s.csv" 2>/dev/null; then
			expect_strict_csv "$tmp/s.csv" "$cmd csv of $name"
		fi
	done
	# Text never shows nan or inf: "not defined here" and "infinite".
	for cmd in "solve --sensitivity --trace" "tolerance -n 50" "design" \
	           "reduce --nodes" \
	           "sweep --param temperature --from -10 --to 60 --points 4"; do
		# shellcheck disable=SC2086
		"$bl" $cmd "$f" >"$tmp/s.txt" 2>&1
		n=$((n + 1))
		if grep -q -w -i -E 'nan|inf' "$tmp/s.txt"; then
			echo "not ok $n - '$cmd' text of $name shows nan or inf"
			grep -n -w -i -E 'nan|inf' "$tmp/s.txt"; fails=$((fails + 1))
		else
			echo "ok $n - '$cmd' text of $name shows no nan or inf"
		fi
	done
done

# A failed write to standard output: exit 74 with a message, every command.
if [ -w /dev/full ]; then
	led=$samples/indicator-led-24v.yaml
	for args in "solve $led" "solve -f csv $led" "solve --trace $led" \
	            "check $led" "tidy $led" "plot $led" "reduce $led" \
	            "reduce -f csv --nodes $tmp/net.yaml" \
	            "design --current 7m $led" \
	            "sweep --param rs --from 1k --to 3k $led" \
	            "tolerance -n 100 $tmp/net.yaml" \
	            "fit -m led -p $samples/amber-panel-led.csv" \
	            "--help" "--version" \
	            "solve --help" "plot --help"; do
		n=$((n + 1))
		# shellcheck disable=SC2086
		"$bl" $args >/dev/full 2>"$tmp/err"
		got=$?
		if [ "$got" -eq 74 ] && grep -q "cannot write the output" "$tmp/err"
		then
			echo "ok $n - '$args' to /dev/full exits 74 with a message"
		else
			echo "not ok $n - '$args' to /dev/full exited $got"
			cat "$tmp/err"; fails=$((fails + 1))
		fi
	done
else
	echo "ok $((n + 1)) # SKIP no writable /dev/full"; n=$((n + 1))
fi

# The man page's EXIT STATUS lists exactly the program's table.
"$bl" --help | sed -n '/^Exit status:/,$p' | awk 'NR > 1 { print $1 }' |
	sort >"$tmp/codes.prog"
sed -n '/^\.SH EXIT STATUS/,/^\.SH /p' "$man" |
	awk '/^\.TP/ { getline; if ($1 == ".B" && $2 ~ /^[0-9]+$/) print $2 }' |
	sort >"$tmp/codes.man"
n=$((n + 1))
if [ -s "$tmp/codes.prog" ] && cmp -s "$tmp/codes.prog" "$tmp/codes.man"; then
	echo "ok $n - the man page's exit statuses are the program's table"
else
	echo "not ok $n - exit statuses differ: program $(tr '\n' ' ' \
		<"$tmp/codes.prog"), man $(tr '\n' ' ' <"$tmp/codes.man")"
	fails=$((fails + 1))
fi

tap_finish
