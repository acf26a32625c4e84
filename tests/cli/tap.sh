# tap.sh - shared helpers of the CLI test scripts, which speak TAP.
# Source it after setting bl (the program); it makes $tmp (removed on
# exit) and counts checks in n and failures in fails.
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
fails=0
n=0

# Check that COMMAND exits with WANT; its output goes to $tmp/out, $tmp/err.
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

# Check that the awk program PROG exits 0 on the CSV FILE; WHAT names it.
expect_awk() {
	n=$((n + 1))
	if awk -F, "$2" "$1"; then
		echo "ok $n - $3"
	else
		echo "not ok $n - $3"; cat "$1"
		fails=$((fails + 1))
	fi
}

# Print the plan and exit 0 when every check passed.
tap_finish() {
	echo "1..$n"
	[ "$fails" -eq 0 ]
}

# Check that FILE is empty; WHAT names it.
expect_empty() {
	n=$((n + 1))
	if [ ! -s "$1" ]; then
		echo "ok $n - $2"
	else
		echo "not ok $n - $2"; cat "$1"
		fails=$((fails + 1))
	fi
}

# Check that FILE is strict RFC 4180 CSV with unique header names
# (CSV_STRICT names tests/cli/csv_strict); WHAT names the output.
expect_strict_csv() {
	n=$((n + 1))
	if "$CSV_STRICT" "$1" >"$tmp/strict" 2>&1; then
		echo "ok $n - $2 is strict RFC 4180 ($(cat "$tmp/strict"))"
	else
		echo "not ok $n - $2 is not strict RFC 4180: $(cat "$tmp/strict")"
		fails=$((fails + 1))
	fi
}
