#!/bin/bash
# What a new user meets first: the README's quick start names exactly the
# build packages CI installs, every command answers --version, 'check'
# reports every file, the shell completion offers the program's own
# commands and options, and 'meson install' puts the program, the man
# page, the samples and the completion where a Debian user looks.
# Usage: firstrun_cli.sh BIASLINE SOURCE_ROOT BUILD_ROOT
set -u
bl=$1
root=$2
build=$3
. "$(dirname "$0")/tap.sh"

ok() { n=$((n + 1)); echo "ok $n - $1"; }
notok() { n=$((n + 1)); echo "not ok $n - $1"; fails=$((fails + 1)); }
check() { if eval "$2"; then ok "$1"; else notok "$1"; fi; }

# --- the README's first command installs exactly .ci/packages-build ------
readme_pkgs=$(awk '/^#+ .*[Qq]uick start/{q=1} q&&/^```/{if(inb){exit} inb=1; next} q&&inb{print}' \
	"$root/README.md" | sed -n 's/.*apt-get install -y \([^&]*\)&&.*/\1/p' |
	tr ' ' '\n' | sed '/^$/d' | sort)
ci_pkgs=$(sed '/^$/d' "$root/.ci/packages-build" | sort)
check "README command 1 installs exactly .ci/packages-build" \
	'[ -n "$readme_pkgs" ] && [ "$readme_pkgs" = "$ci_pkgs" ]'
check "no package is both a build and a test package" \
	'[ -z "$(sort "$root/.ci/packages-build" "$root/.ci/packages-test" | uniq -d)" ]'

# --- --version on every command, and after a global option --------------
cmds=$("$bl" --help | sed -n '/^Commands:/,/^$/{s/^  \([a-z][a-z-]*\) .*/\1/p}')
check "biasline --help lists commands" '[ -n "$cmds" ]'
version=$("$bl" --version)
check "biasline --version names the program" 'case $version in "biasline "[0-9]*) true;; *) false;; esac'
for c in $cmds; do
	expect_exit 0 "$bl" "$c" --version
	check "$c --version prints the same line" '[ "$(cat "$tmp/out")" = "$version" ]'
done
for g in --no-color --unicode -C -u; do
	expect_exit 0 "$bl" "$g" --version
	check "$g --version prints the version" '[ "$(cat "$tmp/out")" = "$version" ]'
done

# --- a bad option gets one wording from every command, exit 64 ------------
# (the status is sysexits.h's EX_USAGE: common practice on Unix)
for c in $cmds; do
	expect_exit 64 "$bl" "$c" --no-such-option
	check "$c names an unknown option in one wording" \
		'grep -qxF "biasline $c: unknown option '"'"'--no-such-option'"'"' (try '"'"'biasline $c --help'"'"')" "$tmp/err"'
	check "$c prints nothing on stdout for a bad option" '[ ! -s "$tmp/out" ]'
done
expect_exit 64 "$bl" --no-such-option
check "the front end names an unknown option" \
	'grep -qxF "biasline: unknown option '"'"'--no-such-option'"'"' (try '"'"'biasline --help'"'"')" "$tmp/err"'
for c in solve plot reduce tolerance sweep design fit report; do
	opt=--format
	expect_exit 64 "$bl" "$c" "$opt"
	check "$c says $opt needs a value" \
		'grep -qxF "biasline $c: option '"'"'$opt'"'"' needs a value (try '"'"'biasline $c --help'"'"')" "$tmp/err"'
done

# --- check FILE... reports every file; the exit status is the worst -----
cat >"$tmp/good.yaml" <<'YAML'
source:
  vs: 9 V
  rs: 680
device:
  model: diode
  saturation_current: 3.1e-12
  ideality: 1.73
YAML
cat >"$tmp/bad.yaml" <<'YAML'
source:
  vs: 9 V
  rs: -680
device:
  model: diode
  saturation_current: 3.1e-12
  ideality: 1.73
