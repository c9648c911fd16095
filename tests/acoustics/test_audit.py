"""Leak audit: check case C16 of the method notes, the result contract, targets and input errors."""

from __future__ import annotations

import json

import numpy as np
import pytest
from _reference_curves import HEAVY_WALL

import acoustics as ac
from acoustics import RatingError


def c16_leaks():
    """C16 defects: A slit 3 mm x 1.0 m, d = 100 mm (Gomperts, m = 8); B hole 50 mm, d = 100 mm; C hole 10 mm,
    d = 100 mm (both 2 x Wilson-Soroka, as the case states); band-averaged, diffuse."""
    return [
        ac.slit(0.003, 1.0, 0.1, label="A"),
        ac.hole(0.05, 0.1, diffuse="double", label="B"),
        ac.hole(0.01, 0.1, diffuse="double", label="C"),
    ]


def _rating_with(leaks, rating):
    added = np.sum([lk.area for lk in leaks], axis=0) if leaks else np.zeros(21)
    return ac.rate(ac.tl_with_added_area(HEAVY_WALL, 10.0, added), rating)


@pytest.mark.parametrize(
    ("rating", "designed", "all_three", "fix_a", "fix_b", "fix_c"),
    [
        ("rw", 53, 30, 34, 33, 30),
        ("stc", 53, 27, 32, 27, 27),
        ("oitc", 46, 30, 34, 32, 30),
    ],
)
def test_c16_fix_one_of_three(rating, designed, all_three, fix_a, fix_b, fix_c):
    """C16 (notes' script, S; method derived): heavy wall of ISO 717-1 Table E.1, S = 10 m^2. Exact integers
    (OITC depends on the E1332 spectrum recalled from memory)."""
    a = ac.audit(HEAVY_WALL, 10.0, c16_leaks(), rating=rating)
    assert a.designed == designed
    assert a.as_found == all_three
    assert (a.as_found + a.gain).tolist() == [fix_a, fix_b, fix_c]


@pytest.mark.parametrize(("rating", "alone"), [("rw", [34, 34, 49]), ("stc", [28, 32, 43])])
def test_c16_each_leak_alone(rating, alone):
    """C16: each defect alone on the intact wall -> Rw 34, 34, 49; STC 28, 32, 43. Exact."""
    assert [_rating_with([lk], rating) for lk in c16_leaks()] == alone


def test_c16_equivalent_open_areas_at_500_hz_and_order():
    """C16: S tau at 500 Hz: A 4.6e-4, B 4.1e-4, C 9.4e-7 m^2, intact wall 1.4e-4 m^2 (2 significant figures,
    rtol 0.02) -> fix A first."""
    a = ac.audit(HEAVY_WALL, 10.0, c16_leaks(), rating="rw")
    np.testing.assert_allclose(a.open_area_500, [4.6e-4, 4.1e-4, 9.4e-7], rtol=0.02)
    assert 10.0 * 10 ** (-HEAVY_WALL[10] / 10) == pytest.approx(1.4e-4, rel=0.02)
    assert a.order[0] == 0
    assert a.after[-1] == a.designed
    assert a.power_share.sum() + a.wall_share == pytest.approx(1.0)
    assert a.power_share[0] > a.power_share[1] > a.power_share[2]


def test_after_is_monotone_and_matches_rerating():
    leaks = c16_leaks() + [ac.slit(0.002, 0.5, 0.0127, edge=True), ac.open_area(2e-4)]
    for rating in ac.RATINGS:
        a = ac.audit(HEAVY_WALL, 10.0, leaks, rating=rating)
        assert sorted(a.order) == list(range(len(leaks)))
        assert np.all(np.diff(a.after) >= 0)
        for step in range(len(leaks)):
            left = [leaks[i] for i in a.order[step + 1 :]]
            assert a.after[step] == _rating_with(left, rating)
            np.testing.assert_allclose(
                a.after_tl[step],
                ac.tl_with_added_area(
                    HEAVY_WALL, 10.0, np.sum([lk.area for lk in left], axis=0) if left else np.zeros(21)
                ),
                atol=1e-9,
            )


