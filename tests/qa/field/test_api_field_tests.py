"""Field tests API: /api/jobs/{job}/walls/{wall}/field-tests/ — JSON bands and CSV upload.

Hand calculations (ISO 16283-1:2014 formulas as transcribed in the method notes §14.4; ASTM E336 from
memory): with T2 = 0.5 s, V = 31.25 m³ and S = 10 m², 0.16 V / T2 = S, so R' = DnT = D = L1 − L2 in every
band. D is the test curve FLAT_50, which is the ISO 717-1 reference curve less 4 dB over 100–3150 Hz
and the E413 contour of STC 52 less 4 dB over 125–4000 Hz; shifting by −2 dB leaves 16 × 2 = 32 dB of
unfavourable deviation (ISO 717-1 limit: ≤ 32 dB; E413: ≤ 32 dB total and ≤ 8 dB in one band), so
DnT,w = R'w = 50 and NNIC = 50 (hand calculation).
"""

from __future__ import annotations

import math

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from qa.field.measurements import BAND_HZ
from qa.models import Event, FieldTest
from tests.conftest import FLAT_50
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db
L1 = [95.0] * 21
L2 = [95.0 - d for d in FLAT_50]
I500 = BAND_HZ.index(500)


def url(job, wall, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/walls/{wall.id}/field-tests", *map(str, rest)]) + "/"


def body(**over) -> dict:
    data = {
        "tested_on": "2026-11-20",
        "tester": "R. Alvarez (fictional)",
        "standard": "ISO 16283-1",
        "source": "levels",
        "volume_m3": 31.25,
        "area_m2": 10.0,
        "bands": {"l1": L1, "l2": L2, "b2": [30.0] * 21, "t2": [0.5] * 21},
    }
    data.update(over)
    return {k: v for k, v in data.items() if v is not ...}


def csv_text(rows=None, header="band_hz,l1,l2,b2,t2") -> str:
    rows = rows or [f"{hz},{L1[i]},{L2[i]},30,0.5" for i, hz in enumerate(BAND_HZ)]
    return "\n".join([header, *rows]) + "\n"


def test_measured_levels_give_the_hand_calculated_descriptors(world, api):
    r = api(world.inspector).post(url(world.job, world.wall), body(), format="json")
    assert r.status_code == 201, r.json()
    test = FieldTest.objects.get(pk=r.json()["id"])
    test.refresh_from_db()
    res = test.results
    assert res["dnt_w"]["value"] == 50 and res["r_prime_w"]["value"] == 50  # hand calculation (docstring)
    assert res["nnic"] == 50
    assert res["bands"]["dnt"] == pytest.approx(FLAT_50, abs=0.01)
    assert res["bands"]["r_prime"] == pytest.approx(FLAT_50, abs=0.01)
    assert res["limit_bands"] == [] and res["flags"] == []
    assert test.created_by == world.inspector and test.bands["l1"] == L1
    assert Event.objects.filter(verb="field_test.created").count() == 1


def test_background_between_6_and_10_db_is_corrected_by_the_standard_formula(world, api):
    b2 = [30.0] * 21
    b2[I500] = L2[I500] - 8.0
    r = api(world.inspector).post(
        url(world.job, world.wall), body(bands={**body()["bands"], "b2": b2}), format="json"
    )
    assert r.status_code == 201, r.json()
    d = r.json()["results"]["bands"]["d"][I500]
    # ISO 16283-1 9.2: L = 10 lg(10^(L2/10) − 10^(B2/10)) = L2 + 10 lg(1 − 10^−0.8) (hand calculation)
    assert d == pytest.approx(FLAT_50[I500] - 10 * math.log10(1 - 10**-0.8), abs=0.01)
    assert r.json()["results"]["limit_bands"] == []


def test_background_within_6_db_is_refused_unless_kept_as_a_limit(world, api):
    b2 = [30.0] * 21
    b2[I500] = L2[I500] - 4.0
    bands = {**body()["bands"], "b2": b2}
    client = api(world.inspector)
    r = client.post(url(world.job, world.wall), body(bands=bands), format="json")
    assert r.status_code == 400 and "at least 6 dB below" in str(r.json()["b2[500 Hz]"])
    assert not FieldTest.objects.exists()
    r = client.post(url(world.job, world.wall), body(bands=bands, allow_background_limit=True), format="json")
    assert r.status_code == 201, r.json()
    res = r.json()["results"]
    assert res["limit_bands"] == [500] and "background_limit" in res["flags"]
    # Below 6 dB the correction stops at 1.3 dB (ISO 16283-1 9.2, from memory): D = D0 + 1.3.
    assert res["bands"]["d"][I500] == pytest.approx(FLAT_50[I500] + 1.3, abs=0.01)


def test_background_more_than_10_db_below_changes_nothing(world, api):
    b2 = [30.0] * 21
    b2[I500] = L2[I500] - 10.5
    r = api(world.inspector).post(
        url(world.job, world.wall), body(bands={**body()["bands"], "b2": b2}), format="json"
    )
    assert r.json()["results"]["bands"]["d"][I500] == pytest.approx(FLAT_50[I500], abs=0.001)


def test_report_band_results_are_rated(world, api):
    r = api(world.inspector).post(
        url(world.job, world.wall),
        body(
            source="report",
            standard="ASTM E336",
            volume_m3=...,
            area_m2=...,
            bands={"atl": FLAT_50, "nnr": FLAT_50},
        ),
        format="json",
    )
    assert r.status_code == 201, r.json()
    assert r.json()["results"]["nnic"] == 50 and r.json()["results"]["astc"] == 50
    assert r.json()["results"]["dnt_w"] is None


def test_csv_upload_one_row_a_band(world, api):
    upload = SimpleUploadedFile("test.csv", csv_text().encode(), content_type="text/csv")
    data = {k: v for k, v in body(bands=...).items()}
    r = api(world.inspector).post(url(world.job, world.wall), {**data, "file": upload}, format="multipart")
    assert r.status_code == 201, r.json()
    test = FieldTest.objects.get()
    assert test.bands["l2"] == pytest.approx(L2) and test.results["dnt_w"]["value"] == 50


def test_csv_with_bands_left_out_outside_the_rating_ranges(world, api):
    rows = [f"{hz},{L1[i]},{L2[i]},,0.5" for i, hz in enumerate(BAND_HZ) if 100 <= hz <= 4000]
    upload = SimpleUploadedFile("t.csv", csv_text(rows).encode())
    r = api(world.inspector).post(
        url(world.job, world.wall), {**body(bands=...), "file": upload}, format="multipart"
    )
    assert r.status_code == 201, r.json()
    assert FieldTest.objects.get().bands["l1"][0] is None


CSV_RULES = [
    (csv_text(header="band,l1,l2,b2,t2"), "columns", "unknown 'band'"),
    (csv_text(header="band_hz,l1,l2,b2"), "columns", "missing 't2'"),
    (csv_text(["500,95,45,30,0.5", "500,95,45,30,0.5"]), "row 3.band_hz", "given twice"),
    (csv_text(["510,95,45,30,0.5"]), "row 2.band_hz", "one-third-octave centre"),
    (csv_text(["500,loud,45,30,0.5"]), "row 2.l1", "must be a number"),
    (csv_text(["500,95,45,30"]), "row 2", "cells like the header"),
    (csv_text(["500,95,45,30,0.5"]), "bands", "must be measured"),
    ("", "file", "is empty"),
    ("band_hz,l1,l2,b2,t2\n", "file", "no band rows"),
]


@pytest.mark.parametrize(
    "text, field, rule", CSV_RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(CSV_RULES)]
)
def test_bad_csv_is_refused_naming_field_and_rule(world, api, text, field, rule):
    upload = SimpleUploadedFile("t.csv", text.encode())
    r = api(world.inspector).post(
        url(world.job, world.wall), {**body(bands=...), "file": upload}, format="multipart"
    )
    assert r.status_code == 400, r.json()
    assert rule in str(r.json()[field]), r.json()
    assert not FieldTest.objects.exists() and not Event.objects.exists()


