"""Benchmark of the whole-wall audit (acoustics.wall_model + acoustics.audit_wall).

Run from the repository root:  python tests/bench/bench_audit.py
A script, not a test: it prints medians and ratios and never fails on timing.

Targets (issue 13): audit of one wall with 50 findings on the whole-wall model <= 50 ms (model built
from the findings and audited; the wall type's prediction already cached, as it is for every wall of a
type after the first); 500 walls x 10 findings <= 2 s cold (a fresh process: every cache empty, five wall
types, mixed findings: one-face gaps, through gaps, edge gaps, boxes, pipes, missing batts).
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

G = "gypsum_15.9_x"
_FILL = {"thickness": 0.089}
TYPES = [
    {"leaves": [{"layers": [G, G]}, {"layers": [G]}], "cavity": {"depth": 0.092, "absorber": _FILL},
     "connection": {"type": "steel_stud"}},
    {"leaves": [{"layers": [G]}, {"layers": [G]}], "cavity": {"depth": 0.092, "absorber": _FILL},
     "connection": {"type": "wood_stud", "resilient_channel": {"leaf": 1}}},
    {"leaves": [{"layers": [G]}, {"layers": [G]}], "cavity": {"depth": 0.203, "absorber": _FILL},
     "connection": {"type": "double_studs"}},
    {"leaves": [{"layers": [G]}, {"layers": [G]}], "cavity": {"depth": 0.14, "absorber": _FILL},
     "connection": {"type": "staggered_studs"}},
    {"leaves": [{"layers": ["cmu_190"]}]},
]  # fmt: skip


def findings(n: int, seed: int) -> list[dict]:
    """A mixed set of n findings; sizes from a few template defaults, as the seal-point templates give."""
    import random

    rnd = random.Random(seed)
    out = []
    for i in range(n):
        face = rnd.choice(["a", "b", "through"])
        x = round(rnd.uniform(0, 3), 1)
        kind = rnd.choice(["slit", "hole", "ring", "boxes", "edge", "missing_insulation"])
        if kind == "slit":
            f = {"kind": "slit", "face": face, "width": rnd.choice([0.003, 0.006]), "length": 0.3, "x": x}
        elif kind == "edge":
            f = {
                "kind": "slit",
                "face": rnd.choice("ab"),
                "width": 0.006,
                "length": 1.0,
                "edge": "bottom",
                "x": x,
            }
        elif kind == "hole":
            f = {"kind": "hole", "face": face, "diameter": rnd.choice([0.01, 0.025, 0.05]), "x": x}
        elif kind == "ring":
            f = {"kind": "ring", "face": "through", "diameter": 0.025, "width": 0.005}
        elif kind == "boxes":
            f = {"kind": "boxes", "face": "through", "oversize": rnd.choice([0.0, 0.003]), "offset": 0.0}
        else:
            f = {"kind": "missing_insulation", "area": 0.5}
        out.append({**f, "id": f"f{i}"})
    return out


def one_wall_50() -> None:
    import acoustics as ac

    spec = TYPES[0]
    fs = findings(50, 1)
    ac.audit_wall(ac.wall_model(spec, 8.1, findings=fs))  # warm: prediction and leak caches
    times = []
    for _ in range(15):
        t = time.perf_counter()
        ac.audit_wall(ac.wall_model(spec, 8.1, findings=fs))
        times.append(time.perf_counter() - t)
    med = statistics.median(times) * 1e3
    print(f"one wall, 50 findings: median {med:.1f} ms (target <= 50 ms, ratio {50 / med:.1f}x)")


COLD = """
import sys, time
sys.path.insert(0, {root!r})
t0 = time.perf_counter()
import acoustics as ac
sys.path.insert(0, {bench!r})
from bench_audit import TYPES, findings
t1 = time.perf_counter()
for w in range(500):
    spec = TYPES[w % len(TYPES)]
    fs = findings(10, w)
    if "cavity" not in spec:
        fs = [f for f in fs if f["kind"] not in ("boxes", "missing_insulation")]
    ac.audit_wall(ac.wall_model(spec, 8.1, findings=fs))
t2 = time.perf_counter()
print(t2 - t1, t1 - t0)
"""


def cold_500() -> None:
    runs, imports = [], []
    for _ in range(5):
        code = COLD.format(root=str(ROOT), bench=str(Path(__file__).parent))
        out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
        a, b = (float(v) for v in out.split())
        runs.append(a)
        imports.append(b)
    med = statistics.median(runs)
    print(
        f"500 walls x 10 findings, cold process: median {med:.2f} s (target <= 2 s, ratio {2 / med:.1f}x); "
        f"import of acoustics {statistics.median(imports):.2f} s not included"
    )


if __name__ == "__main__":
    one_wall_50()
    cold_500()
