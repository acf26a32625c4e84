#!/bin/sh
# The vector pictures of 'biasline plot': every SVG the test makes is
# parsed by a strict XML parser (xmllint) and rendered by another program
# (rsvg-convert); then pixels are checked against values computed here,
# never against stored pictures: the operating point's marker where the
# axis transform the SVG names puts it, the load line's ends where VS and
# VS/RS put them, each point of a three-point circuit with its shape's
# colour.  Skips (77) when xmllint or rsvg-convert is missing.
# Usage: pictures.sh BIASLINE PNG_PROBE SAMPLES
set -u
bl=$1
probe=$2
samples=$3
for tool in xmllint rsvg-convert; do
	if ! command -v "$tool" >/dev/null 2>&1; then
		echo "1..0 # SKIP $tool is not installed"
		exit 77
	fi
done
. "$(dirname "$0")/../cli/tap.sh"

# Check that the SVG FILE is well-formed XML and renders to $FILE.png.
expect_svg() {
	n=$((n + 1))
	if xmllint --noout "$1" 2>"$tmp/xml" &&
	   rsvg-convert -o "$1.png" "$1" 2>"$tmp/rsvg" &&
	   "$probe" blank "$1.png" >"$tmp/blank"; then
		echo "ok $n - $2 parses and renders ($(cat "$tmp/blank"))"
	else
		echo "not ok $n - $2: $(cat "$tmp/xml" "$tmp/rsvg" "$tmp/blank" 2>/dev/null)"
		fails=$((fails + 1))
	fi
}

# Check (or with "no", check the absence of) colour HEX within R px of X, Y
# in the PNG FILE.
expect_pixel() {
	n=$((n + 1))
	want=yes
	if [ "$1" = no ]; then
		want=no
		shift
	fi
	if "$probe" near "$1" "$2" "$3" "$4" "$5" >"$tmp/px"; then got=yes; else got=no; fi
	if [ "$got" = "$want" ]; then
		echo "ok $n - $6: $(cat "$tmp/px")"
	else
		echo "not ok $n - $6: $(cat "$tmp/px")"
		fails=$((fails + 1))
	fi
}

# Check colour HEX at four pixels D px from X, Y in the PNG FILE: along
# the axes with FORM +, along the diagonals with FORM x (a shape centred
# off X, Y by D px or more misses one of them).
# Usage: expect_spot FILE X Y HEX D FORM WHAT
expect_spot() {
	n=$((n + 1))
	miss=""
	if [ "$6" = x ]; then
		offs="-$5,-$5 -$5,$5 $5,-$5 $5,$5"
	else
		offs="-$5,0 $5,0 0,-$5 0,$5"
	fi
	for o in $offs; do
		x=$(awk -v a="$2" -v b="${o%,*}" 'BEGIN { print a + b }')
		y=$(awk -v a="$3" -v b="${o#*,}" 'BEGIN { print a + b }')
		"$probe" near "$1" "$x" "$y" 0 "$4" >"$tmp/px" ||
			miss="$miss $(cat "$tmp/px");"
	done
	if [ -z "$miss" ]; then
		echo "ok $n - $7"
	else
		echo "not ok $n - $7:$miss"
		fails=$((fails + 1))
	fi
}

# The data area and window an SVG names in its <desc>: sets L T R B and
# XLO XHI YLO YHI.
read_frame() {
	set -- $(sed -n 's/.*<desc>biasline plot area \([^<]*\)<\/desc>.*/\1/p' "$1")
	L=$1 T=$2 R=$3 B=$4 XLO=$6 XHI=$7 YLO=$8 YHI=$9
}

# The pixel of the data point (X, Y) under the frame read: sets PX PY.
to_pixel() {
	PX=$(awk -v x="$1" -v l="$L" -v r="$R" -v a="$XLO" -v b="$XHI" \
		'BEGIN { printf "%.2f", l + (x - a) / (b - a) * (r - l) }')
	PY=$(awk -v y="$2" -v t="$T" -v bo="$B" -v a="$YLO" -v b="$YHI" \
		'BEGIN { printf "%.2f", bo - (y - a) / (b - a) * (bo - t) }')
}

# --- a linear part: the point by Ohm's law (the voltage divider) -------
# A resistor of 2.61 kohm as a power law with exponent 1 behind 23.7 V
# and 1.83 kohm: V = 23.7 * 2610 / 4440, I = 23.7 / 4440 (Ohm's law,
# common practice).
cat >"$tmp/divider.yaml" <<'YAML'
source:
  vs: 23.7
  rs: 1.83k
