"""Invariants the engine must keep whatever the input (hypothesis property tests).

Sources: monotonicity and uniform-shift behaviour follow from the definitions of ASTM E413, ISO 717-1 and
ASTM E1332; the 1 % open-area cap is common practice (derived in the method notes 5.2 from Hopkins Eq. 4.92).
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

import acoustics as ac

PROFILE = settings(max_examples=60, deadline=None)

tl_curves = arrays(np.float64, 21, elements=st.floats(-10, 90, allow_nan=False).map(lambda v: round(v, 1)))
leak_areas = arrays(np.float64, 21, elements=st.floats(0, 1e-2, allow_nan=False))
wall_area = st.floats(1.0, 50.0)


@PROFILE
@given(tl_curves, wall_area, leak_areas)
def test_adding_a_leak_never_raises_any_rating(tl, s, extra):
    base = ac.tl_with_added_area(tl, s, np.zeros(21))
    leaky = ac.tl_with_added_area(tl, s, extra)
    for rating in ac.RATINGS:
        assert ac.rate(leaky, rating) <= ac.rate(base, rating)


@PROFILE
@given(
    st.floats(0.5e-3, 10e-3),
    st.floats(0.1, 3.0),
    st.floats(0.01, 0.2),
    st.floats(1.05, 2.0),
    st.sampled_from(["width", "length"]),
)
def test_wider_or_longer_gap_never_raises_rating(w, length, d, factor, which):
    """Longer: exact (the area is w L tau). Wider: within 1 point, because Gomperts' end correction moves
    the slit's depth resonances with its width (Hopkins Eq. 4.101), so a wider slit can put a resonance
    peak in a band where the narrower one had none; the rating may then round one point the other way."""
    small = ac.slit(w, length, d)
    big = ac.slit(w * factor, length, d) if which == "width" else ac.slit(w, length * factor, d)
    tol = 1 if which == "width" else 0
    tl = np.full(21, 55.0)
    for rating in ac.RATINGS:
        assert ac.rate(ac.tl_with_added_area(tl, 10, big.area), rating) <= tol + ac.rate(
            ac.tl_with_added_area(tl, 10, small.area), rating
        )


@PROFILE
@given(
    tl_curves.map(lambda t: np.clip(t, 20, None)),
    st.lists(leak_areas, min_size=1, max_size=6),
    st.sampled_from(ac.RATINGS),
)
def test_fixing_a_finding_never_lowers_rating(tl, areas, rating):
    a = ac.audit(tl, 10.0, [ac.Leak.added(x) for x in areas], rating=rating)
    assert np.all(a.gain >= 0)
    assert np.all(np.diff(np.concatenate([[a.as_found], a.after])) >= 0)
    assert a.after[-1] == a.designed


@PROFILE
@given(
    tl_curves.map(lambda t: np.clip(t, 20, None)),
    st.lists(leak_areas, min_size=2, max_size=6),
    st.sampled_from(ac.RATINGS),
    st.randoms(use_true_random=False),
)
def test_input_order_of_findings_changes_no_result(tl, areas, rating, rnd):
    leaks = [ac.Leak.added(x, label=str(i)) for i, x in enumerate(areas)]
    perm = list(range(len(leaks)))
    rnd.shuffle(perm)
    a = ac.audit(tl, 10.0, leaks, rating=rating, target=int(ac.rate(tl, rating)) - 3)
    b = ac.audit(tl, 10.0, [leaks[i] for i in perm], rating=rating, target=int(ac.rate(tl, rating)) - 3)
    assert (a.designed, a.as_found) == (b.designed, b.as_found)
    # per finding results follow the finding, not its position
    for new_pos, old in enumerate(perm):
        assert b.gain[new_pos] == a.gain[old]
        np.testing.assert_allclose(b.power_share[new_pos], a.power_share[old], rtol=1e-9, atol=1e-15)
    assert a.after.tolist() == b.after.tolist()
    assert (a.needed is None) == (b.needed is None)
    if a.needed is not None:
        assert len(a.needed) == len(b.needed)
    np.testing.assert_allclose(a.as_found_tl, b.as_found_tl, rtol=1e-12)


@PROFILE
@given(st.floats(45, 90), st.floats(1.0, 100.0))
def test_one_percent_open_area_caps_at_20_db(wall_tl, s):
    """Common practice (notes 5.2, from Hopkins Eq. 4.92): 1 % open, wall TL >= 45 dB -> 20 dB +- 0.5."""
    tl = ac.tl_with_added_area(np.full(21, wall_tl), s, ac.open_area(0.01 * s).area)
    assert np.all(np.abs(tl - 20.0) <= 0.5)
    assert abs(ac.stc(tl) - 20) <= 1 and abs(ac.rw(tl).rw - 20) <= 1


@PROFILE
@given(tl_curves, st.integers(-20, 20))
def test_uniform_shift_moves_every_rating_by_the_same_amount(tl, shift):
    assert ac.stc(tl + shift) == ac.stc(tl) + shift
    assert ac.rw(tl + shift).rw == ac.rw(tl).rw + shift
    r0, r1 = ac.rw(tl), ac.rw(tl + shift)
    assert (r1.c, r1.ctr) == (r0.c, r0.ctr)
    assert abs(ac.oitc(tl + shift, decimal=True) - ac.oitc(tl, decimal=True) - shift) < 0.1 + 1e-9


@PROFILE
@given(arrays(np.float64, (7, 21), elements=st.floats(-10, 90, allow_nan=False)))
def test_batch_equals_loop(x):
    assert ac.stc(x).tolist() == [ac.stc(r) for r in x]
    assert ac.rw(x).rw.tolist() == [ac.rw(r).rw for r in x]
    assert ac.oitc(x).tolist() == [ac.oitc(r) for r in x]


@PROFILE
@given(tl_curves, st.floats(0.1, 30))
def test_ratings_monotone_in_any_single_band(tl, bump):
    for i in range(21):
        up = tl.copy()
        up[i] += bump
        assert ac.stc(up) >= ac.stc(tl)
        assert ac.rw(up).rw >= ac.rw(tl).rw


# ---------------------------------------------------------------- whole-wall model (issue 13)
# Sources: these follow from the model's construction (every term of W(x) = W0 + L.x + x'Mx/2 is >= 0, the
# joined term of two opposite-face openings is never below the leaf model's own bilinear term) and from
# the monotonicity of the rating definitions (ASTM E413, ISO 717-1).
_G = "gypsum_15.9_x"
_WALLS = {
    "steel": {
        "leaves": [{"layers": [_G, _G]}, {"layers": [_G]}],
        "cavity": {"depth": 0.092, "absorber": {"thickness": 0.089}},
        "connection": {"type": "steel_stud"},
    },
    "empty_wood": {
        "leaves": [{"layers": [_G]}, {"layers": [_G]}],
        "cavity": {"depth": 0.092},
        "connection": {"type": "wood_stud"},
    },
    "double": {
        "leaves": [{"layers": [_G]}, {"layers": [_G]}],
        "cavity": {"depth": 0.203, "absorber": {"thickness": 0.089}},
        "connection": {"type": "double_studs"},
    },
}
WALL_PROFILE = settings(max_examples=25, deadline=None)

_face = st.sampled_from(["a", "b", "through"])
_x = st.one_of(st.none(), st.floats(0.0, 2.5).map(lambda v: round(v, 2)))
_hole = st.fixed_dictionaries(
    {"kind": st.just("hole"), "face": _face, "diameter": st.floats(0.005, 0.08), "x": _x}
)
_slit = st.fixed_dictionaries(
    {
        "kind": st.just("slit"),
        "face": _face,
        "width": st.floats(0.001, 0.01),
        "length": st.floats(0.05, 3.0),
        "edge": st.sampled_from([None, "bottom", "head"]),
        "x": _x,
    }
)
_ring = st.fixed_dictionaries(
    {
        "kind": st.just("ring"),
        "face": _face,
        "diameter": st.floats(0.01, 0.1),
        "width": st.floats(0.001, 0.01),
        "sleeve": st.booleans(),
    }
)
_boxes = st.fixed_dictionaries(
    {
        "kind": st.just("boxes"),
        "face": _face,
        "oversize": st.sampled_from([0.0, 0.001, 0.003, 0.006]),
        "offset": st.floats(0.0, 1.0),
        "pad": st.booleans(),
    }
)
_finding = st.one_of(_hole, _slit, _ring, _boxes)
_findings = st.lists(_finding, min_size=1, max_size=6).map(
    lambda fs: [{**f, "id": f"f{i}"} for i, f in enumerate(fs)]
)
_wall = st.sampled_from(sorted(_WALLS))


def _audit(wall, findings, rating="stc"):
    return ac.audit_wall(ac.wall_model(_WALLS[wall], 8.1, findings=findings), rating=rating)


@WALL_PROFILE
@given(_wall, _findings, st.sampled_from(ac.RATINGS))
def test_removing_any_finding_never_lowers_the_rating(wall, findings, rating):
    a = _audit(wall, findings, rating)
    assert np.all(a.gain >= 0)
    assert np.all(np.diff(a.after) >= 0) and a.after[-1] == a.designed >= a.as_found


@WALL_PROFILE
@given(_wall, _finding, _finding, st.floats(0.0, 2.0))
def test_opposite_face_findings_cost_more_together_than_apart(wall, f1, f2, x):
    """Damage together >= the sum of the damages apart, up to the 1-point rounding of each rating."""
    a = {**f1, "face": "a", "id": "a", "x": x}
    b = {**f2, "face": "b", "id": "b", "x": x}
    designed = _audit(wall, []).designed
    both = designed - _audit(wall, [a, b]).as_found
    apart = (designed - _audit(wall, [a]).as_found) + (designed - _audit(wall, [b]).as_found)
    assert both >= apart - 1


@WALL_PROFILE
@given(
    _wall,
    _findings,
    st.integers(0, 5),
    st.sampled_from(["width", "length", "diameter", "count"]),
    st.floats(1.1, 3.0),
)
def test_wider_longer_or_more_numerous_never_costs_less(wall, findings, pick, key, factor):
    """Longer and more numerous: exact. Wider (width, diameter): within 1 point, for the aperture
    resonance shift explained in test_wider_or_longer_gap_never_raises_rating."""
    k = pick % len(findings)
    f = findings[k]
    if key == "count":
        bigger = {**f, "count": 2}
    elif key in f and (key != "diameter" or f["kind"] == "hole"):
        bigger = {**f, key: f[key] * factor}
    else:
        return
    more = [*findings[:k], bigger, *findings[k + 1 :]]
    tol = 1 if key in ("width", "diameter") else 0
    assert _audit(wall, more).as_found <= _audit(wall, findings).as_found + tol


@WALL_PROFILE
@given(_wall, _findings, st.randoms(use_true_random=False))
def test_input_order_of_findings_changes_nothing(wall, findings, rnd):
    shuffled = list(findings)
    rnd.shuffle(shuffled)
    a, b = _audit(wall, findings), _audit(wall, shuffled)
    assert (a.designed, a.as_found) == (b.designed, b.as_found)
    assert list(a.after) == list(b.after)
    assert [a.ids[k] for k in a.order] == [b.ids[k] for k in b.order]
    assert dict(zip(a.ids, a.gain.tolist(), strict=True)) == dict(zip(b.ids, b.gain.tolist(), strict=True))