def _with(series: str, band_hz: int, value):
    bands = {k: list(v) for k, v in body()["bands"].items()}
    bands[series][BAND_HZ.index(band_hz)] = value
    return bands


RULES = [
    ({"volume_m3": -30.0}, "volume_m3", "must be > 0"),
    ({"volume_m3": ...}, "volume_m3", "required for measured levels"),
    ({"area_m2": 0}, "area_m2", "must be > 0"),
    ({"bands": _with("t2", 500, 0.0)}, "t2[500 Hz]", "reverberation time must be > 0 s"),
    ({"bands": _with("t2", 500, 45.0)}, "t2[500 Hz]", "at most 20 s"),
    ({"bands": _with("l2", 500, None)}, "l2[500 Hz]", "same bands"),
    ({"bands": _with("l1", 1000, 400.0)}, "l1[1000 Hz]", "between -20 and 160 dB"),
    ({"bands": _with("l1", 1000, "x")}, "l1[1000 Hz]", "finite number or null"),
    ({"bands": {"l1": L1[:20], "l2": L2, "t2": [0.5] * 21}}, "l1", "list of 21 values"),
    ({"bands": {"l1": L1, "t2": [0.5] * 21}}, "bands.l2", "required"),
    ({"bands": {"l1": L1, "l2": L2, "t2": [0.5] * 21, "atl": L1}}, "bands.atl", "not a series"),
    (
        {"bands": {k: [None] * 21 if k != "t2" else [0.5] * 21 for k in ("l1", "l2", "t2")}},
        "bands",
        "must be measured",
    ),
    ({"bands": ...}, "bands", "give the band series"),
    ({"standard": "ASTM E90"}, "standard", "not a valid choice"),
    ({"tested_on": "yesterday"}, "tested_on", "wrong format"),
    ({"tester": ""}, "tester", "may not be blank"),
]