device:
  model: power-law
  reference_voltage: 1
  reference_current: 383.1417624521073u
  exponent: 1
YAML
vs=23.7
rs=1830
v=$(awk 'BEGIN { printf "%.9g", 23.7 * 2610 / 4440 }')
i=$(awk 'BEGIN { printf "%.9g", 23.7 / 4440 }')
expect_exit 0 "$bl" plot --format svg --output "$tmp/divider.svg" "$tmp/divider.yaml"
expect_svg "$tmp/divider.svg" "the divider's load-line SVG"
read_frame "$tmp/divider.svg"
n=$((n + 1))
if [ "$XLO" = 0 ] && [ "$YLO" = 0 ]; then
	echo "ok $n - the whole-line window starts at 0 V and 0 A"
else
	echo "not ok $n - window starts at $XLO V, $YLO A"; fails=$((fails + 1))
fi
to_pixel "$v" "$i"
expect_pixel "$tmp/divider.svg.png" "$PX" "$PY" 0 009E73 \
	"the stable point's disc at the pixel of ($v V, $i A)"
expect_spot "$tmp/divider.svg.png" "$PX" "$PY" 009E73 3 + \
	"the disc is centred there (within 2 px)"
mx=$PX my=$PY
# A control that can fail: the disc is not at the mirrored pixel.
to_pixel "$(awk -v x="$v" -v a="$XHI" 'BEGIN { print a - x }')" \
	"$(awk -v y="$i" -v a="$YHI" 'BEGIN { print a - y }')"
expect_pixel no "$tmp/divider.svg.png" "$PX" "$PY" 6 009E73 \
	"no point's disc at the mirrored pixel"
to_pixel "$vs" 0
expect_spot "$tmp/divider.svg.png" "$PX" "$PY" 0072B2 2 + \
	"the load line's end at VS = $vs V on the V axis (within 1 px)"
to_pixel 0 "$(awk -v a="$vs" -v b="$rs" 'BEGIN { printf "%.9g", a / b }')"
expect_spot "$tmp/divider.svg.png" "$PX" "$PY" 0072B2 2 + \
	"the load line's end at VS/RS on the I axis (within 1 px)"
expect_pixel "$tmp/divider.svg.png" "$L" "$(awk -v t="$T" -v b="$B" \
	'BEGIN { print (t + b) / 2 }')" 1 000000 "the frame's left edge where the area says"
# The PNG back end draws the same layout at the same size.
expect_exit 0 "$bl" plot --format png --output "$tmp/divider.png" "$tmp/divider.yaml"
expect_spot "$tmp/divider.png" "$mx" "$my" 009E73 3 + \
	"the PNG has the point's disc at the same pixel"
# Another size moves the point by the same transform.
expect_exit 0 "$bl" plot -f svg -w 1100 -H 700 "$tmp/divider.yaml"
cp "$tmp/out" "$tmp/wide.svg"
expect_svg "$tmp/wide.svg" "a 1100 x 700 SVG on standard output"
read_frame "$tmp/wide.svg"
to_pixel "$v" "$i"
expect_spot "$tmp/wide.svg.png" "$PX" "$PY" 009E73 3 + \
	"the point's disc at its pixel in the larger picture"
expect_text "$tmp/wide.svg" "<title>$tmp/divider.yaml</title>"

# --- three crossings of a tunnel diode: each point's shape -------------
cat >"$tmp/tunnel.yaml" <<'YAML'
source:
  vs: 350m
  rs: 280
device:
  model: tunnel
YAML
expect_exit 0 "$bl" solve --format csv "$tmp/tunnel.yaml"
cp "$tmp/out" "$tmp/tunnel.csv"
expect_exit 0 "$bl" plot -f svg -o "$tmp/tunnel.svg" "$tmp/tunnel.yaml"
expect_svg "$tmp/tunnel.svg" "the three-point SVG"
read_frame "$tmp/tunnel.svg"
npts=0
while IFS=, read -r k pv pi _ _ _ _ _ stab; do
	[ "$k" = point ] && continue
	stab=$(printf '%s' "$stab" | tr -d '\r')
	npts=$((npts + 1))
	to_pixel "$pv" "$pi"
	# A stable point is a filled disc; an unstable one a square crossed
	# by an X, whose arms pass the diagonal pixels.
	if [ "$stab" = stable ]; then colour=009E73 form=+; else colour=CC79A7 form=x; fi
	expect_spot "$tmp/tunnel.svg.png" "$PX" "$PY" "$colour" 3 "$form" \
		"point $k ($stab, as solve says) drawn in its shape's colour"
