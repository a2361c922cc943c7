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
src=${NILSTEP_SOURCE_DIR:-$(cd "$(dirname "$0")/.." && pwd)}

sock="nilstep-test-$$"
tmp=$(mktemp -d)
cleanup() {
    tmux -L "$sock" kill-server >/dev/null 2>&1
    rm -rf "$tmp"
}
trap cleanup EXIT

# A UTF-8 locale when there is one; the explorer falls back to ASCII
# symbols otherwise, and no check below depends on which.
lang=C
if locale -a 2>/dev/null | grep -qiE '^c\.utf-?8$'; then
    lang=C.UTF-8
fi

failures=0
current=""
fail() {
    echo "FAIL [$current]: $*"
    echo "---- screen ----"
    screen
    echo "----------------"
    failures=$((failures + 1))
}

screen() {
    tmux -L "$sock" capture-pane -p -t nilstep 2>/dev/null
}

# wait_for TEXT [SECONDS]: until the screen shows TEXT (fixed string).
wait_for() {
    local text=$1 limit=${2:-10} i
    for ((i = 0; i < limit * 10; i++)); do
        if screen | grep -qF -- "$text"; then
            return 0
        fi
        sleep 0.1
    done
    fail "timed out waiting for '$text'"
    return 1
}

# wait_gone TEXT [SECONDS]: until TEXT is no longer on the screen.
wait_gone() {
    local text=$1 limit=${2:-10} i
    for ((i = 0; i < limit * 10; i++)); do
        if ! screen | grep -qF -- "$text"; then
            return 0
        fi
        sleep 0.1
    done
    fail "timed out waiting for '$text' to go"
    return 1
}

keys() {
    tmux -L "$sock" send-keys -t nilstep "$@"
}

# Literal text (no key names).
type_text() {
    tmux -L "$sock" send-keys -t nilstep -l -- "$1"
}

# start COLS LINES [FILE]: a fresh program in a fresh tmux server.  The
# shell line after it reports the exit status on the screen.
start() {
    local cols=$1 lines=$2
    shift 2
    tmux -L "$sock" kill-server >/dev/null 2>&1
    local args=""
    for a in "$@"; do
        args+=" '$a'"
    done
    # The old server may still be going away: retry for a few seconds.
    local i
    for ((i = 0; i < 50; i++)); do
        if tmux -L "$sock" -f /dev/null new-session -d -s nilstep -x "$cols" -y "$lines" \
            "cd '$tmp' && ${start_pre:-} env NO_COLOR=1 TERM=screen LANG=$lang LC_ALL=$lang XDG_STATE_HOME='$tmp/state' '$NILSTEP_BINARY'$args; echo \"EXIT=\$?\"; sleep 600" \
            2>/dev/null; then
            break
        fi
        sleep 0.1
    done
    tmux -L "$sock" set-option -t nilstep -g status off >/dev/null
}

cp "$src"/scenarios/*.nilstep "$tmp"/

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
