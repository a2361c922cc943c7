#!/usr/bin/env bash
# Terminal tests of the explorer's files: the file prompts ("~", Tab
# completion, the current directory), the comment and notes of a session
# (shown, edited, never saved unseen) and the export of reports and layer
# matrices.  Each section drives the real program in tmux at a fixed size
# (helpers: explorer_harness.sh).
#
# Reference values: exported reports are compared byte for byte with
# `nilstep report` of the same session saved to a file (the CLI is the
# reference the issue names); the layer-1 matrix of the default scenario
# is the abelianised map a -> a^2 b, b -> a b, i.e. columns (2,1) and (1,1)
# (by hand).
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
here=$(cd "$(dirname "$0")" && pwd)
# shellcheck source=explorer_harness.sh
. "$here/explorer_harness.sh"

# A home of our own, so that "~" leads somewhere known.
export HOME="$tmp/home"
mkdir -p "$HOME/work"

# ---------------------------------------------------------------------------
current="file prompts: ~, Tab completion, the directory (issue 9, item 13)"
long_a="golden-aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa-first.nilstep"
long_b="golden-aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa-second.nilstep"
cp "$tmp/hyperbolic-rank3-class2.nilstep" "$HOME/work/$long_a"
cp "$tmp/hyperbolic-rank3-class2.nilstep" "$HOME/work/$long_b"
cp "$tmp/hyperbolic-rank3-class2.nilstep" "$HOME/work/unique-one.nilstep"
start 80 24
wait_for "2.618033988 U"
keys o
wait_for "Open a session file"
wait_for "in $tmp"                       # the current directory is shown
type_text "~/wo"
keys Tab
wait_for "file ~/work/"
type_text "u"
keys Tab
wait_for "file ~/work/unique-one.nilstep"
wait_for "Enter opens $HOME/work/unique-one.nilstep"
keys C-u
type_text "~/work/g"
keys Tab
wait_for "file ~/work/golden-aaaaaaaa"
wait_for "2 names match"
# both candidates whole, though each is nearly as wide as the screen
screen | grep -qF -- "$long_a" || fail "the first candidate is not shown whole"
screen | grep -qF -- "$long_b" || fail "the second candidate is not shown whole"
type_text "s"
wait_gone "2 names match"
keys Tab
wait_for "second.nilstep"
keys Enter
wait_for "opened $HOME/work/golden-aaaa" 30
wait_for "Anosov automorphism"
keys w C-u
type_text "~/saved.nilstep"
keys Enter
wait_for "saved $HOME/saved.nilstep"
[[ -f "$HOME/saved.nilstep" ]] || fail "save as ~/saved.nilstep wrote no file in the home directory"
[[ -e "$tmp/~" ]] && fail "save as wrote a directory named '~'"
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="x exports the report and a layer's matrix (issue 9, item 15)"
start 100 30
wait_for "2.618033988 U"
# an image changed and the class raised (an extended quotient): what is
# exported is the session on screen, not the file it came from
keys e C-u
type_text "a^3 b"
keys Enter
wait_for "image of a applied"
keys +
wait_for "class 4   Hirsch length" 60
for kind in t:txt j:json l:tex; do
    keys x
    wait_for "t text report"
    keys "${kind%%:*}"
    wait_for "file untitled.${kind#*:}"       # the name offered
    keys C-u
    type_text "r.${kind#*:}"
    keys Enter
    wait_for "wrote the " 30
    wait_for "to $tmp/r.${kind#*:}"
done
# no silent overwrite: the question, and "n" leaves the file as it was
cp "$tmp/r.txt" "$tmp/r.txt.before"
echo "keep me" >"$tmp/keep.txt"
keys x t C-u
type_text "keep.txt"
keys Enter
wait_for "The file exists"
keys n
wait_for "not written: the file exists"
[[ "$(cat "$tmp/keep.txt")" == "keep me" ]] || fail "keep.txt was overwritten without a yes"
keys Enter
wait_for "The file exists"
keys y
wait_for "wrote the text report to $tmp/keep.txt"
cmp -s "$tmp/keep.txt" "$tmp/r.txt" || fail "y did not replace keep.txt with the report"
# an error names the file and the reason, and keeps the prompt
keys x j C-u
type_text "no/such/dir/r.json"
keys Enter
wait_for "not written"
wait_for "no/such/dir/r.json"
screen | grep -q "No such file or" || fail "the reason is not given"
keys Escape
# the matrix of layer 1: a -> a^3 b, b -> a b abelianised, columns (3,1)
# and (1,1) (by hand)
keys g x m
wait_for "file untitled-M1.txt"
keys Enter
wait_for "wrote matrix M1 to $tmp/untitled-M1.txt"
got=$(grep -v '^#' "$tmp/untitled-M1.txt")
[[ "$got" == $'3 1\n1 1' ]] || fail "matrix M1 reads '$got', not rows '3 1' and '1 1'"
# the same layer's matrix from the layer detail, layer 2, against the JSON report
keys j Enter
wait_for "Matrix M2"
keys x m Enter
wait_for "wrote matrix M2"
keys Escape
keys w C-u
type_text "s.nilstep"
keys Enter
wait_for "Before saving"            # the default scenario's comment predates the changes
keys k
wait_for "saved s.nilstep"
for f in txt:text json:json tex:latex; do
    "$NILSTEP_BINARY" report --format "${f#*:}" "$tmp/s.nilstep" >"$tmp/cli.${f%%:*}"
    cmp -s "$tmp/cli.${f%%:*}" "$tmp/r.${f%%:*}" ||
        fail "the exported ${f#*:} report differs from nilstep report of the saved session: $(diff "$tmp/cli.${f%%:*}" "$tmp/r.${f%%:*}" | head -5)"
