#!/usr/bin/env bash
# Terminal tests of the explorer: drive the real program inside tmux at a
# fixed size and read the screen back with capture-pane.  Every wait polls
# the screen with a bounded timeout instead of sleeping a fixed time.
#
# Skipped (exit 77) without NILSTEP_BINARY (run through ctest) or tmux.
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

# ---------------------------------------------------------------------------
current="open a scenario and read the radii"
start 100 30 hyperbolic-rank3-class2.nilstep
wait_for "Hirsch length 6"
wait_for "1.324717957"            # rho_1, the plastic number, cut to 10 digits
wait_for "1.150963925"            # rho_2
screen | grep -E '^> +1 ' | grep -q ' U ' || fail "layer 1 should carry the U mark"
screen | grep -E '^> +1 ' | grep -q ' L ' || fail "layer 1 should carry the L mark"
wait_for "hyperbolic yes"
wait_for "Reidemeister 1"

current="layer detail"
keys Enter
wait_for "Characteristic polynomial"
wait_for "x^3 - x - 1"
wait_for "1.32471795724474602596090885448"   # all the digits here
keys Escape
wait_for "Layers of the lower central series"

current="quit without changes"
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="edit an image and see the numbers change"
start 100 30
wait_for "2.618033988 U"
keys e C-u
type_text "a^3"
wait_for "parses"
keys Enter
wait_for "9.0 U"
wait_gone "2.618033988 U"
wait_for "[modified]"

current="undo and redo"
keys u
wait_for "2.618033988 U"
keys r
wait_for "9.0 U"

