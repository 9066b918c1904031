#!/usr/bin/env bash
# End-to-end figures for BENCHMARKS.md: a cold `wetload calc` process on generated binary
# STL files (closed torus and open patch) beside `cat FILE > /dev/null` on the same file,
# the two alternating run by run so that both see the same minute of the machine.
# Prints one markdown row per mesh: the median wall time of RUNS runs of each (a
# nanosecond clock around each process, spawn to exit), their ratio, the time per facet,
# the CPU time of the median calc run, the largest peak resident memory (VmHWM, from
# wait4's rusage) and its ratio to the file size.
#
#   bash benches/end_to_end.sh            # sizes 100000 1300000 5000000, 11 runs
#   SIZES="1300000" RUNS=21 bash benches/end_to_end.sh
#   WETLOAD=/path/to/another/wetload bash benches/end_to_end.sh   # an older build, say
set -euo pipefail
cd "$(dirname "$0")/.."
SIZES=${SIZES:-"100000 1300000 5000000"}
export WETLOAD=${WETLOAD:-target/release/wetload}
RUNS=${RUNS:-11}
cargo build --release --quiet --bin wetload --example genmesh
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
echo "| mesh | facets | file MB | cat ms | calc ms | calc / cat | ns per facet | user s | sys s | peak RSS MB | RSS / file |"
echo "|---|---|---|---|---|---|---|---|---|---|---|"
for n in $SIZES; do
  for shape in torus patch; do
    flag=""; [ "$shape" = patch ] && flag="--open"
    f="$dir/${shape}_$n.stl"
    target/release/examples/genmesh "$f" --facets "$n" $flag > /dev/null
    python3 - "$f" "$RUNS" "$shape" <<'EOF'
import os, resource, statistics, subprocess, sys, time

path, runs, shape = sys.argv[1], int(sys.argv[2]), sys.argv[3]
size = os.path.getsize(path)
facets = (size - 84) // 50


def run(argv):
    """Wall seconds, user s, sys s, peak RSS KiB of one process (spawn to exit)."""
    t = time.perf_counter()
    p = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.perf_counter() - t
    assert os.waitstatus_to_exitcode(status) == 0, argv
    return wall, ru.ru_utime, ru.ru_stime, ru.ru_maxrss


run(["cat", path])  # the file in the page cache, as after a save
cats, calcs = [], []
for _ in range(runs):
    cats.append(run(["cat", path]))
    calcs.append(run([os.environ["WETLOAD"], "calc", path]))
cat = statistics.median(c[0] for c in cats)
calc_sorted = sorted(calcs)
mid = calc_sorted[len(calc_sorted) // 2]
calc = statistics.median(c[0] for c in calcs)
peak = max(c[3] for c in calcs) * 1024
print(
    f"| {shape} | {facets} | {size / 1e6:.1f} | {cat * 1e3:.1f} | {calc * 1e3:.1f} "
    f"| {calc / cat:.1f} | {calc * 1e9 / facets:.0f} | {mid[1]:.2f} | {mid[2]:.2f} "
    f"| {peak / 1e6:.1f} | {peak / size:.2f} |"
)
EOF
  done
done
