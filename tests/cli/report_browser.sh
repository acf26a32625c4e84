#!/bin/sh
# The report in a real browser: headless Chromium takes a screenshot (not
# blank) and dumps the page's DOM, whose text must hold the operating
# point's values as 'solve' prints them and the stability verdict.
# Skips (77) without chromium.
# Usage: report_browser.sh BIASLINE PNG_PROBE SAMPLES
set -u
bl=$1
probe=$2
samples=$3
if ! command -v chromium >/dev/null 2>&1; then
	echo "1..0 # SKIP chromium is not installed"
	exit 77
fi
. "$(dirname "$0")/tap.sh"
check() {
	n=$((n + 1))
	if eval "$2"; then echo "ok $n - $1"; else
		echo "not ok $n - $1"; fails=$((fails + 1)); fi
}
# Chromium with nothing but the page: no network, no profile kept.
browse() {
	profile=$(mktemp -d)
	timeout 60 chromium --headless --no-sandbox --disable-gpu --disable-quic \
		--no-first-run --disable-background-networking \
		--disable-component-update --disable-sync \
		--user-data-dir="$profile" "$@" 2>"$tmp/chromium.err"
	rc=$?
	rm -rf "$profile"
	return $rc
}

s=$samples/status-led-design.yaml
expect_exit 0 "$bl" solve "$s"
row=$(awk '$1 == "1" && NF >= 10 { print $2 " " $3 "|" $4 " " $5 "|" $10; exit }' "$tmp/out")
v=${row%%|*}
rest=${row#*|}
i=${rest%%|*}
stab=${rest#*|}
check "solve printed the point ($v, $i, $stab)" '[ -n "$v" ] && [ -n "$i" ] && [ -n "$stab" ]'
expect_exit 0 "$bl" report --output "$tmp/report.html" "$s"
check "Chromium takes a screenshot" \
	'browse --window-size=1000,1400 --screenshot="$tmp/shot.png" "file://$tmp/report.html" && [ -s "$tmp/shot.png" ]'
check "the screenshot is not blank ($("$probe" blank "$tmp/shot.png" 2>&1))" \
	'"$probe" blank "$tmp/shot.png" >/dev/null'
check "Chromium dumps the DOM" \
	'browse --dump-dom "file://$tmp/report.html" >"$tmp/dom.html" && [ -s "$tmp/dom.html" ]'
# The points table's row, as the browser holds it.
check "the DOM's points table holds $v, $i and $stab" \
	'tr -d "\n" <"$tmp/dom.html" | grep -q -F "<td class=\"num\">$v</td><td class=\"num\">$i</td>" &&
	 tr -d "\n" <"$tmp/dom.html" | grep -q -F "<td>$stab</td>"'
check "the DOM holds two SVG figures" '[ "$(grep -o "<svg" "$tmp/dom.html" | wc -l)" -eq 2 ]'
tap_finish
