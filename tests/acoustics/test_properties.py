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
    small = ac.slit(w, length, d)
    big = ac.slit(w * factor, length, d) if which == "width" else ac.slit(w, length * factor, d)
    tl = np.full(21, 55.0)
    for rating in ac.RATINGS:
        assert ac.rate(ac.tl_with_added_area(tl, 10, big.area), rating) <= ac.rate(
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
