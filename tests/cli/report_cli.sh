#!/bin/sh
# biasline report without a browser: the HTML is one self-contained file
# (nothing fetched, no script), holds every operating point as 'solve'
# prints it, the safety caution 'solve' prints, the session text escaped
# and the version; markdown writes its figures beside it, and every SVG
# parses (xmllint) and renders (rsvg-convert).  Skips (77) without
# xmllint or rsvg-convert.
# Usage: report_cli.sh BIASLINE SAMPLES
set -u
bl=$1
samples=$2
for tool in xmllint rsvg-convert; do
	if ! command -v "$tool" >/dev/null 2>&1; then
		echo "1..0 # SKIP $tool is not installed"
		exit 77
	fi
done
. "$(dirname "$0")/tap.sh"
check() {
	n=$((n + 1))
	if eval "$2"; then echo "ok $n - $1"; else
		echo "not ok $n - $1"; fails=$((fails + 1)); fi
}

# A 150 V supply: the high-voltage caution must reach the report.  The
# comment carries characters HTML must escape.
cat >"$tmp/hv.yaml" <<'YAML'
# bench check <b>&amp; "quotes"</b>
source:
  vs: 150
  rs: 27k
device:
  model: diode
  saturation_current: 3.1e-12
  ideality: 1.7
YAML
expect_exit 0 "$bl" solve "$tmp/hv.yaml"
cp "$tmp/out" "$tmp/hv.solve"
expect_exit 0 "$bl" report --output "$tmp/hv.html" "$tmp/hv.yaml"
html=$tmp/hv.html
# The values of the point as solve's table prints them.
row=$(awk '$1 == "1" && NF >= 10 { print $2 " " $3 "|" $4 " " $5; exit }' "$tmp/hv.solve")
v=${row%%|*}
i=${row#*|}
check "solve printed a point ($v, $i)" '[ -n "$v" ] && [ -n "$i" ]'
expect_text "$html" ">$v<"
expect_text "$html" ">$i<"
caution=$(grep -i 'caution' "$tmp/hv.solve" | head -n 1 | sed 's/^ *//')
check "solve printed a caution" '[ -n "$caution" ]'
expect_text "$html" "class=\"caution\">$caution"
expect_text "$html" "&lt;b&gt;&amp;amp; &quot;quotes&quot;&lt;/b&gt;"
check "the raw comment is not in the page as markup" '! grep -q "<b>&amp;" "$html"'
expect_text "$html" "biasline $("$bl" --version | sed 's/^biasline //')"
check "nothing fetched: no script, link, iframe or src" \
	'! grep -q -i -E "<script|<link|<iframe|<img|src=|@import|url\(http" "$html"'
check "every http in the page is an SVG namespace" \
	'[ -z "$(grep -o -E "https?://[^\" ]*" "$html" | sort -u | grep -v -x -E "http://www.w3.org/(2000/svg|1999/xlink)")" ]'
check "one inline SVG (no tolerances: no histogram)" \
	'[ "$(grep -c "<svg" "$html")" -eq 1 ]'

# A sample with a target and tolerances: design, tolerance, histogram.
s=$samples/status-led-design.yaml
expect_exit 0 "$bl" report "$s"
cp "$tmp/out" "$tmp/led.html"
check "two inline SVGs with their own ids" \
	'[ "$(grep -c "<svg" "$tmp/led.html")" -eq 2 ] &&
	 grep -q "id=\"plot-glyph" "$tmp/led.html" && grep -q "id=\"hist-glyph" "$tmp/led.html" &&
	 ! grep -q "href=\"#glyph" "$tmp/led.html"'
# Each inline SVG is well-formed XML on its own and renders.
awk -v d="$tmp/inline" '/<svg/ { k++; f = d k ".svg" } f { print > f } /<\/svg>/ { f = "" }' \
	"$tmp/led.html"
for k in 1 2; do
	check "inline SVG $k parses (xmllint) and renders (rsvg-convert)" \
		'xmllint --noout "$tmp/inline$k.svg" && rsvg-convert -o "$tmp/inline$k.png" "$tmp/inline$k.svg"'
done
expect_exit 0 "$bl" tolerance "$s"
yield=$(grep -o 'yield [0-9.]* %' "$tmp/out")
check "tolerance printed a yield" '[ -n "$yield" ]'
expect_text "$tmp/led.html" "$yield"
expect_exit 0 "$bl" design --worst-case "$s"
nearest=$(grep '(nearest)' "$tmp/out" | head -n 1 | sed 's/  */ /g; s/^ //')
expect_exit 0 "$bl" report "$s"
check "the design's nearest row as design prints it" \
	'sed "s/  */ /g; s/^ //" "$tmp/out" | grep -q -F -- "$nearest"'

# A part that heats itself gets its thermal plane too.
expect_exit 0 "$bl" report "$samples/led-warm-enclosure-self-heating.yaml"
check "the self-heated LED's report has the plot and the thermal plane" \
	'[ "$(grep -c "<svg" "$tmp/out")" -eq 2 ] && grep -q "id=\"thermal-glyph" "$tmp/out"'
expect_text "$tmp/out" "<h2>Self-heating</h2>"

# Markdown: the figures beside it, linked by name.
mkdir "$tmp/md"
expect_exit 0 "$bl" report --format markdown --output "$tmp/md/led.md" "$s"
expect_text "$tmp/md/led.md" "](led-plot.svg)"
expect_text "$tmp/md/led.md" "](led-histogram.svg)"
for f in led-plot led-histogram; do
	check "$f.svg parses (xmllint) and renders (rsvg-convert)" \
		'xmllint --noout "$tmp/md/$f.svg" && rsvg-convert -o "$tmp/md/$f.png" "$tmp/md/$f.svg"'
done
expect_text "$tmp/md/led.md" "## Session file"
expect_exit 64 "$bl" report --format markdown "$s"
expect_exit 64 "$bl" report --format pdf "$s"
expect_exit 66 "$bl" report "$tmp/missing.yaml"
tap_finish
