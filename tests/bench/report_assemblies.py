"""Print predicted vs published STC of the generic assemblies in test_published_assemblies.py.

Run from the repository root: ``python tests/bench/report_assemblies.py``. Prints a Markdown table for
the docs and the mean absolute error; not a timed benchmark.
"""

from __future__ import annotations

import importlib.util
import pathlib
import sys

import numpy as np

ROOT = pathlib.Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
_spec = importlib.util.spec_from_file_location(
    "published_assemblies", ROOT / "tests" / "acoustics" / "test_published_assemblies.py"
)
mod = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(mod)


def main() -> None:
    print("| assembly | source | published STC | predicted STC | difference |")
    print("|---|---|---|---|---|")
    errs = []
    for label, source, pub, pred in mod.ROWS:
        errs.append(pred - pub)
        print(f"| {label} | {source} | {pub} | {pred} | {pred - pub:+d} |")
    e = np.array(errs)
    print(
        f"\n{len(e)} assemblies: mean absolute error {np.abs(e).mean():.2f}, mean error {e.mean():+.2f}, "
        f"largest {np.abs(e).max()} points"
    )


if __name__ == "__main__":
    main()
