#!/bin/sh
# Every sample as a script sees it: 'biasline check' accepts it, 'biasline
# solve --format csv' gives the operating point its "# expect:" line states
# (to 4 significant digits; "# expect: runaway": none, a thermal runaway),
# and 'biasline tidy' is idempotent and keeps the top comment block.  Then check's and tidy's exit statuses and message
# format on bad input.  Prints TAP.
# Usage: samples_cli.sh BIASLINE SAMPLES_DIR
set -u
bl=$1
dir=$2
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
n=0
fails=0

# Record one result: ok when the status $1 is 0, with description $2.
report() {
	n=$((n + 1))
	if [ "$1" -eq 0 ]; then
		echo "ok $n - $2"
	else
		echo "not ok $n - $2"
		fails=$((fails + 1))
	fi
}

# Value of "V=1.234 mV" style text in SI units: prints the number.
si_value() {
	echo "$1" | awk '{
		s = $0; sub(/^[ \t]+/, "", s)
		num = s; sub(/[^0-9eE.+-].*$/, "", num)
		rest = substr(s, length(num) + 1); sub(/^[ \t]+/, "", rest)
		p = substr(rest, 1, 1); f = 1
		if (p == "p") f = 1e-12; else if (p == "n") f = 1e-9
		else if (p == "u") f = 1e-6; else if (p == "m") f = 1e-3
		else if (p == "k") f = 1e3; else if (p == "M") f = 1e6
		else if (p == "G") f = 1e9
		else if (substr(rest, 1, 2) == "\302\265") f = 1e-6
		printf "%.17g\n", num * f
	}'
}

# Succeeds when $1 equals $2 to 4 significant digits of $2 (half a unit
# in the 4th digit either way).
same4() {
	awk -v got="$1" -v want="$2" 'BEGIN {
		a = want < 0 ? -want : want
		if (a == 0) exit !(got == 0)
		e = int(log(a) / log(10)); if (10 ^ e > a) e--
		tol = 0.5 * 10 ^ (e - 3) * 1.000001
		d = got - want; if (d < 0) d = -d
		exit !(d <= tol)
	}'
}

