#!/bin/sh
# biasline solve as a script sees it: exit statuses, CSV shape, the
# projection order that diverges, and the ideal current source.
# Usage: solve_cli.sh BIASLINE
set -u
bl=$1
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
fails=0
n=0

# Check that COMMAND exits with WANT.
expect_exit() {
	want=$1; shift
	n=$((n + 1))
	"$@" >"$tmp/out" 2>"$tmp/err"
	got=$?
	if [ "$got" -ne "$want" ]; then
		echo "not ok $n - '$*' exited $got, expected $want"; cat "$tmp/err"
		fails=$((fails + 1))
	else
		echo "ok $n - '$*' exits $want"
	fi
}

# Check that FILE contains the fixed string S.
expect_text() {
	n=$((n + 1))
	if grep -F -q -- "$2" "$1"; then
		echo "ok $n - output has '$2'"
	else
		echo "not ok $n - output lacks '$2'"; cat "$1"
		fails=$((fails + 1))
	fi
}

cat >"$tmp/diode.yaml" <<'YAML'
source:
  vs: 12
  rs: 1.5k
device:
  model: diode
  saturation_current: 2.2e-12
  ideality: 1.9
  series_resistance: 0.4
  temperature: 40
YAML
cat >"$tmp/nan.yaml" <<'YAML'
source:
  vs: 12
  rs: 1.5k
device:
  model: diode
  saturation_current: .nan
  ideality: 1.9
YAML
cat >"$tmp/current.yaml" <<'YAML'
source:
  is: 2.5m
device:
  model: diode
  saturation_current: 3.7e-13
  ideality: 1.3
YAML

expect_exit 0 "$bl" solve "$tmp/diode.yaml"
expect_text "$tmp/out" "1 operating point"
expect_exit 0 "$bl" solve --format csv "$tmp/diode.yaml"
expect_text "$tmp/out" "point,voltage_V,current_A,power_W,rd_ohm,steps,method,tangent"
# Power in the CSV is V*I of the same row (to the printed digits).
n=$((n + 1))
if awk -F, 'NR==2 { p=$2*$3; d=(p-$4)/$4; if (d<0) d=-d; exit !(d < 1e-14) }' "$tmp/out"; then
	echo "ok $n - power_W = voltage_V * current_A"
else
	echo "not ok $n - power_W differs from V*I"; cat "$tmp/out"; fails=$((fails + 1))
fi
# 17 significant digits.
expect_text "$tmp/out" "1,1.12655615"
n=$((n + 1))
if awk -F, 'NR==2 { s=$2; gsub(/[-.]|e.*/, "", s); exit !(length(s) >= 15) }' "$tmp/out"; then
	echo "ok $n - voltage has full precision"
else
	echo "not ok $n - voltage lacks digits"; fails=$((fails + 1))
fi
# Voltage from the line diverges for this LED-like junction (|g'| >> 1):
# no point, exit 3, and the message says to switch.
expect_exit 3 "$bl" solve --method projection --order voltage-from-line "$tmp/diode.yaml"
expect_text "$tmp/err" "switch to voltage-from-device"
expect_exit 0 "$bl" solve --method projection --order voltage-from-device "$tmp/diode.yaml"
expect_exit 0 "$bl" solve --method newton --trace "$tmp/diode.yaml"
expect_text "$tmp/out" "iteration (newton)"
expect_exit 0 "$bl" solve --method brent "$tmp/diode.yaml"
expect_exit 0 "$bl" solve --method relaxed --order voltage-from-line "$tmp/diode.yaml"
# An ideal current source: V = n Vt ln(1 + I/Is) at 25 degC
# (Shockley; Vt = 25.6926 mV from the exact SI constants).
expect_exit 0 "$bl" solve --format csv "$tmp/current.yaml"
n=$((n + 1))
if awk -F, 'NR==2 { vt=1.380649e-23*298.15/1.602176634e-19;
	v=1.3*vt*log(1+2.5e-3/3.7e-13); d=($2-v)/v; if (d<0) d=-d; exit !(d < 1e-12) }' "$tmp/out"; then
	echo "ok $n - ideal current source gives n Vt ln(1 + I/Is)"
else
	echo "not ok $n - ideal current source voltage wrong"; cat "$tmp/out"; fails=$((fails + 1))
fi
# A transistor stage reports its collector side beside the base loop.
cat >"$tmp/npn.yaml" <<'YAML'
source:
  vs: 2.385
  rs: 8.2k
device:
  model: npn
  saturation_current: 14e-15
  ideality: 1
  current_gain: 163
  emitter_resistance: 390
  collector_resistance: 1.8k
  supply_voltage: 12
YAML
expect_exit 0 "$bl" solve "$tmp/npn.yaml"
expect_text "$tmp/out" "region: active"
expect_exit 0 "$bl" solve --format csv "$tmp/npn.yaml"
expect_text "$tmp/out" "collector_current_A"
# IC = beta * IB in the same row (columns 3 and 9).
n=$((n + 1))
if awk -F, 'NR==2 { d=($9-163*$3)/$9; if (d<0) d=-d; exit !(d < 1e-12) }' "$tmp/out"; then
	echo "ok $n - collector current is beta times base current"
else
	echo "not ok $n - collector current column wrong"; cat "$tmp/out"; fails=$((fails + 1))
fi
expect_exit 65 "$bl" solve "$tmp/nan.yaml"
expect_text "$tmp/err" "saturation_current"
expect_exit 66 "$bl" solve "$tmp/does-not-exist.yaml"
expect_exit 64 "$bl" solve
expect_exit 64 "$bl" solve --format xml "$tmp/diode.yaml"
expect_exit 64 "$bl" solve --method guess "$tmp/diode.yaml"
expect_exit 64 "$bl" solve --bogus "$tmp/diode.yaml"
expect_exit 0 "$bl" solve --help
expect_text "$tmp/out" "--format"
expect_exit 0 "$bl" --version
expect_exit 64 "$bl" nonsense

echo "1..$n"
[ "$fails" -eq 0 ]
