#!/bin/sh
# biasline reduce as a script sees it: exit statuses, the CSV columns
# against closed-form Thevenin values, the power balance at the operating
# point, ideal sources, errors that name the file, line and part, and the
# safety caution.
# Usage: reduce_cli.sh BIASLINE (CSV_STRICT names tests/cli/csv_strict)
set -u
bl=$1
. "$(dirname "$0")/tap.sh"

# Invented values: a divider from a 13.7 V rail, an emitter-side resistor
# to a -4.3 V rail, a 0.37 mA current source into the base.
cat >"$tmp/net.yaml" <<'YAML'
source:
  network:
    device_between: [base, emitter]
    parts:
      - name: upper rail
        voltage_source: 13.7 V
        from: ground
        to: top
      - name: lower rail
        voltage_source: 4.3 V
        from: bottom
        to: ground
      - name: upper, divider
        resistor: 56k
        from: top
        to: base
      - name: lower divider
        resistor: 18k
        from: base
        to: ground
      - name: trim
        current_source: 0.37 mA
        from: ground
        to: base
      - name: emitter resistor
        resistor: 3.3k
        from: emitter
        to: bottom
device:
  model: diode
  saturation_current: 2.2e-14
  ideality: 1.04
YAML
expect_exit 0 "$bl" reduce --format csv "$tmp/net.yaml"
expect_text "$tmp/out" "vth_V,rth_ohm,isc_A"
# Superposition at the base (divider plus the current source into R1||R2),
# the lower rail below the emitter; Rth = R1||R2 + Re (circuit theorems,
# Alexander & Sadiku, Fundamentals of Electric Circuits).
expect_awk "$tmp/out" 'NR==2 { p=56e3*18e3/(56e3+18e3);
	vth=13.7*18e3/(56e3+18e3) + 0.37e-3*p + 4.3; rth=p+3.3e3;
	a=($1-vth)/vth; b=($2-rth)/rth; if (a<0) a=-a; if (b<0) b=-b;
	exit !(a < 1e-12 && b < 1e-12) }' "Vth and Rth match the closed form"
expect_exit 0 "$bl" reduce --nodes --format csv "$tmp/net.yaml"
expect_text "$tmp/out" \
	"row,point,name,part_kind,from,to,voltage_V,current_A,power_W,resistance_ohm"
expect_text "$tmp/out" 'part,1,"upper, divider",resistor,top,base,'
# One table: the strict reader decodes it (fields joined by tabs).
cp "$tmp/out" "$tmp/nodes.csv"
expect_exit 0 "$CSV_STRICT" -t "$tmp/nodes.csv"
cp "$tmp/out" "$tmp/nodes.tsv"
# Tellegen's theorem (Tellegen, Philips Res. Rep. 7, 1952): the parts'
# absorbed powers and the device's sum to zero.
n=$((n + 1))
if awk -F'\t' '$1 == "point" { dev = $9 } $1 == "part" { sum += $9;
	mag += ($9 < 0 ? -$9 : $9) }
	END { t = sum + dev; if (t < 0) t = -t;
	      exit !(mag > 0 && t < 1e-12 * mag) }' "$tmp/nodes.tsv"; then
	echo "ok $n - part powers and the device's sum to zero"
else
	echo "not ok $n - part powers and the device's do not sum to zero"
	cat "$tmp/nodes.tsv"; fails=$((fails + 1))
fi
expect_exit 0 "$bl" reduce --nodes --reference ground "$tmp/net.yaml"
expect_text "$tmp/out" "Node voltages (relative to ground):"
expect_text "$tmp/out" "13.7000 V"

cat >"$tmp/current.yaml" <<'YAML'
source:
  network:
    device_between: [anode, ground]
    parts:
      - name: feed
        current_source: 2.5 mA
        from: ground
        to: x
      - name: series
        resistor: 1k
        from: x
        to: anode
device:
  model: diode
  saturation_current: 2.2e-14
  ideality: 1.04
YAML
expect_exit 0 "$bl" reduce --format csv "$tmp/current.yaml"
# No open-circuit voltage: an empty field; the resistance is infinite.
expect_text "$tmp/out" ",inf,0.0025"

cat >"$tmp/high.yaml" <<'YAML'
source:
  network:
    device_between: [plus, ground]
    parts:
      - name: rail
        voltage_source: 170 V
        from: ground
        to: plus
      - name: bleeder
        resistor: 47k
        from: plus
        to: ground
device:
  model: diode
  saturation_current: 2.2e-14
  ideality: 1.04
  series_resistance: 2.2k
YAML
expect_exit 0 "$bl" reduce "$tmp/high.yaml"
expect_text "$tmp/out" "Rth  0: an ideal voltage source"
expect_text "$tmp/err" "caution: this circuit has more than 60 V DC"

cat >"$tmp/loop.yaml" <<'YAML'
source:
  network:
    device_between: [plus, ground]
    parts:
      - name: cell
        voltage_source: 1.5 V
        from: ground
        to: plus
      - name: load
        resistor: 1k
        from: plus
        to: ground
      - name: spare cell
        voltage_source: 1.6 V
        from: ground
        to: plus
device:
  model: diode
  saturation_current: 2.2e-14
  ideality: 1.04
YAML
expect_exit 65 "$bl" reduce "$tmp/loop.yaml"
expect_text "$tmp/err" "loop.yaml:13:9: source.network.spare cell: voltage source 'spare cell' closes a loop"
expect_exit 66 "$bl" reduce "$tmp/does-not-exist.yaml"
expect_exit 64 "$bl" reduce
expect_exit 64 "$bl" reduce --format xml "$tmp/net.yaml"
expect_exit 64 "$bl" reduce --reference ground "$tmp/net.yaml"
expect_exit 64 "$bl" reduce --nodes --reference nowhere "$tmp/net.yaml"
expect_empty "$tmp/out" "a bad --reference is refused before any output"
expect_exit 64 "$bl" reduce --bogus "$tmp/net.yaml"
expect_exit 0 "$bl" reduce --help
expect_text "$tmp/out" "--nodes"

tap_finish
