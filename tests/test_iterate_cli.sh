#!/usr/bin/env bash
# test_iterate_cli.sh — `nilstep iterate`: the README's example
# (a -> a^2, b -> b^3 on the Heisenberg group sends [a,b] to [a,b]^6, so at
# n = 300 the weight-2 coordinate is +-6^300, computed here by python's
# integers), the JSON shape, CSV rows, --every with a million steps
# (a -> a b, b -> b gives alpha^n(a) = a b^n, by induction by hand), the
# session's iterate key as defaults, and bad input: located messages and
# exit 2; a map that is not well defined exits 1 with the failing relators
# and prints no iterates.  Exit 77 (skipped) when NILSTEP_BINARY is unset.
set -u

if [[ -z ${NILSTEP_BINARY:-} ]]; then
    echo "NILSTEP_BINARY is not set: skipped"
    exit 77
fi
NS=$NILSTEP_BINARY
PY=/usr/bin/python3
tmp=$(mktemp -d "${TMPDIR:-/tmp}/nilstep-iter.XXXXXX")
trap 'rm -rf "$tmp"' EXIT

failures=0
fail() {
    echo "FAIL: $*"
    failures=$((failures + 1))
}

run() {
    "$NS" "$@" >"$tmp/out" 2>"$tmp/err"
    rc=$?
}

HEIS='<a, b | [a,b,a], [a,b,b]>'

# ---- the "done when" example, exactly as the README gives it --------------
run iterate --format json --steps 300 --element '[a,b]' --group "$HEIS" --class 2 \
    --map 'a -> a^2, b -> b^3'
[[ $rc == 0 ]] || fail "README example: exit $rc: $(cat "$tmp/err")"
$PY - "$tmp/out" <<'EOF' || fail "README example: JSON checks"
import json, sys
d = json.load(open(sys.argv[1]))
last = d["steps"][-1]
assert last["n"] == 300, last["n"]
assert d["steps"] == d["elements"][0]["steps"]
assert [s["n"] for s in d["steps"]] == list(range(301))
w2 = [l for l in last["layers"] if l["weight"] == 2][0]
assert any(abs(int(c)) == 6 ** 300 for c in w2["coordinates"]), w2
assert w2["digits"] == len(str(6 ** 300))
assert isinstance(d["growth_rate"], str) and d["growth_rate"].startswith("3")
for s in d["steps"]:
    for l in s["layers"]:
        assert all(isinstance(c, str) for c in l["coordinates"] + l["torsion"])
# root sqrt(6) (norm 6^(n/2) on [a,b]^(6^n))
assert last["norm_root"].startswith("2.449489742783178"), last["norm_root"]
assert d["elements"][0]["element"] == "[a,b]"
# exact word lengths while the ball reaches: |[a,b]| = 4
assert d["steps"][0]["word_length"] == 4
EOF

# ---- every generator, CSV rows -------------------------------------------
run iterate --format csv --steps 10 --every 3 --ball-memory 1 --group "$HEIS" --class 2 \
    --map 'a -> a^2 b, b -> a b'
[[ $rc == 0 ]] || fail "CSV: exit $rc"
# header + 2 generators x (n = 0, 3, 6, 9, 10)
lines=$(wc -l <"$tmp/out")
[[ $lines == 11 ]] || fail "CSV: $lines lines, expected 11"
head -1 "$tmp/out" | grep -q '^element,n,word_length,norm,norm_root,growth_rate,digits_1,digits_2,normal_word$' ||
    fail "CSV header: $(head -1 "$tmp/out")"
grep -q '^"b",10,' "$tmp/out" || fail "CSV: no row for b at n = 10"

# ---- a million steps printed every 250000 ----------------------------------
run iterate --format json --steps 1000000 --every 250000 --ball-memory 0 --element a \
    --group "$HEIS" --class 2 --map 'a -> a b, b -> b'
[[ $rc == 0 ]] || fail "--every: exit $rc: $(cat "$tmp/err")"
$PY - "$tmp/out" <<'EOF' || fail "--every: alpha^n(a) = a b^n"
import json, sys
d = json.load(open(sys.argv[1]))
assert [s["n"] for s in d["steps"]] == [0, 250000, 500000, 750000, 1000000]
for s in d["steps"]:
    assert s["layers"][0]["coordinates"] == ["1", str(s["n"])], s["layers"][0]
    assert s["layers"][1]["coordinates"] == ["0"]
EOF

