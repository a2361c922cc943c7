#!/usr/bin/env bash
# Every scenario in scenarios/ loads, and its reports in all three formats
# match reviewed golden files byte for byte (doc/design.md §6.3):
#   tests/golden/NAME.json   the JSON report
#   tests/golden/NAME.txt    the text report
#   tests/golden/NAME.tex    the LaTeX report
#   tests/golden/NAME.status the expected exit status of `nilstep report`
#                            (1 exactly when the map is not well defined)
# Nothing expected is taken from the output under test: a missing golden
# file is a failure.
#
#   tests/test_scenarios.sh            compare (what ctest runs)
#   tests/test_scenarios.sh --update   a developer tool, never run by ctest:
#                                      rewrite the report files (not the
#                                      .status files) from the current
#                                      program; read the diff by eye for
#                                      mathematical sense before committing
set -u

if [[ -z "${NILSTEP_BINARY:-}" ]]; then
    echo "skipped: NILSTEP_BINARY is not set (run through ctest)"
    exit 77
fi
src=${NILSTEP_SOURCE_DIR:-$(cd "$(dirname "$0")/.." && pwd)}
update=0
if [[ "${1:-}" == "--update" ]]; then
    update=1
fi

shopt -s nullglob
files=("$src"/scenarios/*.nilstep)
if (( ${#files[@]} < 8 )); then
    echo "FAIL: expected at least 8 scenarios, found ${#files[@]}"
    exit 1
fi

failed=0
for f in "${files[@]}"; do
    name=$(basename "$f" .nilstep)
    if ! grep -q '^title ' "$f" || ! grep -q '^#' "$f"; then
        echo "FAIL $name: a scenario needs a title and a '#' comment"
        failed=1
    fi
    status_file="$src/tests/golden/$name.status"
    if [[ ! -f "$status_file" ]]; then
        echo "FAIL $name: no $status_file (the expected exit status, written by hand)"
        failed=1
        continue
    fi
    want=$(tr -d ' \n' <"$status_file")
    for fmt in json text latex; do
        case $fmt in
            json) ext=json ;;
            text) ext=txt ;;
            latex) ext=tex ;;
        esac
        golden="$src/tests/golden/$name.$ext"
        out=$("$NILSTEP_BINARY" report --format "$fmt" "$f" 2>/dev/null)
        status=$?
        if [[ "$status" != "$want" ]]; then
            echo "FAIL $name ($fmt): exit status $status, expected $want ($status_file)"
            failed=1
        fi
        if (( update )); then
            printf '%s\n' "$out" >"$golden"
            echo "updated $golden"
            continue
        fi
        if [[ ! -f "$golden" ]]; then
            echo "FAIL $name: no golden file $golden"
            failed=1
            continue
        fi
        if diff -u "$golden" <(printf '%s\n' "$out"); then
            echo "ok $name ($fmt)"
        else
            echo "FAIL $name ($fmt): report differs from $golden"
            failed=1
        fi
    done
done
exit $failed