count=0
full=0
for f in "$dir"/*.yaml; do
	name=$(basename "$f")
	count=$((count + 1))
	out=$("$bl" check "$f" 2>&1)
	[ "$out" = "$f: ok" ]
	report $? "check accepts $name"

	line=$(grep -m1 '^# expect:' "$f")
	[ -n "$line" ]
	report $? "$name states its expected point in a '# expect:' line"
	[ -n "$line" ] || continue
	# A sample that runs away thermally states it so: no point, exit 3.
	if [ "$line" = "# expect: runaway" ]; then
		"$bl" solve --format csv --method auto "$f" >"$tmp/csv" 2>"$tmp/err"
		[ $? -eq 3 ]
		report $? "solve finds no point for $name (exit 3)"
		grep -q 'thermal runaway' "$tmp/err"
		report $? "$name: the message says thermal runaway"
		[ "$(awk 'END { print NR }' "$tmp/csv")" -eq 1 ]
		report $? "$name: the CSV holds the header alone"
		"$bl" tidy "$f" >"$tmp/t1.yaml" && "$bl" tidy "$tmp/t1.yaml" >"$tmp/t2.yaml" &&
			cmp -s "$tmp/t1.yaml" "$tmp/t2.yaml"
		report $? "tidy of $name is idempotent"
		continue
	fi
	vtext=$(echo "$line" | sed -n 's/^# expect: *V=\([^,]*\),.*$/\1/p')
	itext=$(echo "$line" | sed -n 's/^# expect:.*I=\(.*\)$/\1/p')
	want_v=$(si_value "$vtext")
	want_i=$(si_value "$itext")

	"$bl" solve --format csv --method auto "$f" >"$tmp/csv" 2>"$tmp/err"
	report $? "solve --method auto finds a point for $name"
	got_v=$(awk -F, 'NR == 2 { print $2 }' "$tmp/csv")
	got_i=$(awk -F, 'NR == 2 { print $3 }' "$tmp/csv")
	points=$(awk 'END { print NR - 1 }' "$tmp/csv")
	[ "$points" -eq 1 ]
	report $? "$name has one operating point (found $points)"
	same4 "${got_v:-nan}" "$want_v"
	report $? "$name: V = $got_v V matches '$vtext' to 4 digits"
	same4 "${got_i:-nan}" "$want_i"
	report $? "$name: I = $got_i A matches '$itext' to 4 digits"

	"$bl" tidy "$f" >"$tmp/t1.yaml" && "$bl" tidy "$tmp/t1.yaml" >"$tmp/t2.yaml" &&
		cmp -s "$tmp/t1.yaml" "$tmp/t2.yaml"
	report $? "tidy of $name is idempotent"
	grep -q -F -- "$line" "$tmp/t1.yaml"
	report $? "tidy of $name keeps the top comment block"

	# A sample with tolerances runs the worst case; with a target too, the
	# design's worst case names a verdict for each standard value.
	grep -q '^tolerances:' "$f" || continue
	"$bl" tolerance --trials 200 "$f" >"$tmp/out" 2>"$tmp/err"
	report $? "tolerance runs on $name"
	grep -q 'ratings at worst' "$tmp/out"
	report $? "tolerance of $name checks the ratings at worst"
	grep -q '^target:' "$f" && grep -q '^ratings:' "$f" || continue
	full=$((full + 1))
	"$bl" design --worst-case "$f" >"$tmp/out" 2>"$tmp/err"
	report $? "design --worst-case runs on $name"
	grep -q '(nearest)' "$tmp/out" && grep -q 'at worst' "$tmp/out"
	report $? "design --worst-case of $name marks the nearest and its worst case"
done
[ "$count" -ge 6 ]
report $? "at least six samples ($count)"
[ "$full" -ge 2 ]
report $? "at least two samples carry tolerances, ratings and a target ($full)"

# The order sample: the session's own order diverges, the other converges.
f="$dir/projection-order-matters.yaml"
"$bl" solve --format csv "$f" >/dev/null 2>"$tmp/err"
[ $? -eq 4 ]
report $? "projection-order-matters: the stated order reaches no point, though one exists (exit 4)"
grep -q 'voltage-from-device' "$tmp/err"
report $? "projection-order-matters: the message names the other order"
"$bl" solve --format csv --order voltage-from-device "$f" >"$tmp/csv" 2>/dev/null
[ $? -eq 0 ]
report $? "projection-order-matters: voltage-from-device converges"
got_v=$(awk -F, 'NR == 2 { print $2 }' "$tmp/csv")
want_v=$(si_value "$(sed -n 's/^# expect: *V=\([^,]*\),.*$/\1/p' "$f")")
same4 "${got_v:-nan}" "$want_v"
report $? "projection-order-matters: the other order reaches the stated point"

# check: the first bad file stops the run with FILE:LINE:COL: KEY: MESSAGE.
printf 'source:\n  vs: 12\n  rss: 1k\n' >"$tmp/bad.yaml"
"$bl" check "$dir/lamp-12v-battery.yaml" "$tmp/bad.yaml" "$dir/lamp-12v-battery.yaml" \
	>"$tmp/out" 2>"$tmp/err"
[ $? -eq 65 ]
report $? "check exits 65 on a bad file"
grep -q -F "$tmp/bad.yaml:3:3: source.rss: unknown key" "$tmp/err"
report $? "check names FILE:LINE:COL and the key"
[ "$(wc -l <"$tmp/out")" -eq 2 ]
report $? "check goes on past a bad file and reports the good ones"
"$bl" check "$tmp/missing.yaml" >/dev/null 2>&1
[ $? -eq 66 ]
report $? "check exits 66 on a missing file"
"$bl" check >/dev/null 2>&1
[ $? -eq 64 ]
report $? "check exits 64 without a file"
"$bl" check --help | grep -q 'Usage: biasline check'
report $? "check --help"
"$bl" tidy --version | grep -q '^biasline '
report $? "tidy --version"

# tidy --in-place rewrites atomically, leaves no temporary file, and a bad
# file is left alone.
cp "$dir/varistor-surge-clamp.yaml" "$tmp/v.yaml"
"$bl" tidy --in-place "$tmp/v.yaml"
[ $? -eq 0 ]
report $? "tidy --in-place exits 0"
"$bl" tidy "$dir/varistor-surge-clamp.yaml" | cmp -s - "$tmp/v.yaml"
report $? "tidy --in-place writes what tidy prints"
grep -q '^# SAFETY' "$tmp/v.yaml"
report $? "tidy --in-place keeps the safety caution"
[ "$(ls -A "$tmp" | grep -c '^\.')" -eq 0 ]
report $? "tidy --in-place leaves no temporary file"
cp "$tmp/bad.yaml" "$tmp/bad2.yaml"
"$bl" tidy --in-place "$tmp/bad2.yaml" 2>/dev/null
[ $? -eq 65 ] && cmp -s "$tmp/bad.yaml" "$tmp/bad2.yaml"
report $? "tidy --in-place on a bad file exits 65 and leaves it unchanged"

echo "1..$n"
[ "$fails" -eq 0 ]
