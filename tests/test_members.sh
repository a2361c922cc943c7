#!/usr/bin/env bash
# test_members.sh — the explorer on a scan result file (screen_members.c),
# driven in tmux at 100x30: `nilstep FILE.jsonl` lists the members, f
# filters, s sorts, Enter makes a member the current map, L comes back, the
# open prompt takes a .jsonl file too, and a file without scan results is a
# clear error; and `nilstep scan` shows its progress line on a terminal.
# The expected counts and the largest growth rate come from a brute force
# over the same 2x2 matrices in Python (the classification by trace and
# determinant), not from the program.
#
# Skipped (exit 77) without NILSTEP_BINARY or tmux.
set -u

if [[ -z "${NILSTEP_BINARY:-}" ]]; then
    echo "skipped: NILSTEP_BINARY is not set (run through ctest)"
    exit 77
fi
if ! command -v tmux >/dev/null 2>&1; then
    echo "skipped: tmux is not installed"
    exit 77
fi
NS=$NILSTEP_BINARY
PY=/usr/bin/python3
sock="nilstep-members-$$"
base_sock=$sock
tmp=$(mktemp -d "${TMPDIR:-/tmp}/nilstep-members.XXXXXX")
trap 'tmux -L "$base_sock" kill-server >/dev/null 2>&1; tmux -L "$base_sock-progress" kill-server >/dev/null 2>&1; sleep 0.3; rm -rf "$tmp"' EXIT
lang=C
locale -a 2>/dev/null | grep -qiE '^c\.utf-?8$' && lang=C.UTF-8

failures=0
screen() { tmux -L "$sock" capture-pane -p -t m 2>/dev/null; }
fail() {
    echo "FAIL: $*"
    echo "---- screen ----"
    screen
    echo "----------------"
    failures=$((failures + 1))
}
# wait_for TEXT: until the screen shows TEXT (30 s at most: the machine
# may be loaded); wait_re does the same for an extended regular expression
wait_for() {
    local i
    for ((i = 0; i < 300; i++)); do
        screen | grep -qF -- "$1" && return 0
        sleep 0.1
    done
    fail "timed out waiting for '$1'"
    return 1
}
wait_re() {
    local i
    for ((i = 0; i < 300; i++)); do
        screen | grep -qE -- "$1" && return 0
        sleep 0.1
    done
    fail "timed out waiting for /$1/"
    return 1
}
keys() { tmux -L "$sock" send-keys -t m "$@"; }

# GL(2,Z) with entries in [-2, 2] on Z^2; the image of a is the column (p, r)
"$NS" scan --group '<a, b | [a,b]>' --class 1 --family 'a -> a^p b^r, b -> a^q b^s' \
    --range p=-2..2 --range q=-2..2 --range r=-2..2 --range s=-2..2 \
    --output "$tmp/gl.jsonl" 2>/dev/null
# hyperbolic automorphisms: det 1 and |trace| > 2, or det -1 and trace != 0;
# the largest spectral radius among them, and the first member (file order)
# attaining it
read -r nhyp top first < <("$PY" -c '
import itertools, math
rows = []
for i, (p, q, r, s) in enumerate(itertools.product(range(-2, 3), repeat=4)):
    t, d = p + s, p * s - q * r
    if (d == 1 and abs(t) > 2) or (d == -1 and t != 0):
        rho = (abs(t) + math.sqrt(t * t - 4 * d)) / 2
        rows.append((rho, i + 1))
best = max(r for r, _ in rows)
first = min(l for r, l in rows if abs(r - best) < 1e-9)
print(len(rows), "%.12f" % best, first)')

tmux -L "$sock" new-session -d -s m -x 100 -y 30 \
    "cd '$tmp' && XDG_STATE_HOME='$tmp/state' LANG=$lang NO_COLOR=1 '$NS' gl.jsonl; echo EXIT=\$?; sleep 60"
wait_for "gl.jsonl: 625 members, 625 shown (all), sorted by file order"
wait_for "p=-2 q=-2 r=-2 s=-2"
keys f f f f
wait_for "$nhyp shown (hyperbolic automorphisms)"
keys s
wait_for "sorted by growth rate, reversed"
# the first row of the list is the member with the largest growth rate
row=$(screen | sed -n 5p)
[[ $row == *"${top:0:12}"* ]] || fail "first row after sorting: '$row', expected growth ${top:0:12}"
[[ $row == " $first "* ]] || fail "first row after sorting is not line $first: '$row'"
keys Enter
wait_for "gl.jsonl, line $first"
wait_for "hyperbolic yes"
wait_for "automorphism yes"
wait_for "(a scan member, not saved)"
keys L
wait_for "$nhyp shown (hyperbolic automorphisms)"
keys Escape
wait_for "Images of the generators"
# the open prompt takes a result file too (y: leave the unsaved member)
keys o
wait_for "y"
keys y
keys -l "gl.jsonl"
keys Enter
wait_for "625 members"
keys q
wait_for "Images of the generators"
keys q
wait_for "Quit without saving"
keys y
wait_for "EXIT=0"

# the progress line of `nilstep scan` when stderr is a terminal: done/total,
# rate, time left; it is erased before the closing summary
# A fresh server: a new session right after kill-server can race the old
# server's exit ("server exited unexpectedly").
tmux -L "$sock" kill-server >/dev/null 2>&1
sock="$base_sock-progress"
tmux -L "$sock" new-session -d -s m -x 100 -y 10 \
    "'$NS' scan --group 'free(2)' --class 4 --family 'a -> a^p b^q, b -> a^r b^s' \
     --range p=-4..4 --range q=-4..4 --range r=-4..4 --range s=-4..4 --jobs 1 \
     --output '$tmp/prog.jsonl'; echo EXIT=\$?; sleep 60"
wait_re 'nilstep scan: [0-9]+/6561  [0-9]+/s  [0-9]+ s left'
wait_for "EXIT=0"
screen | grep -q 'nilstep scan: 6561 tried, 6561 valid, 6561 kept' || fail "closing summary line"
screen | grep -q '/6561  ' && fail "the progress line was not erased"

# a file with no scan result in it: a message and exit status 2
printf 'not json\n{"x": 1}\n' >"$tmp/bad.jsonl"
"$NS" "$tmp/bad.jsonl" >"$tmp/out" 2>&1 </dev/null
rc=$?
[[ $rc == 2 ]] || fail "bad.jsonl: exit status $rc, expected 2"
grep -q "bad.jsonl: no scan results in it (2 lines read)" "$tmp/out" ||
    fail "bad.jsonl: message: $(cat "$tmp/out")"

if ((failures)); then
    echo "$failures checks failed"
    exit 1
fi
echo "member list: all checks passed ($nhyp hyperbolic automorphisms, top growth ${top:0:12})"
