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

finish
