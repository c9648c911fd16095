"""GET /api/jobs/{job}/bundle/: the walk's offline copy of a job."""

from __future__ import annotations

import pytest

from qa.models import Finding

pytestmark = pytest.mark.django_db


def url(job) -> str:
    return f"/api/jobs/{job.id}/bundle/"


def make_finding(world, trade):
    return Finding.objects.create(
        job=world.job, wall=world.wall, kind="hole", diameter_m=0.02, trade=trade, created_by=world.inspector
    )


def test_bundle_holds_the_job_in_its_units(world, api):
    make_finding(world, "electrical")
    response = api(world.inspector).get(url(world.job))
    assert response.status_code == 200
    body = response.json()
    assert body["job"]["units"] == "metric" and body["job"]["symbols"]["gap"] == "mm"
    assert [w["tag"] for w in body["walls"]] == ["2-01"]
    assert body["walls"][0]["length"] == pytest.approx(6.0)
    assert len(body["seal_points"]) == world.wall.seal_points.count()
    assert body["findings"][0]["diameter"] == pytest.approx(20)  # 0.02 m shown in mm
    assert {m["username"] for m in body["members"]} == {"insp", "elec", "dry", "own"}
    assert response["ETag"] == f'"{body["version"]}"'


def test_prefill_converts_template_geometry_to_job_units(world, api):
    from qa.walk.bundle import prefill

    point = world.wall.seal_points.filter(gap__has_key="length_fraction").first()
    if point is None:
        point = world.wall.seal_points.first()
        point.gap = {"width_m": 0.006, "length_fraction": 0.5}
        point.gap_kind = "slit"
    out = prefill(point, world.wall, "imperial")
    expected = point.gap["length_fraction"] * world.wall.length_m / 0.0254  # inches, exact factor
    assert out["length"] == pytest.approx(expected, abs=1e-3)
    assert out["width"] == pytest.approx(point.gap["width_m"] / 0.0254, abs=1e-3)


def test_etag_answers_not_modified_until_something_changes(world, api):
    client = api(world.inspector)
    etag = client.get(url(world.job))["ETag"]
    assert client.get(url(world.job), HTTP_IF_NONE_MATCH=etag).status_code == 304
    make_finding(world, "drywall")
    assert client.get(url(world.job), HTTP_IF_NONE_MATCH=etag).status_code == 200


def test_crew_bundle_has_only_their_trade(world, api):
    make_finding(world, "electrical")
    make_finding(world, "drywall")
    body = api(world.electrician).get(url(world.job)).json()
    assert {f["trade"] for f in body["findings"]} == {"electrical"}
    assert body["me"] == {"username": "elec", "name": "elec", "role": "crew", "trade": "electrical"}
    assert body["conflicts"] == []


def test_the_bundle_carries_each_walls_last_audit(world, api):
    make_finding(world, "electrical")
    body = api(world.inspector).get(url(world.job)).json()
    audit = body["audits"][str(world.wall.id)]
    assert audit["designed"] is not None and audit["target"] == 50
    finding = Finding.objects.get()
    assert str(finding.client_id) in audit["includes"]


def test_access(world, api):
    assert api(world.outsider).get(url(world.job)).status_code == 404
    assert api().get(url(world.job)).status_code in (401, 403)
    assert api(world.owner).get(url(world.job)).status_code == 200
    assert api(world.inspector).delete(url(world.job)).status_code == 405


def test_bundle_carries_the_rules_the_walk_forms_apply_from_their_one_source(world, api):
    from qa.choices import SIZE_RULES, STATUS_GROUPS

    body = api(world.inspector).get(url(world.job)).json()
    assert body["size_rules"] == {k: {n: list(v) for n, v in r.items()} for k, r in SIZE_RULES.items()}
    assert body["status_groups"] == {k: list(v) for k, v in STATUS_GROUPS.items()}
    assert body["job"]["symbols"]["small_area"] == "cm²"
    assert body["job"]["unit_factors"]["small_area"] == {"factor": 1e-4, "symbol": "cm²"}
    assert [v for v, _ in body["choices"]["height_bands"]] == ["low", "middle", "high"]


def test_prefilled_sizes_keep_their_precision(world, api):
    """A back-box leak of 6 cm² is 0.0006 m²: rounding to 4 decimals of m² would make it 0.0006 or 0.0005
    at random; six significant digits keep it exact (common practice for display, no source)."""
    point = world.wall.seal_points.order_by("position").first()
    point.gap_kind, point.gap = "back_to_back", {"area_m2": 0.000645}
    point.save()
    body = api(world.inspector).get(url(world.job)).json()
    row = next(p for p in body["seal_points"] if p["id"] == point.id)
    assert row["prefill"]["area"] == 0.000645


def test_photos_come_with_their_full_image_address_and_thumbnail_size(world, api):
    import io

    from PIL import Image

    from qa import actions
    from qa.models import Member

    out = io.BytesIO()
    Image.effect_noise((400, 300), 50).convert("RGB").save(out, "JPEG")
    actor = actions.Actor(Member.objects.get(job=world.job, user=world.inspector))
    photo = actions.store_photo(actor, out.getvalue(), wall=world.wall)
    row = api(world.inspector).get(url(world.job)).json()["photos"][0]
    assert row["image_url"].endswith(f"/photos/{photo.id}/image")
    assert row["thumb_bytes"] == photo.thumbnail.size > 0
