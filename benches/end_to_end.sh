#!/usr/bin/env bash
# End-to-end figures for BENCHMARKS.md: `wetload calc` on generated binary STL files of
# 10 k to 4 M facets (closed torus and open patch), beside `cat FILE > /dev/null`.
# Prints one markdown row per mesh: median wall time of RUNS runs (a nanosecond clock
# around each process), user and system time of that run (`/usr/bin/time`, 10 ms steps),
# peak resident memory (largest of the runs), file size and their ratio.
#
#   bash benches/end_to_end.sh            # sizes 10000 100000 1000000 4000000
#   SIZES="1000000" RUNS=9 bash benches/end_to_end.sh
set -euo pipefail
cd "$(dirname "$0")/.."
SIZES=${SIZES:-"10000 100000 1000000 4000000"}
RUNS=${RUNS:-7}
cargo build --release --quiet --bin wetload --example genmesh
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
echo "| mesh | facets | file MB | cat ms | calc ms (median of $RUNS) | user s | sys s | peak RSS MB | RSS / file |"
echo "|---|---|---|---|---|---|---|---|---|"
for n in $SIZES; do
  for shape in torus patch; do
    flag=""; [ "$shape" = patch ] && flag="--open"
    f="$dir/${shape}_$n.stl"
    target/release/examples/genmesh "$f" --facets "$n" $flag > /dev/null
    bytes=$(stat -c %s "$f")
    facets=$(( (bytes - 84) / 50 ))
    cat "$f" > /dev/null
    t0=$(date +%s%N); cat "$f" > /dev/null; t1=$(date +%s%N)
    cat_ms=$(( (t1 - t0) / 1000000 ))
    rows=()
    for _ in $(seq "$RUNS"); do
      t0=$(date +%s%N)
      usage=$( { /usr/bin/time -f "%U %S %M" target/release/wetload calc "$f" > /dev/null; } 2>&1 )
      t1=$(date +%s%N)
      rows+=("$(( (t1 - t0) / 1000 )) $usage")
    done
    median=$(printf '%s\n' "${rows[@]}" | sort -n | sed -n "$(( (RUNS + 1) / 2 ))p")
    peak=$(printf '%s\n' "${rows[@]}" | awk '{print $4}' | sort -n | tail -1)
    read -r wall_us user sys _ <<< "$median"
    awk -v s="$shape" -v n="$facets" -v b="$bytes" -v c="$cat_ms" -v w="$wall_us" -v u="$user" -v y="$sys" -v p="$peak" \
      'BEGIN { printf "| %s | %d | %.1f | %d | %.0f | %.2f | %.2f | %.0f | %.2f |\n", s, n, b/1e6, c, w/1000, u, y, p/1024, p*1024/b }'
  done
done