# ---- the session's iterate key gives the defaults --------------------------
cat >"$tmp/s.nilstep" <<'EOF'
nilstep session 1
group   <a, b | [a,b,a], [a,b,b]>
class   2
map     a -> a^2, b -> b^3
iterate steps 5 word a b
EOF
run iterate --format json --ball-memory 1 "$tmp/s.nilstep"
[[ $rc == 0 ]] || fail "session defaults: exit $rc: $(cat "$tmp/err")"
$PY - "$tmp/out" <<'EOF' || fail "session defaults"
import json, sys
d = json.load(open(sys.argv[1]))
assert [e["element"] for e in d["elements"]] == ["a b"]
assert d["steps"][-1]["n"] == 5
# alpha^5(a b) = a^32 b^243 (a and b images commute up to [b,a] terms; layer 1 is exact)
assert d["steps"][-1]["layers"][0]["coordinates"] == ["32", "243"]
EOF
# options override the session
run iterate --format json --ball-memory 1 --steps 2 --element b "$tmp/s.nilstep"
$PY -c 'import json,sys; d=json.load(open(sys.argv[1])); assert d["steps"][-1]["n"] == 2 and d["elements"][0]["element"] == "b"' "$tmp/out" ||
    fail "options should override the session"

# ---- bad input ---------------------------------------------------------------
expect_exit2() {
    local what=$1 pattern=$2
    shift 2
    run "$@"
    [[ $rc == 2 ]] || fail "$what: exit $rc, expected 2"
    grep -q -- "$pattern" "$tmp/err" || fail "$what: stderr '$(cat "$tmp/err")' lacks '$pattern'"
    [[ ! -s $tmp/out ]] || fail "$what: printed iterates"
}
expect_exit2 "unknown generator" '^--element:1:3: error: unknown generator' \
    iterate --element 'a c' --group "$HEIS" --class 2 --map 'a -> a, b -> b'
expect_exit2 "negative steps" '^nilstep iterate: --steps: error: .*-3' \
    iterate --steps -3 --group "$HEIS" --class 2 --map 'a -> a, b -> b'
expect_exit2 "absurd steps" '^nilstep iterate: --steps: error: .*99999999999999999999' \
    iterate --steps 99999999999999999999 --group "$HEIS" --class 2 --map 'a -> a, b -> b'
expect_exit2 "zero every" '^nilstep iterate: --every: error:' \
    iterate --every 0 --group "$HEIS" --class 2 --map 'a -> a, b -> b'
expect_exit2 "steps not a number" '^nilstep iterate: --steps: error: .*ten' \
    iterate --steps ten --group "$HEIS" --class 2 --map 'a -> a, b -> b'
expect_exit2 "bad format" 'text, json or csv' \
    iterate --format xml --group "$HEIS" --class 2 --map 'a -> a, b -> b'
expect_exit2 "no map" 'needs --map' iterate --group "$HEIS" --class 2

run iterate --group '<a, b | a^2>' --class 2 --map 'a -> b, b -> a'
[[ $rc == 1 ]] || fail "invalid map: exit $rc, expected 1"
grep -q 'a^2  ->  b^2' "$tmp/err" || fail "invalid map: failing relator not listed: $(cat "$tmp/err")"
[[ ! -s $tmp/out ]] || fail "invalid map: printed iterates"

# ---- --digits N: the text format's decimals (issue 9, item 16) ----------
# a -> a^2 b, b -> a b on <a, b> class 2: alpha(a) = a^2 b with layer-1
# coordinates (2, 1), so its norm is sqrt(5) = 2.2360679774997896964...
# (known value); the growth rate is (3+sqrt5)/2 = 2.6180339887498948...
G2=(--group '<a, b>' --class 2 --map 'a -> a^2 b, b -> a b' --element a --steps 1)
run iterate "${G2[@]}"
grep -q '^growth rate 2.618033989$' "$tmp/out" &&
    grep -q 'norm 2.236067977  root 2.236067977 ' "$tmp/out" ||
    fail "iterate text does not default to 10 digits: $(cat "$tmp/out")"
run iterate --digits 4 "${G2[@]}"
grep -q '^growth rate 2.618$' "$tmp/out" && grep -q 'norm 2.236  root 2.236 ' "$tmp/out" ||
    fail "iterate --digits 4: $(cat "$tmp/out")"
run iterate --digits 4 --format json "${G2[@]}"
grep -qF '"growth_rate": "2.61803398874989484820458683437"' "$tmp/out" ||
    fail "iterate JSON lost digits under --digits"
run iterate --digits 31 "${G2[@]}"
[[ $rc == 2 ]] && grep -q -- '--digits: error: expected a whole number from 1 to 30' "$tmp/err" ||
    fail "iterate --digits 31 is not refused: exit $rc, $(cat "$tmp/err")"

if ((failures)); then
    echo "$failures failure(s)"
    exit 1
fi
echo "all iterate CLI checks passed"