@pytest.mark.parametrize("change, field, rule", RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(RULES)])
def test_bad_input_is_refused_naming_field_and_rule(world, api, change, field, rule):
    r = api(world.inspector).post(url(world.job, world.wall), body(**change), format="json")
    assert r.status_code == 400, r.json()
    assert rule in str(r.json()[field]), r.json()
    assert not FieldTest.objects.exists() and not Event.objects.exists()


def test_another_jobs_wall_and_test_are_404(world, api):
    theirs = FieldTest.objects.create(
        wall=world.other_wall, tested_on="2026-11-01", tester="x", standard="ISO 16283-1", bands={}
    )
    client = api(world.inspector)
    assert client.get(url(world.job, world.other_wall)).status_code == 404
    assert client.post(url(world.job, world.other_wall), body(), format="json").status_code == 404
    assert client.get(url(world.job, world.wall, theirs.pk)).status_code == 404
    assert client.delete(url(world.job, world.wall, theirs.pk)).status_code == 404
    assert FieldTest.objects.count() == 1


def test_wrong_method_is_405(world, api):
    test = FieldTest.objects.create(
        wall=world.wall, tested_on="2026-11-01", tester="x", standard="ISO 16283-1"
    )
    assert (
        api(world.inspector).patch(url(world.job, world.wall, test.pk), {}, format="json").status_code == 405
    )


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_and_who_adds_field_tests(world, api, role):
    client = as_role(world, api, role)
    assert client.get(url(world.job, world.wall)).status_code == SEE[role]
    r = client.post(url(world.job, world.wall), body(), format="json")
    assert r.status_code == (EDIT[role] or 201)
    assert FieldTest.objects.count() == (1 if role == "inspector" else 0)


def test_removing_a_test_keeps_it_in_the_record(world, api):
    client = api(world.inspector)
    pk = client.post(url(world.job, world.wall), body(), format="json").json()["id"]
    pred = f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/"
    assert [t["id"] for t in client.get(pred).json()["tests"]] == [pk]
    assert client.delete(url(world.job, world.wall, pk)).status_code == 204
    test = FieldTest.objects.get(pk=pk)
    test.refresh_from_db()
    assert test.removed and client.get(url(world.job, world.wall, pk)).status_code == 404
    assert client.get(pred).json()["tests"] == []  # the cached prediction followed the removal
    assert Event.objects.filter(verb="field_test.removed", target_id=str(pk)).count() == 1


# --------------------------------------------------------------------------- the wall page's form
def page_post(world, user, text: str, **over):
    from django.test import Client

    c = Client()
    c.force_login(user)
    data = {k: v for k, v in body(bands=..., source=...).items()}
    data.update(over)
    upload = SimpleUploadedFile("levels.csv", text.encode(), content_type="text/csv")
    return c.post(
        f"/jobs/{world.job.id}/walls/{world.wall.id}/field-tests/", {**data, "file": upload}, follow=True
    )


def test_wall_page_form_stores_the_same_test_as_the_api(world, api):
    """One write path: the form and the API store equal rows and events (ids and times aside)."""
    from qa.models import Event

    r = page_post(world, world.inspector, csv_text())
    html = r.content.decode()
    assert (
        r.status_code == 200 and "data-field-messages" in html and "Field test of 2026-11-20 stored" in html
    )
    upload = SimpleUploadedFile("levels.csv", csv_text().encode(), content_type="text/csv")
    data = {k: v for k, v in body(bands=...).items()}
    assert api(world.inspector).post(url(world.job, world.wall), {**data, "file": upload}).status_code == 201
    page, via_api = FieldTest.objects.order_by("id")
    skip = {"_state", "id", "created_at"}
    assert {k: v for k, v in vars(page).items() if k not in skip} == {
        k: v for k, v in vars(via_api).items() if k not in skip
    }
    events = list(Event.objects.filter(verb="field_test.created").order_by("id"))
    assert len(events) == 2 and events[0].data == events[1].data and events[0].actor == events[1].actor
    assert page.results["dnt_w"]["value"] == 50  # the hand-calculated value of the API tests above


def test_wall_page_form_refuses_bad_input_beside_the_form_and_stores_nothing(world):
    r = page_post(world, world.inspector, csv_text(["510,95,45,30,0.5"]))
    html = r.content.decode()
    note = html.split("data-field-messages>", 1)[1].split("</div>", 1)[0]
    assert "Field test not stored" in note and "row 2.band_hz" in note and "one-third-octave centre" in note
    assert 'id="field-test-form" open' in html, "the form stays open beside its error"
    assert 'value="R. Alvarez (fictional)"' in html and 'value="2026-11-20"' in html, "what was typed is kept"
    r = page_post(world, world.inspector, csv_text(), volume_m3="-3")
    assert "volume_m3" in r.content.decode() and "must be &gt; 0" in r.content.decode()
    assert not FieldTest.objects.exists()


@pytest.mark.parametrize("role", ["owner", "crew", "outsider"])
def test_wall_page_form_is_for_those_who_may_edit(world, role):
    user = {"owner": world.owner, "crew": world.electrician, "outsider": world.outsider}[role]
    r = page_post(world, user, csv_text())
    assert r.status_code in (403, 404) and not FieldTest.objects.exists()
