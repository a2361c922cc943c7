#!/usr/bin/env bash
# test_scan.sh — `nilstep scan`: every member equal to `nilstep report` on
# the same map, threads and shards that do not change the output, resuming
# a killed scan, counts of GL(2,Z) from an independent brute force, the GNU
# parallel recipe of scripts/, the summary, and bad input with located
# messages.  Exit 77 (skipped) when NILSTEP_BINARY is unset.
set -u

if [[ -z ${NILSTEP_BINARY:-} ]]; then
    echo "NILSTEP_BINARY is not set: skipped"
    exit 77
fi
NS=$NILSTEP_BINARY
SRC=${NILSTEP_SOURCE_DIR:-$(cd "$(dirname "$0")/.." && pwd)}
PY=/usr/bin/python3
tmp=$(mktemp -d "${TMPDIR:-/tmp}/nilstep-scan.XXXXXX")
bg=
trap '[[ -n $bg ]] && kill -9 $bg 2>/dev/null; rm -rf "$tmp"' EXIT

failures=0
checks=0
fail() {
    echo "FAIL: $*"
    failures=$((failures + 1))
}
ok() {
    checks=$((checks + 1))
}
# same FILE1 FILE2 WHAT: byte-for-byte equality
same() {
    if cmp -s "$1" "$2"; then ok; else fail "$3 ($(diff "$1" "$2" | head -3))"; fi
}

F2='free(2)'
F2FAM='a -> a^p b^q, b -> a^r b^s'
F2R=(--range p=-1..1 --range q=-1..1 --range r=-1..1 --range s=-1..1)
# heisenberg(1): [x1,y1] = z with z central.  z -> z^t is well defined
# exactly when t is the determinant ps - qr of the action on x1, y1.
H='heisenberg(1)'
HFAM='x1 -> x1^p y1^q, y1 -> x1^r y1^s, z -> z^t'
HR=(--range p=-1..1 --range q=-1..1 --range r=0..1 --range s=-1..1 --range t=-1..1)

# ---- 1. scan == report, member by member (all keys) ----------------------
"$NS" scan --group "$F2" --class 4 --family "$F2FAM" "${F2R[@]}" --jobs 1 \
    >"$tmp/f2.jsonl" 2>"$tmp/err" || fail "free(2) scan: $(cat "$tmp/err")"
if out=$("$PY" "$SRC/tests/scan_compare.py" "$NS" "$F2" 4 "$tmp/f2.jsonl"); then
    ok
    echo "free(2) class 4: $out"
else
    fail "free(2) class 4 scan differs from report: $out"
fi
[[ $(wc -l <"$tmp/f2.jsonl") == 81 ]] && ok || fail "free(2): expected 3^4 = 81 members"

"$NS" scan --group "$H" --class 2 --family "$HFAM" "${HR[@]}" --jobs 1 \
    >"$tmp/h.jsonl" 2>"$tmp/err" || fail "heisenberg scan: $(cat "$tmp/err")"
if out=$("$PY" "$SRC/tests/scan_compare.py" "$NS" "$H" 2 "$tmp/h.jsonl"); then
    ok
    echo "heisenberg(1) class 2: $out"
else
    fail "heisenberg scan differs from report: $out"