current="an invalid image is located"
keys e C-u
type_text "a^3 (b"
wait_for "error: column 7"
wait_for "expected ')'"
line=$(screen | grep -n -F -- "a^3 (b" | head -1)
row=${line%%:*}
field=${line#*:}
prefix=${field%%(b*}
caret_line=$(screen | sed -n "$((row + 1))p")
caret_col=$(awk -v s="$caret_line" 'BEGIN { print index(s, "^") - 1 }')
want_col=$((${#prefix} + 2))
if [[ "$caret_col" != "$want_col" ]]; then
    fail "caret at column $caret_col, expected $want_col (just past '(b')"
fi
keys Escape
wait_for "cancelled"
wait_for "9.0 U"                  # the committed image is untouched

current="raise and lower the class"
# Raising extends the quotient on screen, lowering cuts it to a prefix
# (no class is computed again from class 1); the status line says which.
keys +
wait_for "class 4   Hirsch length 8"
wait_for "class 4: Hirsch length 8 (extended from class 3)"
keys -
wait_for "class 3   Hirsch length 5"
wait_for "class 3: Hirsch length 5 (prefix of class 4)"

current="edit the presentation"
keys p C-u
type_text "<a, b | [a,b,a], [a,b,b]>"
wait_for "parses: 2 generators, 2 relations"
keys Enter
wait_for "Hirsch length 3"

current="help"
keys '?'
wait_for "undo the last change of an image"
keys Space
wait_for "Line editor"
# the line editor's keys run past one page: scroll until Ctrl-U shows
for ((i = 0; i < 20; i++)); do
    screen | grep -qF "Ctrl-U" && break
    keys j
    sleep 0.1
done
wait_for "Ctrl-U"
keys Escape
wait_for "Images of the generators"

current="quit asks about unsaved changes"
keys q
wait_for "unsaved changes"
keys n
wait_for "still here"
keys q
wait_for "unsaved changes"
keys y
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="a map that fails a relator"
start 100 30 relator-fails.nilstep
wait_for "Not well defined"
wait_for "[a,b] = c"
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="save, reopen, compare"
cp "$tmp/filiform-class4.nilstep" "$tmp/copy.nilstep"
start 100 30 copy.nilstep
wait_for "24.0 U"
keys Tab e C-u
type_text "y^2"
keys Enter
wait_for "16.0 U"
keys j j s
wait_for "Before saving"       # the file's comment predates the change: shown, kept
keys k
wait_for "saved copy.nilstep"
grep -q '^map .*y -> y^2' "$tmp/copy.nilstep" || fail "the saved map lacks the new image"
grep -q '^cursor *layer 3 image 2' "$tmp/copy.nilstep" || fail "the saved cursor is not layer 3, image 2"
before=$(screen | sed '$d' | sed '$d')
keys q
wait_for "EXIT=0"
start 100 30 copy.nilstep
wait_for "16.0 U"
after=$(screen | sed '$d' | sed '$d')
if [[ "$before" != "$after" ]]; then
    fail "the reopened session differs from the saved one"
    diff <(echo "$before") <(echo "$after")
fi
screen | grep -qE '^> +3 ' || fail "layer 3 should be selected after reopening"
screen | grep -qE '^> y ' || fail "the image of y should be selected after reopening"

current="save as and a bad path"
keys w C-u
type_text "$tmp/no/such/dir/x.nilstep"
keys Enter
wait_for "error: not saved"
keys w C-u
type_text "$tmp/other.nilstep"
keys Enter
wait_for "saved $tmp/other.nilstep"
[[ -f "$tmp/other.nilstep" ]] || fail "save as wrote nothing"

current="open a missing file, then another scenario"
keys o C-u
type_text "$tmp/missing.nilstep"
keys Enter
wait_for "error:"
keys o C-u
type_text "$tmp/torsion-layers.nilstep"
keys Enter
wait_for "opened $tmp/torsion-layers.nilstep"
wait_for "Z/6 + Z/6"
wait_for "on Gc: Reidemeister 6"
wait_for "T: order 216"
wait_for "(t: the layer has torsion)"
keys e C-u
type_text "b"
keys Enter
wait_for "[modified]"
keys o
wait_for "unsaved changes"
keys n
wait_for "still here"
keys q y
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="a long table scrolls to its selection at 80x24"
start 80 24 unipotent-shear.nilstep
wait_for "class 3   Hirsch length 5"
keys + + + + +
wait_for "class 8   Hirsch length" 60
keys G
wait_for "rows 3-8 of 8"
screen | grep -qE '^> +8 ' || fail "the selected last layer is not visible"
keys g
wait_for "rows 1-6 of 8"
screen | grep -qE '^> +1 ' || fail "the selected first layer is not visible"
keys q y
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="Esc cancels a long computation"
# free(2) from class 12 (Witt 1937: Hirsch length 747) to class 13 takes
# many seconds; free(4) at class 7 is now refused at once by the
# pc-generator limit, so it no longer serves here.
cat >"$tmp/long.nilstep" <<'END'
nilstep session 1
title   Two letters, zero map
group   <a, b>
class   12
map     a -> 1, b -> 1
END
start 100 30 long.nilstep
wait_for "class 12   Hirsch length 747" 180
keys +
wait_for "class-13 quotient" 30
keys Escape
wait_for "class 13 not computed" 120
wait_for "kept class 12"
wait_for "class 12   Hirsch length 747"
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="80x24, too small, and back"
start 80 24 surface-genus2-class4.nilstep
wait_for "Hirsch length 70" 30
wait_for "46.97871376 U"
wait_for "Invariants"
wait_for "s save"
tmux -L "$sock" resize-window -t nilstep -x 60 -y 20
wait_for "Terminal too small: 60x20"
tmux -L "$sock" resize-window -t nilstep -x 80 -y 24
wait_for "46.97871376 U"
wait_gone "Terminal too small"
tmux -L "$sock" resize-window -t nilstep -x 120 -y 40
wait_for "basis"
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="SIGTERM restores the terminal"
start 100 30 unipotent-shear.nilstep
wait_for "Invariants"
shell_pid=$(tmux -L "$sock" display-message -p -t nilstep '#{pane_pid}')
prog_pid=$(child_of "$shell_pid")
if [[ -n "$prog_pid" ]]; then
    kill -TERM "$prog_pid"
    wait_for "EXIT=143"
    # back from the explorer's screen to the shell's
    wait_gone "Invariants"
else
    fail "could not find the program's process"
fi

# ---------------------------------------------------------------------------
current="no colour at all under NO_COLOR"
start 80 24 unipotent-shear.nilstep
wait_for "Invariants"
if tmux -L "$sock" capture-pane -p -e -t nilstep | grep -qE $'\e\\[[0-9;]*(3[0-7]|4[0-7]|38|48)[;m]'; then
    fail "colour escape sequences on the screen although NO_COLOR is set"
fi
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
# Issue 8: no lost work.

# The program's pid inside the tmux pane.
prog_pid() {
    local shell_pid
    shell_pid=$(tmux -L "$sock" display-message -p -t nilstep '#{pane_pid}')
    child_of "$shell_pid"
}

# wait_file PATTERN [SECONDS]: until a file matches the glob (or fail).
wait_file() {
    local pat=$1 limit=${2:-10} i
    for ((i = 0; i < limit * 10; i++)); do
        if compgen -G "$pat" >/dev/null; then
            return 0
        fi
        sleep 0.1
    done
    fail "timed out waiting for a file $pat"
    return 1
}

current="SIGTERM keeps the unsaved work; the next start offers it back"
cat >"$tmp/rec.nilstep" <<'END'
nilstep session 1
title   Recover me
group   <a, b | >
class   2
map     a -> a b, b -> b
END
rm -rf "$tmp/state"
start 100 30 rec.nilstep
wait_for "Images of the generators"
keys e C-u
type_text "a^3 b"
wait_for "parses"
keys Enter
wait_for "[modified]"
pid=$(prog_pid)
kill -TERM "$pid"
wait_for "EXIT=143"
wait_file "$tmp/state/nilstep/*.nilstep"
grep -q 'a^3 b' "$tmp"/state/nilstep/*.nilstep || fail "the recovery copy lacks the edit"
grep -q 'a -> a b, b -> b' "$tmp/rec.nilstep" || fail "the session file itself changed"
start 100 30 rec.nilstep
wait_for "Unsaved work"
wait_for "map"
wait_for "a^3 b"                   # what differs is shown
keys r
wait_for "restored"
wait_for "[modified]"
keys s
wait_for "saved rec.nilstep"
grep -q 'a^3 b' "$tmp/rec.nilstep" || fail "the restored work was not saved"
compgen -G "$tmp/state/nilstep/*.nilstep" >/dev/null && fail "the recovery copy outlived the save"
keys q
wait_for "EXIT=0"

current="a recovery copy appears a few seconds after a change; closing the terminal keeps it"
rm -rf "$tmp/state"
start 100 30 rec.nilstep
wait_for "Images of the generators"
keys t C-u
type_text "Changed title"
keys Enter
wait_for "[modified]"
wait_file "$tmp/state/nilstep/*.nilstep" 15   # written by the running program
pid=$(prog_pid)
kill -HUP "$pid"
wait_for "EXIT=129"
grep -q 'Changed title' "$tmp"/state/nilstep/*.nilstep || fail "the recovery copy lacks the title"
start 100 30 rec.nilstep
wait_for "Unsaved work"
wait_for "title"
keys x                             # only r or d answer
wait_for "Unsaved work"
keys d
wait_for "discarded"
compgen -G "$tmp/state/nilstep/*.nilstep" >/dev/null && fail "a discarded copy is still there"
wait_for "Recover me"
keys q
wait_for "EXIT=0"

current="the built-in scenario keeps its unsaved work too"
rm -rf "$tmp/state"
start 100 30
wait_for "2.618033988 U"
keys e C-u
type_text "a^3"
keys Enter
wait_for "9.0 U"
kill -TERM "$(prog_pid)"
wait_for "EXIT=143"
start 100 30
wait_for "Unsaved work"
keys r
wait_for "9.0 U"
keys q
wait_for "unsaved changes"
keys y
wait_for "EXIT=0"
compgen -G "$tmp/state/nilstep/*.nilstep" >/dev/null && fail "quitting without saving left the copy"

current="a file-size limit is a save error, not a crash"
{
    printf 'nilstep session 1\ntitle   Big\ngroup   <a, b | >\nclass   2\nmap     a -> a b, b -> b\n'
    for i in $(seq 1 60); do
        printf 'note    line %d of a long note that makes the file larger than two KiB\n' "$i"
    done
} >"$tmp/big.nilstep"
cp "$tmp/big.nilstep" "$tmp/big.orig"
start_pre="ulimit -f 2;" start 100 30 big.nilstep
wait_for "Images of the generators"
keys t C-u
type_text "Bigger"
keys Enter
keys s
wait_for "Before saving"       # the notes predate the new title: keep them
keys k
wait_for "not saved"
wait_for "too large"
wait_for "[modified]"
cmp -s "$tmp/big.nilstep" "$tmp/big.orig" || fail "the old file changed"
compgen -G "$tmp/big.nilstep.tmp-*" >/dev/null && fail "a temporary file was left behind"
keys q
wait_for "unsaved changes"
keys y
wait_for "EXIT=0"

current="temporary files of an interrupted save are reported on opening"
cp "$tmp/rec.nilstep" "$tmp/left.nilstep"
printf 'half a sess' >"$tmp/left.nilstep.tmp-Q7w2Ab"
start 100 30 left.nilstep
wait_for "interrupted save"
wait_for "left.nilstep.tmp-Q7w2Ab"
keys q
wait_for "EXIT=0"

current="no keystroke typed during a computation is lost"
cat >"$tmp/slow.nilstep" <<'END'
nilstep session 1
title   Slow
group   <a, b, c>
class   8
END
rm -rf "$tmp/state"
start 100 30 slow.nilstep
wait_for "class-8 quotient" 30
long=$(printf 'k%.0s' $(seq 1 100))
keys t C-u
type_text "$long"
keys Enter s
wait_for "saved slow.nilstep" 180
grep -q "^title *$long\$" "$tmp/slow.nilstep" || fail "the title lost letters: $(grep '^title' "$tmp/slow.nilstep")"
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
# Issue 8: limits that always answer.

# two Dehn twists per handle (b -> a b, then a -> b a): each keeps [a,b]
twists="a1 -> b1 a1, b1 -> b1 a1 b1, a2 -> b2 a2, b2 -> b2 a2 b2, a3 -> b3 a3, b3 -> b3 a3 b3"
current="a resize during a map analysis paints no half-built numbers"
cat >"$tmp/twists.nilstep" <<END
nilstep session 1
title   Two Dehn twists per handle
group   surface(3)
class   5
map     $twists
END
start 100 30 twists.nilstep
if wait_for "analysing the map" 120; then
    tmux -L "$sock" resize-window -t nilstep -x 110 -y 32
    sleep 0.5
    if screen | grep -q "j=0"; then
        fail "half-built bounds painted after a resize"
    fi
    screen | grep -qE "Computing|analysing the map" || fail "the resized frame does not say what runs"
fi
keys Escape                        # the spectra of layer 5 take tens of seconds
wait_for "not analysed" 60
screen | grep -q "j=0" && fail "half-built bounds painted after the cancel"
keys q
wait_for "EXIT=0"

current="report shows its progress on a terminal during the spectra"
# The point is the progress line; whether the spectra finish inside the time
# limit depends on the build (a sanitizer build is several times slower), so
# either ending is accepted: done (0) or stopped by --time-limit (3).
start 100 30 report --time-limit 60 --group "surface(3)" --class 5 --map "$twists"
wait_for "spectra: layer" 120
wait_for "EXIT=" 120
screen | grep -qE 'EXIT=(0|3)' || fail "report ended with $(screen | grep -o 'EXIT=[0-9]*'), expected 0 or 3"

if ((failures > 0)); then
    echo "$failures check(s) failed"
    exit 1
fi
echo "all explorer checks passed"
exit 0
