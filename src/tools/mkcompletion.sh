#!/bin/sh
# mkcompletion.sh ARRANK - write a bash completion script for arrank on
# standard output, from the program's own --help texts (commands, and each
# command's options with the words an option takes, such as --by rate|ea).
set -eu
A=$1
commands=$("$A" --help | sed -n '/^commands:/,/^$/p' | awk 'NR > 1 && NF { print $1 }')
echo '# bash completion for arrank (made by src/tools/mkcompletion.sh from --help)'
echo '_arrank() {'
echo '    local cur prev cmd'
echo '    cur=${COMP_WORDS[COMP_CWORD]}'
echo '    prev=${COMP_WORDS[COMP_CWORD-1]}'
echo '    cmd=${COMP_WORDS[1]}'
echo '    if [ "$COMP_CWORD" -eq 1 ]; then'
echo "        COMPREPLY=(\$(compgen -W \"$(echo $commands) --help --version\" -- \"\$cur\"))"
echo '        return'
echo '    fi'
echo '    case "$cmd" in'
for c in $commands; do
    help=$("$A" "$c" --help)
    opts=$(echo "$help" | grep -oE '^  --[a-z-]+' | sed 's/^ *//' | sort -u | tr '\n' ' ')
    echo "    $c)"
    echo '        case "$prev" in'
    # options whose argument is a choice of words: "--by KEY  rate (default), ea or prefactor"
    # or "--errors relative|absolute"
    echo "$help" | grep -E '^  --[a-z-]+ [a-z]+(\|[a-z]+)+' | while read -r opt words _; do
        echo "        $opt) COMPREPLY=(\$(compgen -W \"$(echo "$words" | tr '|' ' ')\" -- \"\$cur\")); return ;;"
    done
    if echo "$help" | grep -qE '^  --by '; then
        echo '        --by) COMPREPLY=($(compgen -W "rate ea prefactor" -- "$cur")); return ;;'
    fi
    if echo "$help" | grep -qE '^  --format '; then
        echo '        --format) COMPREPLY=($(compgen -W "svg png pdf" -- "$cur")); return ;;'
    fi
    echo '        --json|--csv|--points|--run-sheet) COMPREPLY=($(compgen -f -- "$cur")); return ;;'
    echo '        --out) COMPREPLY=($(compgen -d -- "$cur")); return ;;'
    echo '        esac'
    echo "        if [[ \"\$cur\" == -* ]]; then COMPREPLY=(\$(compgen -W \"$opts--help\" -- \"\$cur\"));"
    echo '        else COMPREPLY=($(compgen -d -- "$cur")); fi'
    echo '        ;;'
done
echo '    esac'
echo '}'
echo 'complete -F _arrank arrank'
