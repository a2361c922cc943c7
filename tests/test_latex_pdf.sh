#!/usr/bin/env bash
# Every scenario's LaTeX report compiles with pdflatex (issue 9, item 16):
# the report is a fragment for a paper that loads amsmath and amssymb, so
# each is \input into a minimal article and built with -halt-on-error; any
# LaTeX error fails the test.  Also a few presentations that stress the
# math notation (names with digits, conjugates, powers of products, a long
# presentation that must break) and --digits.
#
# pdflatex comes from Debian's texlive-latex-base (.ci/install-deps).
# Skipped (exit 77) without NILSTEP_BINARY (run through ctest) or pdflatex.
set -u

if [[ -z "${NILSTEP_BINARY:-}" ]]; then
    echo "skipped: NILSTEP_BINARY is not set (run through ctest)"
    exit 77
fi
if ! command -v pdflatex >/dev/null 2>&1; then
    echo "skipped: pdflatex is not installed (Debian package texlive-latex-base)"
    exit 77
fi
src=${NILSTEP_SOURCE_DIR:-$(cd "$(dirname "$0")/.." && pwd)}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
failures=0
checks=0

# compile NAME: builds $tmp/NAME.tex (a report) inside a minimal document.
compile() {
    local name=$1
    checks=$((checks + 1))
    cat >"$tmp/doc-$name.tex" <<EOF
\\documentclass{article}
\\usepackage{amsmath,amssymb}
\\begin{document}
\\input{$name}
\\end{document}
EOF
    if ! (cd "$tmp" && pdflatex -interaction=nonstopmode -halt-on-error "doc-$name.tex" \
        >"$tmp/log-$name.txt" 2>&1 </dev/null); then
        echo "FAIL: the LaTeX report of $name does not compile:"
        grep -A3 '^!' "$tmp/log-$name.txt" | head -20
        failures=$((failures + 1))
    elif [[ ! -s "$tmp/doc-$name.pdf" ]]; then
        echo "FAIL: no PDF for $name"
        failures=$((failures + 1))
    fi
}

for f in "$src"/scenarios/*.nilstep; do
    name=$(basename "$f" .nilstep)
    "$NILSTEP_BINARY" report --format latex "$f" >"$tmp/$name.tex" 2>"$tmp/$name.err"
    rc=$?
    if ((rc > 1)); then
        echo "FAIL: report --format latex $name exited $rc: $(cat "$tmp/$name.err")"
        failures=$((failures + 1))
        continue
    fi
    compile "$name"
done

# report NAME ARGS...: a report from the command line, then compile it.
report() {
    local name=$1
    shift
    "$NILSTEP_BINARY" report --format latex "$@" >"$tmp/$name.tex" 2>"$tmp/$name.err"
    if (($? > 1)); then
        echo "FAIL: report $name: $(cat "$tmp/$name.err")"
        failures=$((failures + 1))
        return
    fi
    compile "$name"
}

report names --group '<x1, y_2, e9_10, ab | [x1, y_2]^ab = e9_10, (x1 ab)^-3>' --class 2 \
    --map 'x1 -> x1, y_2 -> y_2, e9_10 -> e9_10, ab -> ab'
report surface --group 'surface(3)' --class 2 --digits 4 \
    --map 'a1 -> a1 b1, b1 -> b1, a2 -> a2, b2 -> b2, a3 -> a3, b3 -> b3'
report heisenberg --group 'heisenberg(2)' --class 2 --digits 30 \
    --map 'x1 -> x1^2 y1, y1 -> x1 y1, x2 -> x2, y2 -> y2, z -> z'
report failing --group '<a, b, c | [a,b] = c, [a,c], [b,c]>' --class 2 \
    --map 'a -> a^2, b -> b, c -> c'

# contains NAME TEXT WHAT: the report NAME has TEXT (fixed string).
contains() {
    checks=$((checks + 1))
    if ! grep -qF -- "$2" "$tmp/$1.tex"; then
        echo "FAIL: $3; the report $1 reads:"
        cat "$tmp/$1.tex"
        failures=$((failures + 1))
    fi
}

# The presentation and the map in math notation (written by hand from the
# input): names split into a letter and a subscript, a conjugate and a power
# of a product as superscripts, the relation u = v as written.
contains names 'Group: $G = \langle x_{1},\allowbreak y_{2},\allowbreak e_{9,10},\allowbreak \mathit{ab} \mid [x_{1}, y_{2}]^{\mathit{ab}} = e_{9,10},\allowbreak (x_{1} \mathit{ab})^{-3} \rangle$' \
    "the presentation is not in math notation"
contains failing 'Map: $a \mapsto a^{2},\allowbreak b \mapsto b,\allowbreak c \mapsto c$' \
    "the map is not in math notation"
# a -> a^2 b, b -> a b: M = [[2,1],[1,1]], x^2 - 3x + 1, rho = (3+sqrt5)/2
# = 2.6180339887498948... (by hand), shown with the default 10 digits
report golden --group '<a, b>' --class 2 --map 'a -> a^2 b, b -> a b' --inverse
contains golden '$\frac{3+\sqrt{5}}{2} \approx 2.618033989$' \
    "the radius of degree 2 is not in closed form beside the decimal"
for name in names surface heisenberg failing golden; do
    checks=$((checks + 1))
    if grep -q 'texttt' "$tmp/$name.tex"; then
        echo "FAIL: $name still has typewriter text: $(grep texttt "$tmp/$name.tex")"
        failures=$((failures + 1))
    fi
done

echo "# $((checks - failures)) of $checks LaTeX reports compile"
((failures == 0))