done
/usr/bin/python3 - "$tmp/cli.json" "$tmp/untitled-M2.txt" <<'EOF2' || fail "matrix M2 differs from the JSON report's"
import json, sys
want = json.load(open(sys.argv[1]))["map"]["layers"][1]["matrix"]
got = [[int(x) for x in l.split()] for l in open(sys.argv[2]) if not l.startswith("#")]
sys.exit(0 if got == want else 1)
EOF2
keys q
wait_for "EXIT=0"

# ---------------------------------------------------------------------------
current="the comment and notes: shown, edited, never saved unseen (issue 9, item 12)"
# Saving the default scenario after a change: the comment that describes
# the old map is shown and asked about, not written silently.
start 100 30
wait_for "2.618033988 U"
keys e C-u
type_text "a^3"
keys Enter
wait_for "image of a applied"
keys w C-u
type_text "changed.nilstep"
keys Enter
wait_for "Before saving"
wait_for "The matrix [[2,1],[1,1]] lifted"        # the comment itself, shown
[[ -e "$tmp/changed.nilstep" ]] && fail "saved before the question was answered"
keys x                                            # any other key: not saved
wait_for "not saved"
[[ -e "$tmp/changed.nilstep" ]] && fail "a declined save wrote the file"
keys s                                            # no file yet: the name again
wait_for "Save the session as"
type_text "changed.nilstep"
keys Enter
wait_for "Before saving"
keys d
wait_for "saved changed.nilstep"
grep -q '^#' "$tmp/changed.nilstep" && fail "d did not drop the old comment: $(head -3 "$tmp/changed.nilstep")"
grep -q '^map *a -> a^3' "$tmp/changed.nilstep" || fail "the change was not saved"
keys q
wait_for "EXIT=0"

# k keeps it, after it was shown
start 100 30
wait_for "2.618033988 U"
keys e C-u
type_text "a^3"
keys Enter
wait_for "image of a applied"
keys w C-u
type_text "kept.nilstep"
keys Enter
wait_for "Before saving"
keys k
wait_for "saved kept.nilstep"
[[ "$(sed -n 2p "$tmp/kept.nilstep")" == "# The matrix [[2,1],[1,1]] lifted to the free nilpotent group of" ]] ||
    fail "k did not keep the comment"
# saved and unchanged since: no question
keys s
sleep 0.5
screen | grep -q "Before saving" && fail "saving again asked about the comment just kept"
wait_for "saved kept.nilstep"
keys q
wait_for "EXIT=0"

# N shows and edits them; what was shown is saved without a question
cat >"$tmp/noted.nilstep" <<'END'
nilstep session 1
# Heisenberg doubling, as first written.
title   Noted
group   heisenberg(1)
class   2
map     x1 -> x1^2, y1 -> y1, z -> z^2
note    the first note
END
start 80 24 noted.nilstep
wait_for "Noted" 30
keys e C-u
type_text "x1^2 y1"
keys Enter
wait_for "image of x1 applied"
keys N
wait_for "Comment (the lines starting with # at the top)"
wait_for "Heisenberg doubling, as first written."
wait_for "the first note"
wait_for "Written before your changes"
keys e C-u
type_text "Heisenberg tripling."
keys Enter
wait_for "Heisenberg tripling."
keys n
type_text "a second note"
keys Enter
wait_for "a second note"
keys j d                                        # the first note goes
wait_gone "the first note"
keys Escape
wait_for "Images of the generators"
keys s
wait_for "saved noted.nilstep"
grep -qx '# Heisenberg tripling.' "$tmp/noted.nilstep" || fail "the edited comment was not saved"
grep -qx 'note    a second note' "$tmp/noted.nilstep" || fail "the new note was not saved"
grep -q 'the first note' "$tmp/noted.nilstep" && fail "the deleted note was saved"
"$NILSTEP_BINARY" report "$tmp/noted.nilstep" >/dev/null || fail "the saved session does not load"
keys q
wait_for "EXIT=0"

finish