YAML
expect_exit 65 "$bl" check "$tmp/bad.yaml" "$tmp/good.yaml"
expect_text "$tmp/out" "good.yaml: ok"
expect_text "$tmp/err" "bad.yaml:3:"
expect_exit 66 "$bl" check "$tmp/missing.yaml" "$tmp/bad.yaml" "$tmp/good.yaml"
expect_text "$tmp/err" "missing.yaml"
expect_text "$tmp/err" "bad.yaml:3:"
expect_text "$tmp/out" "good.yaml: ok"
expect_exit 0 "$bl" check "$tmp/good.yaml" "$root"/samples/*.yaml

# --- the bash completion reads the program's own help --------------------
# complete WORDS...: the completions bash offers for the last word.
complete_words() {
	bash -c '
		. "$1"; shift
		COMP_WORDS=("$@"); COMP_CWORD=$(($# - 1))
		_biasline
		printf "%s\n" "${COMPREPLY[@]}"' _ "$root/src/cli/completion.bash" "$@"
}
out=$(PATH="$(dirname "$bl"):$PATH" complete_words biasline so)
check "completion: 'so' gives solve" '[ "$out" = solve ]'
out=$(PATH="$(dirname "$bl"):$PATH" complete_words biasline "")
for c in $cmds; do
	check "completion offers the command $c" 'printf "%s\n" "$out" | grep -qx "$c"'
done
for c in $cmds; do
	opts=$("$bl" "$c" --help | grep -o -E '(^|[ ,])--[a-z][a-z-]*' | sed 's/^[ ,]*//' | sort -u)
	got=$(PATH="$(dirname "$bl"):$PATH" complete_words biasline "$c" -- | sort -u)
	check "completion offers every long option of $c" '[ -n "$opts" ] && [ "$opts" = "$got" ]'
done
out=$(PATH="$(dirname "$bl"):$PATH" complete_words biasline solve --order voltage-from-d)
check "completion: --order choices" '[ "$out" = voltage-from-device ]'
# Every choice the completion offers is one the program accepts.
sample=$root/samples/indicator-led-24v.yaml
for m in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline solve --method ""); do
	expect_exit 0 "$bl" solve --method "$m" --order voltage-from-device "$sample"
done
for o in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline solve --order ""); do
	expect_exit 0 "$bl" solve --method auto --order "$o" "$sample"
done
for s in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline design --series ""); do
	expect_exit 0 "$bl" design --current 10m --series "$s" "$sample"
done
for f in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline solve --format ""); do
	acc=0
	for c in $cmds; do
		"$bl" "$c" --format "$f" "$sample" >/dev/null 2>&1
		[ $? -ne 64 ] && [ "$c" != check ] && [ "$c" != tidy ] && acc=1
	done
	check "some command accepts --format $f" '[ $acc = 1 ]'
done
for f in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline plot --format ""); do
	expect_exit 0 "$bl" plot --format "$f" --output "$tmp/plot.$f" "$sample"
done
for f in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline report --format ""); do
	expect_exit 0 "$bl" report --format "$f" --output "$tmp/report.$f" "$sample"
done
for v in $(PATH="$(dirname "$bl"):$PATH" complete_words biasline plot --view ""); do
	# histogram needs tolerances, thermal a part that heats itself:
	# tests/render/pictures.sh draws both.
	[ "$v" = histogram ] || [ "$v" = thermal ] && continue
	expect_exit 0 "$bl" plot --view "$v" "$sample"
done

# --- meson install puts everything in its place --------------------------
if command -v meson >/dev/null 2>&1 && [ -d "$build/meson-private" ]; then
	dest=$tmp/dest
	if meson install -C "$build" --destdir "$dest" --no-rebuild >"$tmp/inst.log" 2>&1; then
		ok "meson install runs"
		prefix=$(meson introspect "$build" --buildoptions 2>/dev/null |
			grep -o '"name": "prefix", "value": "[^"]*"' | sed 's/.*"value": "\(.*\)"/\1/')
		[ -n "$prefix" ] || prefix=/usr/local
		check "installs the program" '[ -x "$dest$prefix/bin/biasline" ]'
		check "installs the man page" '[ -f "$dest$prefix/share/man/man1/biasline.1" ]'
		check "installs the samples with the documentation" \
			'[ -f "$dest$prefix/share/doc/biasline/samples/indicator-led-24v.yaml" ]'
		check "installs the licence" '[ -f "$dest$prefix/share/doc/biasline/LICENSE" ]'
		check "installs the bash completion" \
			'[ -f "$dest$prefix/share/bash-completion/completions/biasline" ]'
		nsamples=$(find "$root/samples" -type f | wc -l)
		ninst=$(find "$dest$prefix/share/doc/biasline/samples" -type f | wc -l)
		check "every sample file is installed ($nsamples)" '[ "$nsamples" = "$ninst" ]'
	else
		notok "meson install runs"; cat "$tmp/inst.log"
	fi
fi

tap_finish
