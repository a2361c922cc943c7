#!/usr/bin/env bash
# Terminal tests of the iterates screen, the bounds chart and the eigenvalue
# picture (ui/screen_iterate.c, ui/screen_charts.c): drive the real program
# in tmux at a fixed size and read the screen back.  Skipped (exit 77)
# without NILSTEP_BINARY or tmux.
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

# ---------------------------------------------------------------------------
# expanding-free-2-step: a -> a^2 b[a,b], b -> a^-1 b^2 on the Heisenberg
# group, growth rate sqrt 5 = 2.2360679...
current="iterates screen"
start 100 30 expanding-free-2-step.nilstep
wait_for "Hirsch length 3"
keys n
wait_for "iterates"
wait_for "growth rate 2.2360679"
wait_for "digits per layer"
wait_for "     100  " 30           # the run reaches n = 100 (the default)
screen | grep -q "GR " || fail "the plot should mark the growth-rate line"
# |a| = 1 at n = 0 and |alpha(a)| = |a^2 b [b,a]^-1| is found by the ball
keys Escape                        # stops the word-length search if it runs
sleep 0.5
keys Escape
wait_for "Layers of the lower central series"

current="a typed element is written to the session"
keys n
wait_for "iterates"
keys e
wait_for "Element to iterate"
type_text "[a,b]"
wait_for "Enter iterates it"
keys Enter
wait_for "^n([a,b])"
keys Escape
sleep 0.5
keys Escape
wait_for "Layers of the lower central series"
keys s
wait_for "saved"
grep -q '^iterate .*word \[a,b\]' "$tmp/expanding-free-2-step.nilstep" ||
    fail "the session should keep 'iterate ... word [a,b]': $(grep iterate "$tmp/expanding-free-2-step.nilstep")"

current="the session's iterate key is read on entry"
start 100 30 expanding-free-2-step.nilstep
wait_for "Hirsch length 3"
keys n
wait_for "^n([a,b])"
keys Escape
sleep 0.5
keys Escape

current="eigenvalue picture in the layer detail"
wait_for "Layers of the lower central series"
keys Enter
wait_for "Characteristic polynomial"
for i in $(seq 1 30); do keys j; done
wait_for "the unit circle"
keys Escape

current="bounds chart"
wait_for "Layers of the lower central series"
keys b
wait_for "for every layer j: the lower bounds"
wait_for "upper bound max"
wait_for "j = 2"
keys Escape
wait_for "Layers of the lower central series"

if ((failures)); then
    echo "$failures failure(s)"
    exit 1
fi
echo "all iterates-screen checks passed"
