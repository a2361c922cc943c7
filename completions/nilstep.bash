# bash completion for nilstep(1): subcommands, options, their values (formats,
# group families, scan properties, shards, memory sizes) and session or result
# files.
# Installed as share/bash-completion/completions/nilstep.

_nilstep()
{
    local cur prev sub i
    COMPREPLY=()
    cur=${COMP_WORDS[COMP_CWORD]}
    prev=${COMP_WORDS[COMP_CWORD-1]}
    sub=
    for ((i = 1; i < COMP_CWORD; i++)); do
        case ${COMP_WORDS[i]} in
            report|scan|iterate) sub=${COMP_WORDS[i]}; break ;;
        esac
    done

    local families="free( heisenberg( surface( unitriangular( raag("
    local properties="valid automorphism injective hyperbolic expanding finite-reidemeister"

    # values of the option before the cursor
    case $prev in
        --format)
            if [[ $sub == iterate ]]; then
                COMPREPLY=($(compgen -W "text json csv" -- "$cur"))
            else
                COMPREPLY=($(compgen -W "text json latex" -- "$cur"))
            fi
            return ;;
        --group)
            compopt -o nospace 2>/dev/null
            COMPREPLY=($(compgen -W "$families" -- "$cur")); return ;;
        --only)
            COMPREPLY=($(compgen -W "$properties" -- "$cur")); return ;;
        --shard)
            COMPREPLY=($(compgen -W "slurm 1/2 1/4 1/8" -- "$cur")); return ;;
        --digits)
            COMPREPLY=($(compgen -W "4 6 10 15 20 30" -- "$cur")); return ;;
        --ball-memory)
            COMPREPLY=($(compgen -W "0 64 256 1024" -- "$cur")); return ;;
        --jobs)
            COMPREPLY=($(compgen -W "1 2 4 8 $(nproc 2>/dev/null)" -- "$cur")); return ;;
        --resume|--output|--summary)
            compopt -o filenames 2>/dev/null
            COMPREPLY=($(compgen -f -X '!*.jsonl' -- "$cur") $(compgen -d -- "$cur")); return ;;
        --class|--map|--power|--then|--family|--range|--sample|--seed|--growth-between|\
        --steps|--every|--element)
            return ;;
    esac

    local opts
    case $sub in
        report)
            opts="--format --group --class --map --power --then --inverse --digits
                  --time-limit --max-memory --max-pc --help" ;;
        scan)
            opts="--group --class --family --range --sample --seed --only --growth-between
                  --jobs --shard --resume --output --summary --help" ;;
        iterate)
            opts="--steps --every --element --format --ball-memory --digits
                  --group --class --map --help" ;;
        *)
            if [[ $cur != -* ]] && (( COMP_CWORD == 1 )); then
                compopt -o filenames 2>/dev/null
                COMPREPLY=($(compgen -W "report scan iterate" -- "$cur")
                           $(compgen -f -X '!*.nilstep' -- "$cur")
                           $(compgen -f -X '!*.jsonl' -- "$cur")
                           $(compgen -d -- "$cur"))
                return
            fi
            opts="--help --version" ;;
    esac
    if [[ $cur == -* ]]; then
        COMPREPLY=($(compgen -W "$opts" -- "$cur"))
    else
        compopt -o filenames 2>/dev/null
        COMPREPLY=($(compgen -f -X '!*.nilstep' -- "$cur") $(compgen -d -- "$cur"))
    fi
}
complete -F _nilstep nilstep
