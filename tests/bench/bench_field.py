"""Benchmark of the field prediction (ISO 12354-1 detailed method, four junctions) and field tests.

Run from the repository root:  python tests/bench/bench_field.py
A script, not a test: it prints medians and ratios and never fails on timing.
Targets: one wall with four junctions in bands <= 5 ms; a job of 300 walls <= 1.5 s cold (a fresh
interpreter: import of the engine, building-kind defaults built on first use, every wall predicted for
three curves at once: designed, as found, now).
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import acoustics as ac  # noqa: E402

RUNS = 7
KINDS = sorted(ac.BUILDING_KINDS)

COLD = r"""
import time
t0 = time.perf_counter()
import numpy as np
import acoustics as ac
t1 = time.perf_counter()
rng = np.random.default_rng(1)
base = np.linspace(30, 65, 21)
kinds = sorted(ac.BUILDING_KINDS)
for n in range(300):
    r = base + rng.normal(0, 2, 21)
    curves = np.stack([r, r - rng.uniform(0, 8), r - rng.uniform(0, 3)])
    kind = kinds[n % len(kinds)]
    p = ac.predict_wall(curves, 3.0 + n % 5, 2.7, ac.Room(40.0), ac.Room(35.0, t=0.6), building_kind=kind,
                        leaks=rng.uniform(0, 1e-3, 21))
t2 = time.perf_counter()
print(f"{t1 - t0:.4f} {t2 - t1:.4f}")
"""


def median_ms(fn, runs: int = RUNS, inner: int = 50) -> float:
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        for _ in range(inner):
            fn()
        times.append((time.perf_counter() - t) / inner * 1e3)
    return statistics.median(times)


def main() -> None:
    r = np.linspace(30, 65, 21)
    rooms = (ac.Room(40.0), ac.Room(35.0, t=0.6))
    print("field prediction, one wall, four junctions (median of", RUNS, "runs):")
    for kind in KINDS:
        ms = median_ms(lambda kind=kind: ac.predict_wall(r, 4.0, 2.7, *rooms, building_kind=kind))
        print(f"  {kind:18s} {ms:6.2f} ms   target 5 ms   ratio {5.0 / ms:5.1f}x")
    three = np.stack([r, r - 5, r - 2])
    ms3 = median_ms(lambda: ac.predict_wall(three, 4.0, 2.7, *rooms, building_kind="wood_frame"))
    print(f"  three curves at once (wood_frame) {ms3:6.2f} ms")
    js = ac.default_junctions("concrete_masonry")
    wall = ac.Separating(r, 4.0, 2.7, 220.0, "heavy", 120.0)
    msd = median_ms(lambda: ac.predict_field(wall, js, *rooms))
    print(f"  predict_field with prepared junctions (concrete_masonry) {msd:6.2f} ms")
    l1 = np.full(21, 95.0)
    l2 = l1 - r
    mst = median_ms(lambda: ac.field_test(l1, l2, 0.6, 40.0, 10.8, b2=l2 - 12))
    print(f"  field test from measured bands {mst:6.2f} ms")

    cold = []
    for _ in range(5):
        out = subprocess.run(
            [sys.executable, "-c", COLD], cwd=ROOT, capture_output=True, text=True, check=True
        )
        imp, run = (float(x) for x in out.stdout.split())
        cold.append((imp, run, imp + run))
    imp, run, total = (statistics.median(c[i] for c in cold) for i in range(3))
    print(
        f"300 walls x 3 curves, cold (median of 5 fresh interpreters): import {imp:.3f} s + predictions "
        f"{run:.3f} s = {total:.3f} s   target 1.5 s   ratio {1.5 / total:4.1f}x"
    )


if __name__ == "__main__":
    main()