done <"$tmp/tunnel.csv"
n=$((n + 1))
if [ "$npts" -eq 3 ]; then echo "ok $n - three points"; else
	echo "not ok $n - $npts points"; fails=$((fails + 1)); fi

# --- every sample, the path drawn, each view --------------------------
for f in "$samples"/*.yaml; do
	b=$(basename "$f" .yaml)
	if "$bl" plot -f svg -n 6 -o "$tmp/$b.svg" "$f" 2>"$tmp/err"; then
		expect_svg "$tmp/$b.svg" "$b: load line with six projections"
	else
		n=$((n + 1)); echo "not ok $n - $b: plot failed: $(cat "$tmp/err")"
		fails=$((fails + 1))
	fi
done
for b in indicator-led-24v tunnel-diode-negative-slope norton-loop-indicator; do
	expect_exit 0 "$bl" plot -f svg --view sweep -o "$tmp/$b-sweep.svg" "$samples/$b.yaml"
	expect_svg "$tmp/$b-sweep.svg" "$b: sweep view"
done
for b in status-led-design zener-shunt-5v1; do
	expect_exit 0 "$bl" plot -f svg --view histogram -o "$tmp/$b-hist.svg" "$samples/$b.yaml"
	expect_svg "$tmp/$b-hist.svg" "$b: histogram view"
done
# --- the thermal plane: the balance where solve puts it ----------------
t=$samples/led-warm-enclosure-self-heating.yaml
expect_exit 0 "$bl" solve "$t"
tj=$(sed -n 's/.*junction \([0-9.]*\) degC.*/\1/p' "$tmp/out" | head -n 1)
pw=$(awk '$1 == "1" && NF >= 10 { print $6 " " $7; exit }' "$tmp/out")
pw=$(echo "$pw" | awk '{ m = $2 == "mW" ? 1e-3 : $2 == "uW" ? 1e-6 : 1; print $1 * m }')
n=$((n + 1))
if [ -n "$tj" ] && [ -n "$pw" ]; then echo "ok $n - solve put the balance at $tj degC, $pw W"; else
	echo "not ok $n - no junction temperature or power in solve's output"; fails=$((fails + 1)); fi
expect_exit 0 "$bl" plot -f svg --view thermal -n 6 -o "$tmp/thermal.svg" "$t"
expect_svg "$tmp/thermal.svg" "the thermal plane"
read_frame "$tmp/thermal.svg"
to_pixel "$tj" "$pw"
expect_spot "$tmp/thermal.svg.png" "$PX" "$PY" 009E73 3 + \
	"the balance's disc at the pixel of ($tj degC, $pw W)"
to_pixel 45 0
expect_spot "$tmp/thermal.svg.png" "$PX" "$PY" 0072B2 2 + \
	"the heat-removed line starts at the ambient 45 degC, 0 W"
expect_exit 0 "$bl" plot -f svg --view thermal -o "$tmp/runaway.svg" "$samples/npn-fixed-base-runaway.yaml"
expect_svg "$tmp/runaway.svg" "the thermal plane of a runaway"
expect_text "$tmp/runaway.svg" "<title>$samples/npn-fixed-base-runaway.yaml</title>"
expect_exit 65 "$bl" plot --view thermal "$tmp/divider.yaml"
expect_text "$tmp/err" "does not heat itself"
# The histogram as text: the same description in the character grid.
expect_exit 0 "$bl" plot --view histogram -w 70 -H 18 "$samples/status-led-design.yaml"
expect_text "$tmp/out" "* trials per bin"
expect_text "$tmp/out" "device current over 10000 Monte Carlo trials"
# A session without tolerances has no histogram: a clear refusal.
expect_exit 65 "$bl" plot -f svg --view histogram "$tmp/divider.yaml"
expect_text "$tmp/err" "no tolerances"
expect_exit 64 "$bl" plot -f svg -w 10 "$tmp/divider.yaml"
expect_exit 64 "$bl" plot --format jpeg "$tmp/divider.yaml"
tap_finish
