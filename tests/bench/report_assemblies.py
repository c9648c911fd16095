"""Print predicted vs published STC of the generic assemblies, by row and by construction family.

Run from the repository root: ``python tests/bench/report_assemblies.py``. Prints Markdown tables for the
contributor guide (tuning set of test_published_assemblies.py and the held-out set of
test_published_assemblies_heldout.py); not a timed benchmark.
"""

from __future__ import annotations

import importlib.util
import pathlib
import sys
from types import ModuleType

import numpy as np

ROOT = pathlib.Path(__file__).resolve().parents[2]
TESTS = ROOT / "tests" / "acoustics"
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(TESTS))


def _load(name: str) -> ModuleType:
    spec = importlib.util.spec_from_file_location(name, TESTS / f"{name}.py")
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def families(rows: list, order: tuple[str, ...]) -> None:
    print("| family | rows | mean error | mean abs. error | worst |")
    print("|---|---|---|---|---|")
    for fam in order:
        e = np.array([pred - pub for _, _, f, pub, pred in rows if f == fam])
        if e.size:
            worst = int(e[np.argmax(np.abs(e))])
            print(f"| {fam} | {e.size} | {e.mean():+.2f} | {np.abs(e).mean():.2f} | {worst:+d} |")
    e = np.array([pred - pub for *_, pub, pred in rows])
    worst = int(e[np.argmax(np.abs(e))])
    print(f"| **all** | {e.size} | {e.mean():+.2f} | {np.abs(e).mean():.2f} | {worst:+d} |")


def main() -> None:
    tuned = _load("test_published_assemblies")
    held = _load("test_published_assemblies_heldout")
    print("Predicted vs published laboratory STC by construction family (tuning set)\n")
    families(tuned.ROWS, tuned.FAMILIES)
    print("\nHeld-out set (not used for tuning)\n")
    families(held.ROWS, tuned.FAMILIES)
    if "--rows" in sys.argv:
        print("\n| assembly | source | family | published STC | predicted STC | difference |")
        print("|---|---|---|---|---|---|")
        for label, source, fam, pub, pred in [*tuned.ROWS, *held.ROWS]:
            print(f"| {label} | {source} | {fam} | {pub} | {pred} | {pred - pub:+d} |")


if __name__ == "__main__":
    main()
