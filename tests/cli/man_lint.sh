#!/bin/sh
# The man page renders without a single warning from groff (-ww) and,
# when installed, mandoc's linter.  Exit 77 (skip) when groff is missing.
set -u
page=$1
command -v groff >/dev/null 2>&1 || { echo "groff not installed"; exit 77; }
out=$(groff -man -ww -z "$page" 2>&1)
if [ -n "$out" ]; then
	echo "groff warnings:"; echo "$out"; exit 1
fi
if command -v mandoc >/dev/null 2>&1; then
	# STYLE-level notes are advice; warnings and errors fail.
	out=$(mandoc -T lint -W warning "$page" 2>&1)
	if [ -n "$out" ]; then
		echo "mandoc lint:"; echo "$out"; exit 1
	fi
fi
echo "man page clean"
