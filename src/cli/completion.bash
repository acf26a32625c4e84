# bash completion for biasline.                         -*- shell-script -*-
#
# Installed as .../bash-completion/completions/biasline.  The subcommands
# and their options are read from the program's own --help output, so the
# completion follows the program without a second list to keep in step;
# only the choices of a few options are listed here (tests/cli checks that
# the program accepts each of them).

# The subcommands: the lines under "Commands:" in 'biasline --help'.
_biasline_commands()
{
	"$1" --help 2>/dev/null |
		sed -n '/^Commands:/,/^$/{s/^  \([a-z][a-z-]*\) .*/\1/p}'
}

# The long options of a subcommand (or of the front end without one).
_biasline_options()
{
	local prog=$1 cmd=$2
	{
		if [ -n "$cmd" ]; then "$prog" "$cmd" --help; else "$prog" --help; fi
	} 2>/dev/null | grep -o -E '(^|[ ,])--[a-z][a-z-]*' | sed 's/^[ ,]*//' |
		sort -u
}

# The choices of an option ($1) that takes one word from a fixed set, in
# subcommand $2.
_biasline_choices()
{
	case $1 in
	--format)
		case $2 in
		fit) echo "text csv yaml" ;;
		plot) echo "text svg png" ;;
		report) echo "html markdown" ;;
		*) echo "text csv" ;;
		esac
		;;
	--view) echo "load-line sweep histogram thermal" ;;
	--weight) echo "relative absolute" ;;
	--method) echo "auto projection relaxed newton brent" ;;
	--order) echo "voltage-from-line voltage-from-device" ;;
	--series) echo "E6 E12 E24 E48 E96 E192" ;;
	esac
}

_biasline()
{
	local cur prev prog cmd k
	cur=${COMP_WORDS[COMP_CWORD]}
	prev=${COMP_WORDS[COMP_CWORD - 1]}
	prog=${COMP_WORDS[0]}
	cmd=
	for ((k = 1; k < COMP_CWORD; k++)); do
		case ${COMP_WORDS[k]} in
		-*) ;;
		*)
			if _biasline_commands "$prog" | grep -qx -- "${COMP_WORDS[k]}"; then
				cmd=${COMP_WORDS[k]}
			fi
			break
			;;
		esac
	done

	local choices
	choices=$(_biasline_choices "$prev" "$cmd")
	if [ -n "$choices" ]; then
		mapfile -t COMPREPLY < <(compgen -W "$choices" -- "$cur")
		return
	fi
	case $cur in
	-*)
		mapfile -t COMPREPLY < <(compgen -W "$(_biasline_options "$prog" "$cmd")" -- "$cur")
		return
		;;
	esac
	if [ -z "$cmd" ] && [ "$COMP_CWORD" -eq 1 ]; then
		mapfile -t COMPREPLY < <(compgen -W "$(_biasline_commands "$prog")" -- "$cur")
	fi
	# Session files and points files.
	local files
	mapfile -t files < <(compgen -f -- "$cur" | grep -E '\.(yaml|yml|csv|tsv|txt)$'
		compgen -d -- "$cur")
	COMPREPLY+=("${files[@]}")
}
complete -o filenames -F _biasline biasline