fi
# valid members counted independently: t = ps - qr (the commutator identity
# [x^p y^q, x^r y^s] = z^(ps - qr) in the Heisenberg group)
want=$("$PY" -c '
import itertools
print(sum(1 for p, q, r, s, t in itertools.product(range(-1, 2), range(-1, 2), range(0, 2),
      range(-1, 2), range(-1, 2)) if t == p * s - q * r))')
got=$(grep -c '"valid": true' "$tmp/h.jsonl")
[[ $got == "$want" ]] && ok || fail "heisenberg: $got valid members, brute force says $want"
grep -q '"valid": false, "failing_relator"' "$tmp/h.jsonl" && ok ||
    fail "heisenberg: members that fail a relator are missing"

# ---- 2. threads: --jobs 2 and 3 write exactly what --jobs 1 writes --------
for j in 2 3; do
    "$NS" scan --group "$F2" --class 4 --family "$F2FAM" "${F2R[@]}" --jobs $j \
        >"$tmp/f2-j$j.jsonl" 2>/dev/null
    same "$tmp/f2.jsonl" "$tmp/f2-j$j.jsonl" "free(2) --jobs $j differs from --jobs 1"
    "$NS" scan --group "$H" --class 2 --family "$HFAM" "${HR[@]}" --jobs $j \
        >"$tmp/h-j$j.jsonl" 2>/dev/null
    same "$tmp/h.jsonl" "$tmp/h-j$j.jsonl" "heisenberg --jobs $j differs from --jobs 1"
done

# ---- 3. maps from standard input equal the family members ----------------
"$PY" -c '
import json, sys
for line in open(sys.argv[1]):
    m = json.loads(line)
    print(json.dumps({"id": "m%d" % m["index"], "map": m["map"]}))' "$tmp/h.jsonl" >"$tmp/h-in.jsonl"
"$NS" scan --group "$H" --class 2 --jobs 2 <"$tmp/h-in.jsonl" >"$tmp/h-stdin.jsonl" 2>/dev/null ||
    fail "scan from stdin failed"
"$PY" -c '
import json, sys
a = [json.loads(l) for l in open(sys.argv[1])]
b = [json.loads(l) for l in open(sys.argv[2])]
assert len(a) == len(b), (len(a), len(b))
for i, (x, y) in enumerate(zip(a, b), 1):
    assert y["id"] == "m%d" % x["index"] and y["line"] == i, (x, y)
    for k in ("index", "params"): x.pop(k)
    for k in ("id", "line"): y.pop(k)
    assert x == y, (x, y)' "$tmp/h.jsonl" "$tmp/h-stdin.jsonl" && ok ||
    fail "maps from stdin differ from the same family members"

# ---- 4. GL(2,Z) on Z^2 = <a, b | [a,b]> with entries in [-2, 2] ----------
# The image of a is the first column (p, r), of b the second (q, s).
GL=(--group '<a, b | [a,b]>' --class 1 --family 'a -> a^p b^r, b -> a^q b^s'
    --range p=-2..2 --range q=-2..2 --range r=-2..2 --range s=-2..2)
# independent counts by brute force over the 625 matrices: invertible over Z
# means det = +-1; hyperbolic (no eigenvalue of modulus 1) by the
# classification of 2x2 integer matrices by trace and determinant:
# det = 1 and |trace| > 2, or det = -1 and trace != 0
read -r want_gl want_hyp < <("$PY" -c '
import itertools
gl = hyp = 0
for p, q, r, s in itertools.product(range(-2, 3), repeat=4):
    d, t = p * s - q * r, p + s
    if d in (1, -1):
        gl += 1
        hyp += (d == 1 and abs(t) > 2) or (d == -1 and t != 0)
print(gl, hyp)')
got=$("$NS" scan "${GL[@]}" --only automorphism 2>/dev/null | wc -l)
[[ $got == "$want_gl" ]] && ok || fail "GL(2,Z) in [-2,2]: scan keeps $got, brute force $want_gl"
got=$("$NS" scan "${GL[@]}" --only automorphism --only hyperbolic 2>/dev/null | wc -l)
[[ $got == "$want_hyp" ]] && ok ||
    fail "hyperbolic GL(2,Z) in [-2,2]: scan keeps $got, trace/det classification $want_hyp"
echo "GL(2,Z) entries in [-2,2]: $want_gl matrices, $want_hyp hyperbolic"
# growth window: the growth rate of a map of Z^2 is its spectral radius;
# brute force with the eigenvalues of each matrix (tolerance far below the
# gaps between distinct radii of such small matrices)
want=$("$PY" -c '
import itertools, cmath
n = 0
for p, q, r, s in itertools.product(range(-2, 3), repeat=4):
    t, d = p + s, p * s - q * r
    disc = cmath.sqrt(t * t - 4 * d)
    rho = max(abs((t + disc) / 2), abs((t - disc) / 2))
    n += 2 - 1e-9 <= rho <= 3 + 1e-9
print(n)')
got=$("$NS" scan "${GL[@]}" --growth-between 2 3 2>/dev/null | wc -l)
[[ $got == "$want" ]] && ok || fail "--growth-between 2 3: $got members, brute force $want"

# ---- 5. shards: the union of 1/4 .. 4/4 is the whole scan -----------------
for k in 1 2 3 4; do
    "$NS" scan "${GL[@]}" --jobs 1 --shard $k/4 --output "$tmp/gl-$k.jsonl" 2>/dev/null
done
"$NS" scan "${GL[@]}" --jobs 2 >"$tmp/gl.jsonl" 2>/dev/null
sort "$tmp"/gl-[1-4].jsonl >"$tmp/gl-union"
sort "$tmp/gl.jsonl" >"$tmp/gl-sorted"
same "$tmp/gl-sorted" "$tmp/gl-union" "union of --shard k/4 differs from the whole scan"
"$SRC/scripts/scan-merge.sh" "$tmp/gl-merged" "$tmp"/gl-[1-4].jsonl
same "$tmp/gl.jsonl" "$tmp/gl-merged" "scripts/scan-merge.sh does not restore member order"
# sampled members are a function of (seed, member): shards agree too
for k in 1 2 3; do
    "$NS" scan "${GL[@]}" --sample 40 --seed 99 --shard $k/3 2>/dev/null
done | sort >"$tmp/sample-union"
"$NS" scan "${GL[@]}" --sample 40 --seed 99 2>/dev/null | sort >"$tmp/sample"
same "$tmp/sample" "$tmp/sample-union" "sampled shards differ from the sampled scan"
[[ $(wc -l <"$tmp/sample") == 40 ]] && ok || fail "--sample 40 did not give 40 members"

# ---- 6. kill half way, resume: equal to an unkilled run -------------------
BIG=(--group "$F2" --class 4 --family "$F2FAM" --range p=-3..3 --range q=-3..3
     --range r=-3..3 --range s=-3..3)
"$NS" scan "${BIG[@]}" --jobs 1 --output "$tmp/whole.jsonl" 2>/dev/null
"$NS" scan "${BIG[@]}" --jobs 2 --output "$tmp/killed.jsonl" 2>/dev/null &
bg=$!
for _ in $(seq 1 1000); do
    [[ -f $tmp/killed.jsonl ]] && (( $(wc -l <"$tmp/killed.jsonl") >= 300 )) && break
    sleep 0.01
done
kill -9 $bg 2>/dev/null
wait $bg 2>/dev/null
bg=
n_killed=$(wc -l <"$tmp/killed.jsonl")
# a write cut short leaves half a line: resume must drop it
printf '{"index": 99999, "params": {"p"' >>"$tmp/killed.jsonl"
if (( n_killed >= 2401 )); then
    fail "the scan finished before it could be killed; resume is not tested"
fi
"$NS" scan "${BIG[@]}" --jobs 2 --resume "$tmp/killed.jsonl" 2>"$tmp/err"
same "$tmp/whole.jsonl" "$tmp/killed.jsonl" "killed after $n_killed lines and resumed"
"$NS" scan "${BIG[@]}" --jobs 2 --resume "$tmp/killed.jsonl" 2>"$tmp/err"
grep -q ' 0 tried' "$tmp/err" && ok || fail "resuming a finished scan redid members: $(cat "$tmp/err")"

# SIGTERM (what a batch system sends first) stops cleanly: exit 3, whole
# lines, and resuming gives the unkilled output
# (one thread: slow enough that the signal comes before the end)
"$NS" scan "${BIG[@]}" --jobs 1 --output "$tmp/term.jsonl" 2>"$tmp/term.err" &
bg=$!
for _ in $(seq 1 1000); do
    [[ -f $tmp/term.jsonl ]] && (( $(wc -l <"$tmp/term.jsonl") >= 100 )) && break
    sleep 0.01
done
kill -TERM $bg
wait $bg
rc=$?
bg=
[[ $rc == 3 ]] && ok || fail "SIGTERM: exit status $rc, expected 3"
grep -q "interrupted; every line written is whole, and --resume $tmp/term.jsonl goes on" \
    "$tmp/term.err" && ok || fail "SIGTERM message: $(cat "$tmp/term.err")"
"$NS" scan "${BIG[@]}" --jobs 1 --resume "$tmp/term.jsonl" 2>/dev/null
same "$tmp/whole.jsonl" "$tmp/term.jsonl" "stopped by SIGTERM and resumed"
# resuming maps from standard input skips the ids already written
head -n 40 "$tmp/h-in.jsonl" | "$NS" scan --group "$H" --class 2 --output "$tmp/h-res.jsonl" 2>/dev/null
"$NS" scan --group "$H" --class 2 --resume "$tmp/h-res.jsonl" <"$tmp/h-in.jsonl" 2>"$tmp/err"
same "$tmp/h-stdin.jsonl" "$tmp/h-res.jsonl" "stdin scan resumed after 40 lines"
grep -q "^nilstep scan: $(( $(wc -l <"$tmp/h-in.jsonl") - 40 )) tried" "$tmp/err" && ok ||
    fail "stdin resume redid members: $(cat "$tmp/err")"
# a result file of another group is not resumed
"$NS" scan --group "$F2" --class 4 --resume "$tmp/h-res.jsonl" </dev/null >/dev/null 2>"$tmp/err"
rc=$?
[[ $rc == 2 ]] && grep -q "h-res.jsonl:1:1: error: a result of another group" "$tmp/err" && ok ||
    fail "resuming another group's results: exit $rc, $(cat "$tmp/err")"

# ---- 7. GNU parallel: the recipe of scripts/scan-parallel.sh -------------
if command -v parallel >/dev/null; then
    if NILSTEP=$NS "$SRC/scripts/scan-parallel.sh" 4 "$tmp/par.jsonl" -- "${GL[@]}" \
        >"$tmp/par.log" 2>&1; then
        same "$tmp/gl.jsonl" "$tmp/par.jsonl" "GNU parallel recipe differs from one process"
    else
        fail "scripts/scan-parallel.sh failed: $(cat "$tmp/par.log")"
    fi
else
    fail "GNU parallel is not installed (Debian package parallel; .ci/install-deps)"
fi

# ---- 8. --summary ---------------------------------------------------------
"$NS" scan --summary "$tmp/gl.jsonl" >"$tmp/sum" 2>&1 || fail "--summary failed"
grep -q "^members  *625$" "$tmp/sum" && ok || fail "--summary members: $(cat "$tmp/sum")"
grep -q "^automorphism  *$want_gl$" "$tmp/sum" && ok || fail "--summary automorphisms"
# the distribution adds up to the valid members
tot=$(awk '/^growth rate/ {on = 1; next} on && NF == 2 {s += $2} END {print s}' "$tmp/sum")
[[ $tot == 625 ]] && ok || fail "--summary growth distribution sums to $tot, not 625"

# ---- 9. bad input: located messages, nothing half done --------------------
# expect STATUS PATTERN ARGS...: exit status and a message on stderr
expect() {
    local want=$1 pat=$2
    shift 2
    "$NS" "$@" >"$tmp/out" 2>"$tmp/err" </dev/null
    local rc=$?
    if [[ $rc != "$want" ]]; then
        fail "scan $*: exit $rc, expected $want ($(cat "$tmp/err"))"
    elif ! grep -qF -- "$pat" "$tmp/err"; then
        fail "scan $*: message lacks '$pat': $(cat "$tmp/err")"
    else
        ok
    fi
}
# the parameter t has no range: column of 't' in the template (prefix + 1)
prefix='a -> a^p b^'
tpl="${prefix}t, b -> b"
col=$(( ${#prefix} + 1 ))
expect 2 "--family:1:$col: error: parameter 't' has no range" \
    scan --group "$F2" --class 2 --family "$tpl" --range p=0..1
expect 2 "--range p=3..1:1:3: error: empty range" \
    scan --group "$F2" --class 2 --family 'a -> a^p, b -> b' --range p=3..1
expect 2 "--family:1:6: error: unknown generator 'c'" \
    scan --group "$F2" --class 2 --family 'a -> c^p, b -> b' --range p=0..1
# 2001^3 > 10^9 members
expect 3 "more than 10^9" \
    scan --group "$F2" --class 2 --family 'a -> a^p b^q, b -> a^r' \
    --range p=-1000..1000 --range q=-1000..1000 --range r=-1000..1000
expect 2 "does not occur" \
    scan --group "$F2" --class 2 --family 'a -> a^p, b -> b' --range p=0..1 --range q=0..1
expect 2 "unknown property 'round'" \
    scan --group "$F2" --class 2 --family 'a -> a^p, b -> b' --range p=0..1 --only round
expect 2 "--shard takes K/N" \
    scan --group "$F2" --class 2 --family 'a -> a^p, b -> b' --range p=0..1 --shard 5/4
# a malformed JSON line is named by its line number; the rest goes on and
# the exit status says that something failed
printf '%s\n' '{"id": 1, "map": "a -> a b, b -> b"}' '{"id": 2, "map": "a -> a' \
    '{"id": 3, "map": "a -> a^2, b -> c"}' '{"id": 4, "map": "a -> b, b -> a"}' >"$tmp/bad.jsonl"
"$NS" scan --group "$F2" --class 2 <"$tmp/bad.jsonl" >"$tmp/out" 2>"$tmp/err"
rc=$?
[[ $rc == 1 ]] && ok || fail "malformed stdin: exit $rc, expected 1"
grep -q '^<stdin>:2: error: column ' "$tmp/err" && ok || fail "line 2 not named: $(cat "$tmp/err")"
grep -q "^<stdin>:3: error: in \"map\" at column 16: unknown generator 'c'" "$tmp/err" && ok ||
    fail "line 3 not located: $(cat "$tmp/err")"
[[ $("$PY" -c 'import json,sys; print(" ".join(str(json.loads(l)["id"]) for l in open(sys.argv[1])))' \
    "$tmp/out") == "1 4" ]] && ok || fail "the good lines around bad ones were not all analysed"

# ---- 10. the worked search of README "Scans": hyperbolic automorphisms of
# the free nilpotent group of rank 3 and class 2 with entries in [-1, 1] ---
# Independent count: layer 2 is the exterior square of layer 1, with
# eigenvalues l_i l_j = det / l_k; so for det = +-1 the map is hyperbolic
# exactly when layer 1 is, and a monic integer cubic with constant term +-1
# has a root of modulus 1 only if it has the root 1 or -1 (a conjugate pair
# on the circle forces the third root to be +-1): det(I - M) != 0 and
# det(I + M) != 0.
want=$("$PY" -c '
import itertools
def det(m):
    (a, b, c), (d, e, f), (g, h, i) = m
    return a * (e * i - f * h) - b * (d * i - f * g) + c * (d * h - e * g)
n = 0
for v in itertools.product(range(-1, 2), repeat=9):
    m = [v[0:3], v[3:6], v[6:9]]
    if det(m) in (1, -1):
        e = [[int(i == j) for j in range(3)] for i in range(3)]
        n += det([[e[i][j] - m[i][j] for j in range(3)] for i in range(3)]) != 0 and \
             det([[e[i][j] + m[i][j] for j in range(3)] for i in range(3)]) != 0
print(n)')
readme=$(sed -n 's/^.*worked search found \([0-9]*\) .*$/\1/p' "$SRC/README.md")
got=$("$NS" scan --group 'free(3)' --class 2 \
    --family 'a -> a^p1 b^p2 c^p3, b -> a^q1 b^q2 c^q3, c -> a^r1 b^r2 c^r3' \
    --range p1=-1..1 --range p2=-1..1 --range p3=-1..1 --range q1=-1..1 --range q2=-1..1 \
    --range q3=-1..1 --range r1=-1..1 --range r2=-1..1 --range r3=-1..1 \
    --only automorphism --only hyperbolic --jobs 2 2>/dev/null | wc -l)
[[ $got == "$want" ]] && ok || fail "hyperbolic automorphisms of free(3) class 2: $got, brute force $want"
[[ $readme == "$want" ]] && ok || fail "README's worked search says '$readme', brute force $want"

# ---- 11. bash completion, installed beside the man page -------------------
(
    source "$SRC/completions/nilstep.bash"
    comp() { COMP_WORDS=("$@"); COMP_CWORD=$(( $# - 1 )); COMPREPLY=(); _nilstep; echo "${COMPREPLY[*]}"; }
    mkdir -p "$tmp/empty" && cd "$tmp/empty" || exit 9 # no file names to offer
    [[ $(comp nilstep sc) == scan ]] || exit 1
    [[ $(comp nilstep scan --only hy) == hyperbolic ]] || exit 2
    [[ $(comp nilstep scan --only finite) == finite-reidemeister ]] || exit 3
    [[ $(comp nilstep scan --grow) == --growth-between ]] || exit 4
    [[ $(comp nilstep report --group heis) == "heisenberg(" ]] || exit 5
    [[ $(comp nilstep scan --shard sl) == slurm ]] || exit 6
    [[ $(comp nilstep scan --res) == --resume ]] || exit 7
    cd "$SRC/scenarios" && [[ $(comp nilstep scan unip) == unipotent-shear.nilstep ]] || exit 8
    cd "$tmp/empty" || exit 9
    [[ $(comp nilstep it) == iterate ]] || exit 10
    [[ $(comp nilstep iterate --format '') == "text json csv" ]] || exit 11
    [[ $(comp nilstep report --format '') == "text json latex" ]] || exit 12
    [[ $(comp nilstep iterate --group heis) == "heisenberg(" ]] || exit 13
    # every option the iterate lines of `nilstep iterate --help` name (its
    # usage and its section) and --help, and no other, is offered after
    # `iterate --`
    want=$({ "$NS" iterate --help | awk '/^ +nilstep iterate/ { u = 1 } /^ +nilstep --help/ { u = 0 } u
        /^  iterate / { s = 1; next } s && (/^  [^ ]/ || /^$/) { s = 0 } s'; echo --help; } |
        grep -o -- '--[a-z][a-z-]*' | sort -u | tr '\n' ' ')
    got=$(comp nilstep iterate -- | tr ' ' '\n' | sort -u | tr '\n' ' ')
    [[ $want == *--steps*--every* || $want == *--every*--steps* ]] || exit 14
    [[ $got == "$want" ]] || { echo "iterate completion: '$got', help: '$want'" >&2; exit 15; }
) && ok || fail "bash completion: case $? gives the wrong words"
if [[ -n ${NILSTEP_BUILD_DIR:-} ]]; then
    cmake --install "$NILSTEP_BUILD_DIR" --prefix "$tmp/inst" >/dev/null 2>&1
    [[ -f $tmp/inst/share/bash-completion/completions/nilstep &&
       -f $tmp/inst/share/man/man1/nilstep.1 ]] && ok ||
        fail "cmake --install does not put the completion beside the man page"
    grep -q '^\.SH SCANS' "$tmp/inst/share/man/man1/nilstep.1" && ok || fail "the man page lacks scan"
fi

echo "$checks checks passed, $failures failed"
(( failures == 0 ))
