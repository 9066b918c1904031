#!/usr/bin/env python3
"""Cold `calc` processes of several wetload binaries on one mesh, alternating run by run so
that each sees the same minutes of the machine; prints each binary's median, minimum and
quartiles of the wall time (spawn to exit).

    python3 benches/alternate.py OLD_BINARY,NEW_BINARY MESH.stl RUNS
"""
import statistics
import subprocess
import sys
import time

binaries, mesh, runs = sys.argv[1].split(","), sys.argv[2], int(sys.argv[3])
times = {b: [] for b in binaries}
for _ in range(runs):
    for b in binaries:
        t = time.perf_counter()
        subprocess.run([b, "calc", mesh], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True)
        times[b].append((time.perf_counter() - t) * 1000)
for b in binaries:
    r = sorted(times[b])
    # Tenths of a millisecond below 100 ms, where whole milliseconds hide the changes.
    d = 1 if r[0] < 100 else 0
    print(f"{b}: median {statistics.median(r):.{d}f} ms, min {r[0]:.{d}f}, quartiles {r[len(r) // 4]:.{d}f}–{r[3 * len(r) // 4]:.{d}f}")
