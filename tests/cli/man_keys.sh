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
status=0
if diff -u "$tmp/code" "$tmp/man"; then
	echo "ok 1 - the man page lists the same $n keys as the key table"
else
	echo "not ok 1 - the man page's key list differs from src/tui/keys.c"
	status=1
fi
# The help overlay at 80 columns has two columns of 38 cells: the keys in
# 11 and a blank, so a help text longer than 25 cells would be cut.
long=$(awk -F "$tab" 'length($2) > 25 { print "  " $1 ": " $2 }' "$tmp/code")
if [ -z "$long" ]; then
	echo "ok 2 - every help line fits the help overlay at 80 columns"
else
	echo "not ok 2 - help lines longer than 25 cells (cut at 80 columns):"
	echo "$long"
	status=1
fi
echo "1..2"
exit $status
