"""Field tests in the record: their band series, the CSV import, and the engine's descriptors.

A test is either measured levels (L1, L2, background B2, reverberation time T2 per one-third octave,
with the receiving-room volume and the separating area) or the band results of a test report (R',
DnT, ATL, NNR). Every rule broken raises :class:`acoustics.FieldInputError` naming the field and the
rule, before anything is stored. Descriptors come from :func:`acoustics.field.field_test` (ISO
16283-1 and ASTM E336 together, with the background correction) and
:func:`acoustics.field.field_test_from_report`.

References
----------
.. [1] ISO 16283-1:2014, Clauses 9.2 (background correction) and the formulas of D, R', DnT.
.. [2] ASTM E336 (NR, NNR, ATL; from memory), rated by ASTM E413-22.
"""

from __future__ import annotations

import csv
import io
import math
from typing import Any

import numpy as np

from acoustics import BANDS
from acoustics.field import FieldInputError, field_test, field_test_from_report

from .choices import LEVEL_SERIES, REPORT_SERIES

BAND_HZ = [int(round(f)) for f in BANDS]
CSV_COLUMNS = ("band_hz", "l1", "l2", "b2", "t2")
CSV_REQUIRED = ("band_hz", "l1", "l2", "t2")
#: Plausible sound levels and band results, dB (outside: a typo or a unit mix-up; common practice).
LEVEL_RANGE = (-20.0, 160.0)
MAX_CSV_BYTES = 64 * 1024


def _series(value: Any, name: str) -> list[float | None]:
    if not isinstance(value, (list, tuple)) or len(value) != len(BANDS):
        raise FieldInputError(
            name, f"must be a list of {len(BANDS)} values, one per band 50-5000 Hz (null: not measured)"
        )
    out: list[float | None] = []
    for hz, v in zip(BAND_HZ, value, strict=True):
        if v is None:
            out.append(None)
            continue
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
            raise FieldInputError(f"{name}[{hz} Hz]", "must be a finite number or null")
        if name != "t2" and not LEVEL_RANGE[0] <= v <= LEVEL_RANGE[1]:
            raise FieldInputError(
                f"{name}[{hz} Hz]", f"must lie between {LEVEL_RANGE[0]:g} and {LEVEL_RANGE[1]:g} dB"
            )
        out.append(float(v))
    return out


def clean_bands(bands: Any, source: str) -> dict[str, list[float | None]]:
    """Check the band series of a test; returns them as lists of 21 floats or None."""
    if not isinstance(bands, dict):
        raise FieldInputError("bands", "must be an object of band series")
    allowed = LEVEL_SERIES if source == "levels" else REPORT_SERIES
    unknown = sorted(set(bands) - set(allowed))
    if unknown:
        raise FieldInputError(f"bands.{unknown[0]}", f"not a series of this test; give {', '.join(allowed)}")
    if source == "levels":
        for need in ("l1", "l2", "t2"):
            if bands.get(need) is None:
                raise FieldInputError(f"bands.{need}", "is required for measured levels")
    out = {k: _series(v, k) for k, v in bands.items() if v is not None}
    if "b2" in out and all(v is None for v in out["b2"]):
        del out["b2"]  # no background measured: nothing to correct
    return out


def _arr(series: list | None) -> np.ndarray | None:
    return None if series is None else np.array([np.nan if v is None else v for v in series], float)


def _bands_out(a: np.ndarray) -> list[float | None]:
    return [None if not math.isfinite(x) else round(float(x), 2) for x in a]


def compute_results(
    source: str,
    bands: dict[str, list],
    *,
    volume: float | None = None,
    area: float | None = None,
    strict_background: bool = True,
) -> dict[str, Any]:
    """The descriptors of a test, JSON-ready: single numbers, bands, limit bands and flags.

    ``strict_background`` refuses a band whose background is within 6 dB of the receiving level (a
    400); off, such a band is kept as a limit value and flagged.
    """
    if source == "levels":
        if volume is None:
            raise FieldInputError("volume", "the receiving-room volume (m³) is required for measured levels")
        if area is None:
            raise FieldInputError("area", "the separating area (m²) is required for measured levels")
        t = field_test(
            _arr(bands["l1"]),
            _arr(bands["l2"]),
            _arr(bands["t2"]),
            volume,
            area,
            b2=_arr(bands.get("b2")),
            strict_background=strict_background,
        )
    else:
        t = field_test_from_report(**{k: _arr(v) for k, v in bands.items()})

    def rated(r: Any) -> dict | None:
        return None if r is None else {"value": int(r.rw), "c": int(r.c), "ctr": int(r.ctr)}

    return {
        "r_prime_w": rated(t.r_prime_w),
        "dnt_w": rated(t.dnt_w),
        "astc": None if t.astc is None else int(t.astc),
        "nnic": None if t.nnic is None else int(t.nnic),
        "nic": None if t.nic is None else int(t.nic),
        "bands": {k: _bands_out(getattr(t, k)) for k in ("d", "dnt", "r_prime", "nr", "nnr", "atl")},
        "limit_bands": t.limit_bands,
        "flags": list(t.flags),
    }


def parse_csv(text: str) -> dict[str, list[float | None]]:
    """Band series from a CSV, one row a band: columns band_hz, l1, l2, b2 (optional), t2.

    A band with no row, or an empty cell, is not measured (null). Raises FieldInputError naming the
    column or the row and the rule.
    """
    if len(text.encode()) > MAX_CSV_BYTES:
        raise FieldInputError("file", f"must be at most {MAX_CSV_BYTES // 1024} KiB")
    reader = csv.reader(io.StringIO(text.lstrip("\ufeff")))
    try:
        header = [h.strip().lower() for h in next(reader)]
    except StopIteration:
        raise FieldInputError("file", "is empty; the first row names the columns") from None
    unknown = [h for h in header if h not in CSV_COLUMNS]
    missing = [h for h in CSV_REQUIRED if h not in header]
    if unknown or missing or len(set(header)) != len(header):
        what = f"unknown {unknown[0]!r}" if unknown else f"missing {missing[0]!r}" if missing else "repeated"
        raise FieldInputError("columns", f"{what}; the columns are {', '.join(CSV_COLUMNS)} (b2 optional)")
    out: dict[str, list[float | None]] = {k: [None] * len(BANDS) for k in header if k != "band_hz"}
    seen = set()
    for n, row in enumerate(reader, start=2):
        if not any(c.strip() for c in row):
            continue
        if len(row) != len(header):
            raise FieldInputError(f"row {n}", f"must have {len(header)} cells like the header")
        cells = dict(zip(header, (c.strip() for c in row), strict=True))
        try:
            hz = float(cells["band_hz"])
        except ValueError:
            raise FieldInputError(f"row {n}.band_hz", "must be a band centre frequency in Hz") from None
        if hz not in BAND_HZ:
            raise FieldInputError(f"row {n}.band_hz", "must be a one-third-octave centre from 50 to 5000 Hz")
        if hz in seen:
            raise FieldInputError(f"row {n}.band_hz", f"{int(hz)} Hz is given twice")
        seen.add(hz)
        i = BAND_HZ.index(int(hz))
        for k in out:
            if cells[k] == "":
                continue
            try:
                out[k][i] = float(cells[k])
            except ValueError:
                raise FieldInputError(f"row {n}.{k}", "must be a number (empty: not measured)") from None
    if not seen:
        raise FieldInputError("file", "has no band rows")
    return out
