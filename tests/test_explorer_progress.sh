#!/usr/bin/env bash
# Terminal test of the explorer's progress line during a long map analysis
# (surface(3) at class 5 with two Dehn twists per handle, whose largest
# layer has dimension 1344): the line is redrawn all along, and resizing
# the window at any stage never paints half-built results.  The engine
# calls its progress hook at least every 100 ms (bench_progress_gap), and
# the explorer redraws on those calls, so two captures 0.5 s apart differ
# in the elapsed time; the test allows a stretch of up to 1.5 s for a
# loaded machine (the engine once went 16 s without a call, between layers
# 4 and 5; before the busy frame of 1896e6a, a resize painted the half-built
# analysis, and here it crashed).  Skipped (exit 77) without NILSTEP_BINARY or tmux.
set -u

if [[ -z "${NILSTEP_BINARY:-}" ]]; then
    echo "skipped: NILSTEP_BINARY is not set (run through ctest)"
    exit 77
fi
if ! command -v tmux >/dev/null 2>&1; then
    echo "skipped: tmux is not installed"
    exit 77
fi
here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
# shellcheck source=explorer_harness.sh
. "$here/explorer_harness.sh"

twists="a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2, a3 -> b3 a3, b3 -> b3 a3 b3"
cat >"$tmp/twists.nilstep" <<END
nilstep session 1
title   Two Dehn twists per handle
group   surface(3)
class   5
map     $twists
END

# The progress line, or nothing.
progress_line() {
    screen | grep -E "analysing the map" | tail -n 1
}

current="the progress line is redrawn all through a map analysis"
start 120 30 twists.nilstep
if wait_for "analysing the map" 180; then
    prev=""
    same=0      # captures in a row equal to the one before
    worst=0
    samples=0
    resized=0
    after5=0    # samples taken once layer 5 was reached
    frozen=0
    for ((i = 0; i < 400 && after5 < 8; i++)); do
        sleep 0.5
        if screen | grep -q "EXIT="; then
            fail "the program ended during the analysis"
            break
        fi
        line=$(progress_line)
        if [[ -z $line ]]; then
            break # the analysis ended
        fi
        samples=$((samples + 1))
        [[ $line == *"layer 5 of 5"* ]] && after5=$((after5 + 1))
        if [[ $line == "$prev" ]]; then
            same=$((same + 1))
            ((same > worst)) && worst=$same
            if ((same == 3 && !frozen)); then
                fail "no redraw for 1.5 s: '$line'"
                frozen=1 # said once; the resizes below still run
            fi
        else
            same=0
        fi
        prev=$line
        # every few samples a resize, so that it meets every stage: the
        # frame then shows what runs, never a half-built analysis
        if ((i % 6 == 3)); then
            if ((resized % 2 == 0)); then
                tmux -L "$sock" resize-window -t nilstep -x 110 -y 32
            else
                tmux -L "$sock" resize-window -t nilstep -x 120 -y 30
            fi
            resized=$((resized + 1))
            sleep 0.3
            if screen | grep -q "j=0"; then
                fail "half-built results painted after a resize ($line)"
                break
            fi
            screen | grep -qE "Computing|analysing the map" ||
                fail "the resized frame does not say what runs"
        fi
    done
    echo "# $samples captures 0.5 s apart, at most $worst equal in a row, $resized resizes"
    ((after5 > 0)) || fail "the analysis never reached layer 5 ($samples captures)"
fi
keys Escape
wait_for "not analysed" 60
screen | grep -q "j=0" && fail "half-built bounds painted after the cancel"
keys q
wait_for "EXIT=0"

if ((failures > 0)); then
    echo "$failures check(s) failed"
    exit 1
fi
echo "all progress checks passed"
exit 0
