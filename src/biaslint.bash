# bash completion for biaslint; `make install` puts it in share/bash-completion/completions/.
_biaslint()
{
    local cur prev cmd
    cur=${COMP_WORDS[COMP_CWORD]}
    prev=${COMP_WORDS[COMP_CWORD-1]}
    cmd=${COMP_WORDS[1]}
    if [ "$COMP_CWORD" -eq 1 ]; then
        COMPREPLY=($(compgen -W "check explain strip merge characterize size --help --version" -- "$cur"))
        return
    fi
    case $prev in
        --format) COMPREPLY=($(compgen -W "text json csv junit sarif html" -- "$cur")); return ;;
        --op-format) COMPREPLY=($(compgen -W "show raw csv" -- "$cur")); return ;;
        --fail-on) COMPREPLY=($(compgen -W "error warning info new" -- "$cur")); return ;;
        --color) COMPREPLY=($(compgen -W "auto always never" -- "$cur")); return ;;
        --report) COMPREPLY=($(compgen -W "text= json= csv= junit= sarif= html=" -- "$cur")); compopt -o nospace; return ;;
        --min-margin|--min-gain|--max-devices|-j|--top|--prefix|--primitive|--not-primitive|--model|--section|--l|--vgs|--vds|--vsb|--temp|--wref|--gm-id|--id|--gm)
            return ;;
    esac
    if [[ $cur == -* ]]; then
        local opts
        case $cmd in
            check) opts="--op -j --op-format --annotate --format -o --output --report --baseline --rules
                   --no-local-rules --table --min-margin --min-gain --fail-on --add-overlap --max-devices
                   --top --prefix --primitive --not-primitive --allow-missing-lib --color -q --quiet --help" ;;
            explain) opts="--op --op-format --rules --no-local-rules --min-margin --min-gain --add-overlap --top --prefix --help" ;;
            strip) opts="-o --output --help" ;;
            merge) opts="-o --output --format --report --color -q --quiet --help" ;;
            characterize) opts="--models --section --model --l --vgs --vds --vsb --temp --wref -o --output --deck -q --quiet --help" ;;
            size) opts="--l --vds --vsb --vgs --gm-id --id --gm --format -o --output --help" ;;
        esac
        COMPREPLY=($(compgen -W "$opts" -- "$cur"))
        return
    fi
    COMPREPLY=($(compgen -f -- "$cur"))
}
complete -o filenames -F _biaslint biaslint
