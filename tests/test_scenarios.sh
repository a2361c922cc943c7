#!/usr/bin/env bash
# Every scenario in scenarios/ loads, and its JSON report matches the golden
# file tests/golden/NAME.json byte for byte.  The report's exit status must
# be 1 exactly for the scenarios whose map is not well defined, 0 otherwise.
#
#   tests/test_scenarios.sh            compare
#   tests/test_scenarios.sh --update   rewrite the golden files from the
#                                      current program (read the diff by eye
#                                      for mathematical sense before committing)
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
    golden="$src/tests/golden/$name.json"
    out=$("$NILSTEP_BINARY" report --format json "$f" 2>&1)
    status=$?
    if (( status > 1 )); then
        echo "FAIL $name: report exited with $status"
        printf '%s\n' "$out" | head -5
        failed=1
        continue
    fi
    want=0
    if grep -q '"valid": false' <<<"$out"; then
        want=1
    fi
    if (( status != want )); then
        echo "FAIL $name: exit status $status, expected $want"
        failed=1
    fi
    if ! grep -q '^title ' "$f" || ! grep -q '^#' "$f"; then
        echo "FAIL $name: a scenario needs a title and a '#' comment"
        failed=1
    fi
    if (( update )); then
        mkdir -p "$src/tests/golden"
        printf '%s\n' "$out" >"$golden"
        echo "updated $golden"
        continue
    fi
    if [[ ! -f "$golden" ]]; then
        echo "FAIL $name: no golden file (tests/test_scenarios.sh --update writes it)"
        failed=1
        continue
    fi
    if diff -u "$golden" <(printf '%s\n' "$out"); then
        echo "ok $name"
    else
        echo "FAIL $name: report differs from $golden"
        failed=1
    fi
done
exit $failed
