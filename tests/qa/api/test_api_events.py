"""Events API: /api/jobs/{job}/events/, the append-only audit trail (read-only)."""

from __future__ import annotations

import pytest

from qa.models import Event
from qa.models.events import AppendOnlyError
from tests.qa.roles import ROLES, SEE, as_role

pytestmark = pytest.mark.django_db


def url(job) -> str:
    return f"/api/jobs/{job.id}/events/"


def test_a_change_shows_in_the_trail_newest_first(world, api):
    client = api(world.inspector)
    point = world.wall.seal_points.first()
    client.patch(
        f"/api/jobs/{world.job.id}/walls/{world.wall.id}/seal-points/{point.id}/",
        {"status": "pass"},
        format="json",
    )
    client.patch(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/", {"location": "moved"}, format="json")
    events = client.get(url(world.job)).json()["results"]
    assert [(e["verb"], e["actor"]) for e in events] == [
        ("wall.changed", "insp"),
        ("sealpoint.checked", "insp"),
    ]
    filtered = client.get(url(world.job), {"target_type": "sealpoint", "target_id": point.id}).json()
    assert [e["data"] for e in filtered["results"]] == [{"from": "unchecked", "to": "pass", "version": 2}]


def test_another_jobs_events_are_not_listed(world, api):
    Event.record(world.other_job, world.outsider, "wall.created", world.other_wall)
    Event.record(world.job, world.inspector, "wall.created", world.wall)
    events = api(world.inspector).get(url(world.job)).json()["results"]
    assert [e["target_id"] for e in events] == [str(world.wall.id)]
    assert api(world.inspector).get(url(world.other_job)).status_code == 404


@pytest.mark.parametrize("method", ["post", "put", "patch", "delete"])
def test_the_trail_cannot_be_written_through_the_api(world, api, method):
    event = Event.record(world.job, world.inspector, "wall.created", world.wall)
    r = getattr(api(world.inspector), method)(url(world.job), {"verb": "x"}, format="json")
    assert r.status_code == 405
    r = getattr(api(world.inspector), method)(f"{url(world.job)}{event.id}/", {"verb": "x"}, format="json")
    assert r.status_code == 404  # there is no detail route at all
    assert list(Event.objects.values_list("verb", flat=True)) == ["wall.created"]


def test_events_are_append_only_in_the_model(world):
    event = Event.record(world.job, world.inspector, "wall.created", world.wall)
    event.verb = "forged"
    with pytest.raises(AppendOnlyError):
        event.save()
    with pytest.raises(AppendOnlyError):
        event.delete()
    with pytest.raises(AppendOnlyError):
        Event.objects.all().update(verb="forged")
    with pytest.raises(AppendOnlyError):
        Event.objects.all().delete()
    assert Event.objects.get().verb == "wall.created"


@pytest.mark.parametrize("role", ROLES)
def test_who_reads_the_trail(world, api, role):
    Event.record(world.job, world.inspector, "wall.created", world.wall)
    assert as_role(world, api, role).get(url(world.job)).status_code == SEE[role]
