#!/usr/bin/env bash
# Runs one `nilstep scan` as N shards with GNU parallel on this machine (or,
# with parallel's --sshlogin, on several) and merges the shards in member
# order.
#
#   scripts/scan-parallel.sh N OUT -- SCAN-ARGUMENTS...
#
# SCAN-ARGUMENTS are those of `nilstep scan` without --shard, --output,
# --resume or --jobs (a family; with --sample give --seed).  Shard K writes
# OUT.part-K with --resume, so running the same command again after an
# interruption only computes what is missing.  NILSTEP names the program
# (default: nilstep on PATH).
set -euo pipefail

if (( $# < 3 )) || [[ $3 != -- ]]; then
    echo "usage: $0 N OUT -- SCAN-ARGUMENTS..." >&2
    exit 2
fi
n=$1 out=$2
shift 3
nilstep=${NILSTEP:-nilstep}

# one single-threaded process per shard, as many at once as there are cores
# (-q: the arguments reach nilstep as they are, blanks and brackets included)
seq 1 "$n" | parallel -q --halt now,fail=1 \
    "$nilstep" scan "$@" --jobs 1 --shard "{}/$n" --resume "$out.part-{}"

# the shards are disjoint and each is in member order: merge by "index"
"$(dirname "${BASH_SOURCE[0]}")/scan-merge.sh" "$out" "$out".part-*
