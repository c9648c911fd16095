"""The hand-written finding form (qa.api.finding_json) equals DRF's own field-by-field output.

The oracle is Django REST framework's generic ``ModelSerializer.to_representation`` run on the same
serializer: every declared field rendered by its own DRF field class. Findings cover both unit
systems, every size present and absent, lifecycle moments set and unset, removed and live
photos, and a non-UTC current time zone.
"""

from __future__ import annotations

import datetime as dt
import json

import pytest
from django.utils import timezone
from rest_framework import serializers

from qa.api.serializers import FindingSerializer
from qa.models import Finding, Photo

pytestmark = pytest.mark.django_db


def drf_form(finding, job):
    ser = FindingSerializer(finding, context={"job": job})
    return serializers.ModelSerializer.to_representation(ser, finding)


def findings(world):
    when = dt.datetime(2026, 3, 2, 9, 15, 7, 123456, tzinfo=dt.UTC)
    on_wall = {"job": world.job, "wall": world.wall}
    made = [
        Finding.objects.create(
            **on_wall, kind="slit", face="a", width_m=0.003, length_m=0.5, trade="drywall",
            note="gap at the top track", created_by=world.inspector,
        ),
        Finding.objects.create(
            **on_wall, kind="hole", face="through", diameter_m=0.0127, depth_m=0.0159, trade="plumbing",
            status="fixed", fix_note="sealed", fixed_at=when, device_time=when, along_m=1.25,
            along_from="end", height_band="low", created_by=world.drywaller,
        ),
        Finding.objects.create(
            **on_wall, kind="area", face="b", area_m2=0.0042, count=3, at_edge=True, trade="electrical",
            status="verified", fixed_at=when, verified_at=when + dt.timedelta(hours=2), along_m=0.0,
            along_from="start", created_by=world.electrician,
        ),
    ]  # fmt: skip
    photos = [
        Photo.objects.create(
            **on_wall, finding=made[0], sha256=str(i) * 64, uploaded_by=world.inspector,
            image=f"p/{i}.jpg", thumbnail=f"p/{i}_t.jpg", removed=bool(i),
        )
        for i in range(2)  # one live photo, one removed
    ]  # fmt: skip
    return made, photos[0]


@pytest.mark.parametrize("units", ["metric", "imperial"])
def test_equal_to_drf_in_both_unit_systems(world, units):
    world.job.units = units
    world.job.save()
    made, photo = findings(world)
    for f in Finding.objects.filter(pk__in=[m.pk for m in made]).select_related("created_by"):
        ours = FindingSerializer(f, context={"job": world.job}).data
        theirs = drf_form(f, world.job)
        assert json.dumps(ours) == json.dumps(theirs), f.kind  # same keys, same order, same text
    first = FindingSerializer(made[0], context={"job": world.job}).data
    assert first["photos"] == [str(photo.id)], "removed photos are left out"


def test_equal_to_drf_in_another_time_zone(world):
    made, _photo = findings(world)
    with timezone.override("America/Halifax"):
        for f in made:
            assert FindingSerializer(f, context={"job": world.job}).data == drf_form(f, world.job)


def test_bundle_findings_equal_the_api_form(world):
    """The walk's bundle writes findings from database rows; each equals the API's form of it."""
    from qa.models import Member
    from qa.walk.bundle import build_bundle

    made, _photo = findings(world)
    member = Member.objects.get(job=world.job, user=world.inspector)
    bundled = {f["id"]: f for f in build_bundle(world.job, member)["findings"]}
    assert set(bundled) == {f.pk for f in made}
    for f in Finding.objects.filter(pk__in=bundled).select_related("created_by"):
        assert json.dumps(bundled[f.pk]) == json.dumps(drf_form(f, world.job)), f.kind
