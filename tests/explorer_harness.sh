# explorer_harness.sh — shared helpers of the terminal tests (sourced, not
# run): a fresh nilstep inside tmux at a fixed size, the screen read back
# with capture-pane, every wait a bounded poll.  The sourcing test sets
# nothing; it gets $tmp (a scratch directory holding copies of the
# scenarios), $src, fail/screen/wait_for/wait_gone/keys/type_text/start.
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
    rm -rf "$tmp/state" # each start without recovery copies of the last one
    local args=""
    for a in "$@"; do
        args+=" '$a'"
    done
    # The old server may still be going away: retry for a few seconds.
    local i
    for ((i = 0; i < 50; i++)); do
        if tmux -L "$sock" -f /dev/null new-session -d -s nilstep -x "$cols" -y "$lines" \
            "cd '$tmp' && env NO_COLOR=1 TERM=screen LANG=$lang LC_ALL=$lang XDG_STATE_HOME='$tmp/state' '$NILSTEP_BINARY'$args; echo \"EXIT=\$?\"; sleep 600" \
            2>/dev/null; then
            break
        fi
        sleep 0.1
    done
    tmux -L "$sock" set-option -t nilstep -g status off >/dev/null
}

# The first child process of a pid, from /proc (no procps needed).
child_of() {
    local parent=$1 f rest
    for f in /proc/[0-9]*/stat; do
        rest=$(cat "$f" 2>/dev/null) || continue
        rest=${rest##*) }              # the fields after "(comm) "
        set -- $rest
        if [[ "${2:-}" == "$parent" ]]; then
            f=${f#/proc/}
            echo "${f%/stat}"
            return
        fi
    done
}

cp "$src"/scenarios/*.nilstep "$tmp"/

# screen_joined: the screen's rows without their edge blanks, joined, so
# that a value wrapped over several rows can be searched for whole.
screen_joined() {
    screen | sed -e 's/^ *//' -e 's/ *$//' | tr -d '\n'
}

# finish: the summary line and the exit status.
finish() {
    if ((failures > 0)); then
        echo "$failures check(s) failed"
        exit 1
    fi
    echo "all checks passed"
    exit 0
}
