#!/usr/bin/env bash
# Merges shard outputs of `nilstep scan` (family members, each line starting
# {"index": N, ...) into one file in member order.
#
#   scripts/scan-merge.sh OUT PART...
set -euo pipefail
if (( $# < 2 )); then
    echo "usage: $0 OUT PART..." >&2
    exit 2
fi
out=$1
shift
# the member number is the first field after '{"index":'; a stable numeric
# sort on it restores the order of a single-process scan
LC_ALL=C sort -s -t: -k2,2n "$@" > "$out.tmp"
mv "$out.tmp" "$out"
