"""The engine imports without Django (DESIGN: acoustics is pure numpy; STYLE: project-wide invariant)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def test_import_acoustics_loads_no_django():
    code = (
        "import sys, acoustics; "
        "loaded = sorted(m for m in sys.modules if m == 'django' or m.startswith('django.')); "
        "assert not loaded, loaded; "
        "assert 'rest_framework' not in sys.modules; "
        "print(len(acoustics.__all__))"
    )
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    assert int(out.stdout.strip()) > 20


def test_every_public_name_exists():
    import acoustics

    for name in acoustics.__all__:
        assert hasattr(acoustics, name), name
