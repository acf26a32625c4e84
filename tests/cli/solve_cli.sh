#!/bin/sh
# biasline solve as a script sees it: exit statuses, CSV shape, the
# projection order that diverges, and the ideal current source.
# Usage: solve_cli.sh BIASLINE
set -u
bl=$1
. "$(dirname "$0")/tap.sh"

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
expect_awk "$tmp/out" 'NR==2 { p=$2*$3; d=(p-$4)/$4; if (d<0) d=-d; exit !(d < 1e-14) }' "power_W = voltage_V * current_A"
# 17 significant digits.
expect_text "$tmp/out" "1,1.12655615"
expect_awk "$tmp/out" 'NR==2 { s=$2; gsub(/[-.]|e.*/, "", s); exit !(length(s) >= 15) }' "voltage has full precision"
# Voltage from the line diverges for this LED-like junction (|g'| >> 1):
# no point, exit 4 (a point exists), and the message says to switch.
expect_exit 4 "$bl" solve --method projection --order voltage-from-line "$tmp/diode.yaml"
expect_text "$tmp/err" "switch to voltage-from-device"
expect_exit 0 "$bl" solve --method projection --order voltage-from-device "$tmp/diode.yaml"
expect_exit 0 "$bl" solve --method newton --trace "$tmp/diode.yaml"
expect_text "$tmp/out" "iteration (newton)"
expect_exit 0 "$bl" solve --method brent "$tmp/diode.yaml"
expect_exit 0 "$bl" solve --method relaxed --order voltage-from-line "$tmp/diode.yaml"
# An ideal current source: V = n Vt ln(1 + I/Is) at 25 degC
# (Shockley; Vt = 25.6926 mV from the exact SI constants).
expect_exit 0 "$bl" solve --format csv "$tmp/current.yaml"
expect_awk "$tmp/out" 'NR==2 { vt=1.380649e-23*298.15/1.602176634e-19;
	v=1.3*vt*log(1+2.5e-3/3.7e-13); d=($2-v)/v; if (d<0) d=-d; exit !(d < 1e-12) }' "ideal current source gives n Vt ln(1 + I/Is)"
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
# IC = beta * IB in the same row (columns 3 and 10) in the active region,
# to within the junctions' leakage Is (1 + (beta + 1)/betaR) / IC, about
# 1e-9 here (Ebers & Moll, Proc. IRE 42, 1954).
expect_awk "$tmp/out" 'NR==2 { d=($10-163*$3)/$10; if (d<0) d=-d; exit !(d < 1e-8) }' "collector current is beta times base current"
# A plain projection run that contracts slowly (|g'| = 0.93 on an invented
# lamp) hits the step limit: the robust solve's point is still listed, the
# message says how many more steps were needed, and the exit status is 4
# (a point exists), not 3.  The estimate is within 30 % of what a run with
# room for every step takes (linear convergence, Burden & Faires 2010).
cat >"$tmp/cap.yaml" <<'YAML'
format_version: 1
source:
  vs: 12
  rs: 56.6
device:
  model: power-law
  reference_voltage: 14
  reference_current: 250 mA
  exponent: 0.55
solver:
  method: projection
  order: voltage-from-line
  start_voltage: 4.2
YAML
expect_exit 4 "$bl" solve "$tmp/cap.yaml"
expect_text "$tmp/err" "not converged after 200 steps (about"
expect_text "$tmp/out" "1 operating point (found by auto; not reached by the method)"
expect_text "$tmp/out" "4.45866 V"
more=$(sed -n 's/.*(about \([0-9]*\) more needed).*/\1/p' "$tmp/err" | head -1)
expect_exit 0 "$bl" solve --set solver.step_limit=100000 --format csv --trace "$tmp/cap.yaml"
took=$(awk -F, 'NR > 1 { n = $1 } END { print n }' "$tmp/out")
expect_awk "$tmp/out" "BEGIN { d = ($more + 200 - $took) / $took; if (d < 0) d = -d; exit !(d <= 0.3) }" "the steps still needed ($more more after 200) are within 30 % of the run's $took"
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

tap_finish
