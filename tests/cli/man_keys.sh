#!/bin/sh
# The man page lists the front end's keys exactly as the key table in
# src/tui/keys.c (which also generates the help screen): same keys, same
# words, same order.
# Usage: man_keys.sh KEYS.C PAGE
set -u
keys=$1
page=$2
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
tab=$(printf '\t')
sed -n "s/^	{ {.*}, \"\([^\"]*\)\", \"\([^\"]*\)\", .*/\1$tab\2/p" "$keys" >"$tmp/code"
awk '/^\.SS Keys/ { k = 1 } k && /^\.TS/ { t = 1; getline; next }
     t && /^\.TE/ { exit } t { print }' "$page" | sed 's/\\-/-/g; s/\\\\/\\/g' >"$tmp/man"
n=$(wc -l <"$tmp/code")
if [ "$n" -lt 10 ]; then
	echo "not ok 1 - found only $n keys in $keys"; exit 1
fi
if diff -u "$tmp/code" "$tmp/man"; then
	echo "ok 1 - the man page lists the same $n keys as the key table"
	echo "1..1"
else
	echo "not ok 1 - the man page's key list differs from src/tui/keys.c"
	echo "1..1"; exit 1
fi
