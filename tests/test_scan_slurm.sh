#!/usr/bin/env bash
# test_scan_slurm.sh — the Slurm recipe of README "Scans on a cluster", on a
# real scheduler: starts a one-node cluster on this machine (munged,
# slurmctld, slurmd with tests/slurm/slurm.conf.in), submits
# scripts/scan-slurm.sbatch as a 4-task job array, waits for it, merges the
# parts with scripts/scan-merge.sh and compares the result with the
# single-process scan, byte for byte.
#
# Needs root and the Debian packages slurm-wlm and munge (.ci/install-deps).
# When they are missing or a daemon does not come up, the test FAILS and
# prints the daemons' logs: it never passes by skipping.
set -u

if [[ -z ${NILSTEP_BINARY:-} ]]; then
    echo "NILSTEP_BINARY is not set: skipped"
    exit 77
fi
NS=$NILSTEP_BINARY
SRC=${NILSTEP_SOURCE_DIR:-$(cd "$(dirname "$0")/.." && pwd)}
PY=/usr/bin/python3

die() {
    echo "FAIL: $*"
    exit 1
}
for p in munged munge slurmctld slurmd sbatch sinfo; do
    command -v $p >/dev/null || die "$p not found: install the Debian packages slurm-wlm and munge (.ci/install-deps)"
done
(( EUID == 0 )) || die "the one-node cluster needs root (slurmd starts jobs as their user)"
id munge >/dev/null 2>&1 || die "no user 'munge' (Debian package munge)"

D=$(mktemp -d "${TMPDIR:-/tmp}/nilstep-slurm.XXXXXX")
chmod 755 "$D"
show_logs() {
    for f in "$D/munge/munged.log" "$D/slurmctld.log" "$D/slurmd.log" "$D"/*.out; do
        echo "---- $f"
        [[ -f $f ]] && tail -n 40 "$f"
    done
}
pids=()
cleanup() {
    # stop what this test started, by PID; the daemons run in the
    # foreground as children of this script, so waiting reaps them
    for p in "${pids[@]:1}"; do
        kill "$p" 2>/dev/null
    done
    # munged runs under runuser: stop munged itself, then runuser returns
    [[ -s $D/munge/munged.pid ]] && kill "$(cat "$D/munge/munged.pid")" 2>/dev/null
    for p in "${pids[@]}"; do
        wait "$p" 2>/dev/null
    done
    rm -rf "$D"
}
trap cleanup EXIT

# ---- munge: a daemon of our own on a private socket -----------------------
mkdir -p "$D/munge" "$D/sock"
if [[ -r /etc/munge/munge.key ]]; then
    cp /etc/munge/munge.key "$D/munge/munge.key"
else
    mungekey -c -k "$D/munge/munge.key" >/dev/null 2>&1 ||
        dd if=/dev/urandom of="$D/munge/munge.key" bs=1 count=128 2>/dev/null
fi
chown -R munge:munge "$D/munge" "$D/sock"
chmod 700 "$D/munge"
chmod 755 "$D/sock"
chmod 600 "$D/munge/munge.key"
SOCK=$D/sock/munge.socket
runuser -u munge -- munged --foreground --socket="$SOCK" --key-file="$D/munge/munge.key" \
    --log-file="$D/munge/munged.log" --pid-file="$D/munge/munged.pid" \
    --seed-file="$D/munge/munged.seed" >"$D/munged.out" 2>&1 &
pids+=($!)
for _ in $(seq 1 50); do
    [[ -S $SOCK ]] && break
    sleep 0.1
done
[[ -S $SOCK ]] || { show_logs; die "munged did not start"; }
munge -S "$SOCK" -n | unmunge -S "$SOCK" >/dev/null ||
    { show_logs; die "munge credentials do not round-trip"; }

# ---- slurm: two free ports, the real host name and core count -------------
read -r p1 p2 < <("$PY" -c '
import socket
ss = [socket.socket() for _ in range(2)]
for s in ss: s.bind(("", 0))
print(*[s.getsockname()[1] for s in ss])')
mkdir -p "$D/state" "$D/spool"
sed -e "s|@HOST@|$(hostname)|g" -e "s|@CPUS@|$(nproc)|g" -e "s|@DIR@|$D|g" \
    -e "s|@MUNGE_SOCKET@|$SOCK|g" -e "s|@CTLD_PORT@|$p1|g" -e "s|@D_PORT@|$p2|g" \
    "$SRC/tests/slurm/slurm.conf.in" >"$D/slurm.conf"
export SLURM_CONF=$D/slurm.conf
slurmctld -D -f "$SLURM_CONF" >"$D/slurmctld.out" 2>&1 &
pids+=($!)
slurmd -D -f "$SLURM_CONF" >"$D/slurmd.out" 2>&1 &
pids+=($!)
up=0
for _ in $(seq 1 60); do
    for p in "${pids[@]}"; do
        kill -0 "$p" 2>/dev/null || { show_logs; die "a daemon exited at start (pid $p)"; }
    done
    if sinfo -h -o '%T' 2>/dev/null | grep -qx 'idle'; then
        up=1
        break
    fi
    sleep 0.5
done
(( up )) || { sinfo; show_logs; die "the node did not become idle within 30 s"; }

# ---- the documented array job ---------------------------------------------
ARGS=(--group 'heisenberg(1)' --class 2
      --family 'x1 -> x1^p y1^q, y1 -> x1^r y1^s, z -> z^t'
      --range p=-2..2 --range q=-2..2 --range r=-2..2 --range s=-2..2 --range t=-1..1)
mkdir -p "$D/results"
chmod 777 "$D/results"
if ! NILSTEP=$NS timeout 300 sbatch --wait --array=0-3 --output="$D/results/log-%a.txt" \
    "$SRC/scripts/scan-slurm.sbatch" "$D/results/out" "${ARGS[@]}" >"$D/sbatch.out" 2>&1; then
    cat "$D/sbatch.out" "$D"/results/log-*.txt
    show_logs
    die "the array job failed"
fi
"$SRC/scripts/scan-merge.sh" "$D/results/out.jsonl" "$D"/results/out.part-*
"$NS" scan "${ARGS[@]}" --jobs 2 >"$D/whole.jsonl" 2>/dev/null
n=$(wc -l <"$D/whole.jsonl")
nparts=$(ls "$D"/results/out.part-* | wc -l)
if ! cmp -s "$D/whole.jsonl" "$D/results/out.jsonl"; then
    diff "$D/whole.jsonl" "$D/results/out.jsonl" | head
    die "merged array job output differs from the single-process scan"
fi
(( nparts == 4 )) || die "expected 4 parts, found $nparts"
(( n == 1875 )) || die "expected 5^4 * 3 = 1875 members, got $n"
echo "Slurm array job of 4 tasks: merged $n members equal to the single-process scan"
