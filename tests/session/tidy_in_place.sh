#!/bin/sh
# 'biasline tidy --in-place' replaces a session file the way a careful tool
# does: the owner, group and mode stay (as root, on a file that belongs to
# another user), a read-only file is refused with status 73 and left as it
# was, and no temporary file is left beside it.  Then the points_file of a
# measured device that cannot be read gives 66, like any unreadable file.
# Prints TAP.  Usage: tidy_in_place.sh BIASLINE SAMPLES_DIR
set -u
bl=$1
samples=$2
. "$(dirname "$0")/../cli/tap.sh"

# Check that the string GOT equals WANT; WHAT names the check.
expect_same() {
	n=$((n + 1))
	if [ "$1" = "$2" ]; then
		echo "ok $n - $3"
	else
		echo "not ok $n - $3: got '$1', expected '$2'"
		fails=$((fails + 1))
	fi
}

mkdir "$tmp/d"
f=$tmp/d/led.yaml
cp "$samples/indicator-led-24v.yaml" "$f"
chmod 640 "$f"
if [ "$(id -u)" = 0 ]; then
	# a colleague's file: uid and gid no account here has
	chown 4321:8765 "$f"
	keep="4321:8765 640"
else
	keep="$(id -u):$(stat -c %g "$f") 640"
fi
expect_exit 0 "$bl" tidy --in-place "$f"
expect_same "$(stat -c '%u:%g %a' "$f")" "$keep" "owner, group and mode kept ($keep)"
expect_text "$f" "reference_temperature:"
expect_same "$(ls -A "$tmp/d" | wc -l)" 1 "no temporary file left"

# A read-only file: refused (73) and unchanged, even for root.
chmod 444 "$f"
before=$(cksum <"$f")
expect_exit 73 "$bl" tidy --in-place "$f"
expect_text "$tmp/err" "read-only"
expect_same "$(cksum <"$f")" "$before" "the read-only file is unchanged"
expect_same "$(ls -A "$tmp/d" | wc -l)" 1 "no temporary file left after the refusal"

# A points_file that cannot be read: 66, as for the session file itself.
printf 'source:\n  vs: 4.87\n  rs: 1.33k\ndevice:\n  model: measured\n  points_file: absent.csv\n' >"$tmp/d/m.yaml"
expect_exit 66 "$bl" check "$tmp/d/m.yaml"
expect_exit 66 "$bl" tidy "$tmp/d/m.yaml"
expect_text "$tmp/err" "absent.csv: cannot open the file"
tap_finish
