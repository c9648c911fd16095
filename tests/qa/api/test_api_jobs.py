"""Jobs API: /api/jobs/ lists only the user's jobs; a job is read-only through the API."""

from __future__ import annotations

import pytest

from qa.models import Job
from tests.qa.roles import as_role

pytestmark = pytest.mark.django_db


def test_job_list_shows_only_my_jobs_with_my_role(world, api):
    r = api(world.electrician).get("/api/jobs/")
    assert r.status_code == 200
    assert [(j["name"], j["role"], j["trade"]) for j in r.json()["results"]] == [
        ("Test Block A", "crew", "electrical")
    ]
    r = api(world.outsider).get("/api/jobs/")
    assert [(j["name"], j["role"], j["trade"]) for j in r.json()["results"]] == [
        ("Other Block", "inspector", None)
    ]


def test_job_detail_shows_units(world, api):
    r = api(world.owner).get(f"/api/jobs/{world.job.id}/")
    assert r.status_code == 200 and r.json()["units"] == "metric" and r.json()["role"] == "owner"


def test_inactive_member_does_not_see_the_job(world, api):
    world.job.members.filter(user=world.owner).update(active=False)
    assert api(world.owner).get("/api/jobs/").json()["count"] == 0
    assert api(world.owner).get(f"/api/jobs/{world.job.id}/").status_code == 404


@pytest.mark.parametrize(
    "role, status",
    [
        ("inspector", 200),
        ("crew", 200),
        ("crew_other_trade", 200),
        ("owner", 200),
        ("outsider", 404),
        ("anonymous", 403),
    ],
)
def test_who_sees_the_job(world, api, role, status):
    assert as_role(world, api, role).get(f"/api/jobs/{world.job.id}/").status_code == status


def test_unknown_job_is_404_like_a_job_of_others(world, api):
    client = api(world.outsider)
    assert (
        client.get("/api/jobs/999999/").status_code
        == client.get(f"/api/jobs/{world.job.id}/").status_code
        == 404
    )


@pytest.mark.parametrize(
    "method, path",
    [
        ("post", "/api/jobs/"),
        ("put", "/api/jobs/{id}/"),
        ("patch", "/api/jobs/{id}/"),
        ("delete", "/api/jobs/{id}/"),
    ],
)
def test_jobs_are_read_only_through_the_api(world, api, method, path):
    r = getattr(api(world.inspector), method)(
        path.format(id=world.job.id), {"name": "Renamed"}, format="json"
    )
    assert r.status_code == 405
    world.job.refresh_from_db()
    assert world.job.name == "Test Block A" and Job.objects.count() == 2


def test_anonymous_is_told_to_sign_in(world, api):
    r = api().get("/api/jobs/")
    assert r.status_code == 403 and r.json() == {"detail": "Authentication credentials were not provided."}
