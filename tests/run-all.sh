#!/bin/sh
# Run the whole biasline test suite: install what the build and the tests
# need (Debian 12, when run as root), configure, build, run every test, and
# end with one line "N passed, N failed".
#
#   sh tests/run-all.sh                 # build dir "build"
#   BUILDDIR=build-asan MESON_ARGS="-Db_sanitize=address,undefined" \
#       sh tests/run-all.sh
set -eu

cd "$(dirname "$0")/.."
builddir=${BUILDDIR:-build}

if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1 &&
   [ -z "${BIASLINE_NO_INSTALL:-}" ]; then
	# What the program needs to build, and what the tests add.
	pkgs=$(cat .ci/packages-build .ci/packages-test)
	# shellcheck disable=SC2086
	DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $pkgs \
		>/dev/null 2>&1 || {
		DEBIAN_FRONTEND=noninteractive apt-get update -qq >/dev/null
		DEBIAN_FRONTEND=noninteractive apt-get install -y -qq $pkgs >/dev/null
	}
fi

# shellcheck disable=SC2086
if [ -d "$builddir/meson-private" ]; then
	meson setup --reconfigure "$builddir" -Dtests=enabled ${MESON_ARGS:-} >/dev/null
else
	meson setup "$builddir" -Dtests=enabled ${MESON_ARGS:-} >/dev/null
fi
ninja -C "$builddir"

status=0
meson test -C "$builddir" --print-errorlogs --num-processes 2 || status=$?

log="$builddir/meson-logs/testlog.json"
passed=0
failed=0
skipped=0
if [ -f "$log" ]; then
	passed=$(grep -c '"result": "OK"' "$log" || true)
	skipped=$(grep -c '"result": "SKIP"' "$log" || true)
	failed=$(grep -c -E '"result": "(FAIL|TIMEOUT|ERROR|UNEXPECTEDPASS)"' "$log" || true)
fi
if [ "$status" -ne 0 ] && [ "$failed" -eq 0 ]; then
	failed=1
fi
echo "$passed passed, $failed failed, $skipped skipped"
[ "$failed" -eq 0 ]