def test_two_alike_leaks_fix_alone_versus_in_order():
    """Two equal slits: fixing either alone buys little; fixing both restores the wall (see audit docs)."""
    twin = [ac.slit(0.003, 1.0, 0.1), ac.slit(0.003, 1.0, 0.1)]
    a = ac.audit(HEAVY_WALL, 10.0, twin, rating="stc")
    assert a.gain[0] == a.gain[1] <= 4
    assert a.after[-1] - a.after[0] > 10
    assert a.order == [0, 1]  # full tie: earlier finding first


def test_ties_broken_by_weighted_power():
    """Equal rating after the fix -> the finding with more weighted transmitted power goes first."""
    small = ac.Leak.added(np.full(21, 1e-9), label="small")
    big = ac.Leak.added(np.full(21, 2e-9), label="big")
    a = ac.audit(HEAVY_WALL, 10.0, [small, big], rating="stc")
    assert a.gain.tolist() == [0, 0]
    assert a.order == [1, 0]


def test_needed_prefix():
    leaks = c16_leaks()
    a = ac.audit(HEAVY_WALL, 10.0, leaks, rating="stc", target=45)
    k = len(a.needed)
    assert a.after[k - 1] >= 45 and (k == 1 or a.after[k - 2] < 45)
    assert a.needed == a.order[:k]
    assert ac.audit(HEAVY_WALL, 10.0, leaks, rating="stc", target=20).needed == []
    assert ac.audit(HEAVY_WALL, 10.0, leaks, rating="stc", target=60).needed is None
    assert ac.audit(HEAVY_WALL, 10.0, leaks, rating="stc").needed is None


def test_no_findings():
    a = ac.audit(HEAVY_WALL, 10.0, [], rating="rw", target=50)
    assert a.designed == a.as_found == 53 and a.order == [] and a.needed == []
    assert a.after_tl.shape == (0, 21)
    json.dumps(a.to_dict())


def test_to_dict_is_json_and_complete():
    tl = HEAVY_WALL.copy()
    tl[0] = np.nan  # unrated band missing: allowed, sent as null
    a = ac.audit(tl, 10.0, c16_leaks(), rating="stc", target=40)
    d = json.loads(json.dumps(a.to_dict(), allow_nan=False))
    for key in (
        "designed",
        "as_found",
        "gain",
        "order",
        "after",
        "needed",
        "as_found_tl",
        "after_tl",
        "open_area_500",
        "power_share",
        "flags",
        "flag_text",
        "labels",
    ):
        assert key in d
    assert d["as_found_tl"][0] is None
    assert d["labels"] == ["A", "B", "C"]
    assert "diffuse_from_normal" in d["flags"]


def test_bare_arrays_accepted_as_added_areas():
    a = ac.audit(HEAVY_WALL, 10.0, [np.full(21, 1e-3)], rating="rw")
    assert a.kinds == ("added",) and a.gain[0] == a.designed - a.as_found


@pytest.mark.parametrize(
    ("kwargs", "exc", "match"),
    [
        ({"area": -1.0}, ValueError, "area must be a finite wall area > 0"),
        ({"area": "big"}, ValueError, "area must be the wall area"),
        ({"rating": "nic"}, ValueError, "rating must be one of"),
        ({"tl": np.zeros(16)}, ValueError, r"shape \(21,\)"),
        ({"tl": np.zeros((2, 21))}, ValueError, r"shape \(21,\)"),
        ({"target": 40.5}, ValueError, "target must be a whole-number rating"),
        ({"leaks": [np.full(21, -1.0)]}, ValueError, r"leaks\[0\]"),
        ({"leaks": ac.open_area(0.01)}, ValueError, "sequence of Leak"),
    ],
)
def test_audit_errors(kwargs, exc, match):
    args = {"tl": HEAVY_WALL, "area": 10.0, "leaks": c16_leaks(), "rating": "stc"} | kwargs
    with pytest.raises(exc, match=match):
        ac.audit(**args)


def test_missing_rated_band_raises_rating_error():
    tl = HEAVY_WALL.copy()
    tl[ac.BAND_INDEX[2000]] = np.nan
    with pytest.raises(RatingError, match="2000 Hz"):
        ac.audit(tl, 10.0, c16_leaks(), rating="stc")
