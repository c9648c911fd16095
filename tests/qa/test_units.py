"""qa/units.py: input and display units, everything stored in SI.

Source for every factor: NIST SP 811 (2008), Appendix B.8: 1 ft = 0.3048 m and 1 in = 0.0254 m
exactly (international foot and inch of 1959), so 1 ft² = 0.09290304 m² exactly.
"""

from __future__ import annotations

import math

import pytest

from qa import units

NIST = [
    # (value in job units, quantity, units, SI value)
    (1, "size", "imperial", 0.3048),
    (10, "size", "imperial", 3.048),
    (0.25, "gap", "imperial", 0.00635),
    (1, "gap", "imperial", 0.0254),
    (1, "area", "imperial", 0.09290304),
    (6, "gap", "metric", 0.006),
    (2.7, "size", "metric", 2.7),
    (0.5, "area", "metric", 0.5),
]


@pytest.mark.parametrize("value, quantity, system, si", NIST)
def test_to_si_matches_nist_sp_811(value, quantity, system, si):
    assert units.to_si(value, quantity, system) == pytest.approx(si, rel=1e-15)


@pytest.mark.parametrize("value, quantity, system, si", NIST)
def test_round_trip_is_exact_to_rounding(value, quantity, system, si):
    assert units.from_si(units.to_si(value, quantity, system), quantity, system) == pytest.approx(
        value, rel=1e-14
    )


def test_none_stays_none():
    assert units.from_si(None, "gap", "metric") is None
    assert units.fmt(None, "gap", "imperial") == "—"


@pytest.mark.parametrize(
    "si, quantity, system, text",
    [
        (0.006, "gap", "metric", "6 mm"),
        (0.00635, "gap", "imperial", "0.25 in"),
        (0.0159, "gap", "metric", "15.9 mm"),
        (3.048, "size", "imperial", "10 ft"),
        (2.74, "size", "metric", "2.74 m"),
        (0.9, "gap", "metric", "900 mm"),
        (0.09290304, "area", "imperial", "1 ft²"),
        (0.5, "area", "metric", "0.5 m²"),
    ],
)
def test_fmt_shows_what_a_person_reads(si, quantity, system, text):
    assert units.fmt(si, quantity, system) == text


def test_fmt_digits_can_be_forced():
    assert units.fmt(0.1, "size", "imperial", digits=3) == "0.328 ft"  # 0.1 / 0.3048 = 0.32808…


def test_symbols():
    assert [units.symbol(q, "metric") for q in ("size", "gap", "area")] == ["m", "mm", "m²"]
    assert [units.symbol(q, "imperial") for q in ("size", "gap", "area")] == ["ft", "in", "ft²"]


def test_every_stored_finding_field_has_a_quantity():
    from qa.models import Finding

    assert set(units.FIELD_QUANTITY) == {f for f in Finding.GEOMETRY_FIELDS if f != "count"}


def test_unknown_system_or_quantity_is_a_key_error():
    with pytest.raises(KeyError):
        units.to_si(1, "gap", "cubits")
    with pytest.raises(KeyError):
        units.to_si(1, "volume", "metric")


def test_conversion_keeps_non_finite_values_non_finite():
    # The API refuses NaN and infinities before conversion; the helper must not hide them either.
    assert math.isnan(units.to_si(math.nan, "gap", "imperial"))
