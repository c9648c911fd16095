"""The walk's bundle shared for a moment by the people with one view of a job.

With ``LIST_MAX_AGE`` seconds, owners polling a job fast share one copy instead of each building
megabytes of JSON; nobody is shown a copy from before their own change; a crew member never gets
another view's copy; past the window a copy is built anew. Product rules, no published source.
"""

from __future__ import annotations

import uuid

import pytest

from qa.models import Member
from qa.walk import bundle
from tests.conftest import make_user

pytestmark = pytest.mark.django_db


def url(job) -> str:
    return f"/api/jobs/{job.id}/bundle/"


def sync_hole(client, world, trade="plumbing") -> str:
    cid = str(uuid.uuid4())
    op = {
        "op_id": str(uuid.uuid4()),
        "kind": "finding.create",
        "payload": {"client_id": cid, "wall": world.wall.pk, "kind": "hole", "diameter": 25, "trade": trade},
    }
    answer = client.post(f"/api/jobs/{world.job.id}/sync/", {"device_id": "p1", "ops": [op]}, format="json")
    assert answer.json()["results"][0]["status"] == "applied"
    return cid


def client_ids(body) -> set[str]:
    return {f["client_id"] for f in body["findings"]}


@pytest.fixture
def second_owner(world):
    user = make_user("own2", first_name="Otto")
    Member.objects.create(job=world.job, user=user, role="owner")
    return user


def test_owners_share_a_copy_but_the_writer_sees_their_change(world, api, settings, second_owner):
    settings.LIST_MAX_AGE = 60
    first = api(world.owner).get(url(world.job))
    new = sync_hole(api(world.inspector), world)

    other = api(second_owner).get(url(world.job))
    assert other["ETag"] == first["ETag"], "the same copy, a moment old"
    body = other.json()
    assert new not in client_ids(body)
    assert body["me"]["username"] == "own2" and body["generated_at"] == first.json()["generated_at"]

    writer = api(world.inspector).get(url(world.job)).json()
    assert new in client_ids(writer), "the inspector just synced it: never a copy from before"
    assert writer["me"]["username"] == "insp"


def test_a_crew_member_gets_their_own_view(world, api, settings):
    settings.LIST_MAX_AGE = 60
    sync_hole(api(world.inspector), world, trade="electrical")
    sync_hole(api(world.inspector), world, trade="drywall")
    everyone = api(world.owner).get(url(world.job)).json()
    assert {f["trade"] for f in everyone["findings"]} == {"electrical", "drywall"}
    crew = api(world.electrician).get(url(world.job)).json()
    assert {f["trade"] for f in crew["findings"]} == {"electrical"}
    assert crew["me"]["trade"] == "electrical"


def test_past_the_window_a_copy_is_built_anew(world, api, settings, monkeypatch, second_owner):
    settings.LIST_MAX_AGE = 2
    api(world.owner).get(url(world.job))
    new = sync_hole(api(world.inspector), world)
    now = bundle.time.time()
    monkeypatch.setattr(bundle.time, "time", lambda: now + 3)
    assert new in client_ids(api(second_owner).get(url(world.job)).json())


def test_without_a_window_every_read_is_built_anew(world, api, settings, second_owner):
    settings.LIST_MAX_AGE = 0
    api(world.owner).get(url(world.job))
    new = sync_hole(api(world.inspector), world)
    assert new in client_ids(api(second_owner).get(url(world.job)).json())


def test_while_one_reader_builds_the_others_keep_the_copy(world, api, settings, monkeypatch, second_owner):
    settings.LIST_MAX_AGE = 2
    first = api(world.owner).get(url(world.job))
    new = sync_hole(api(world.inspector), world)
    now = bundle.time.time()
    monkeypatch.setattr(bundle.time, "time", lambda: now + 3)  # past the window
    lock = f"sealwalk:bundle:{bundle.BUNDLE_FORMAT}:{world.job.pk}:owner:building"
    assert bundle.cache.add(lock, 1, 60)  # another reader is building
    waiting = api(second_owner).get(url(world.job))
    assert waiting["ETag"] == first["ETag"] and new not in client_ids(waiting.json())
    bundle.cache.delete(lock)
    assert new in client_ids(api(second_owner).get(url(world.job)).json())
    assert bundle.cache.add(lock, 1, 60), "the build let go of its lock"


def test_whoever_changed_something_gets_audits_that_count_it(world, api, settings):
    settings.LIST_MAX_AGE = 60
    client = api(world.inspector)
    client.get(url(world.job))  # audits computed a moment ago
    new = sync_hole(client, world)
    body = client.get(url(world.job)).json()
    assert new in body["audits"][str(world.wall.pk)]["includes"]
    assert body["verdicts"][str(world.wall.pk)]["recounting"] is False


def test_a_shared_copy_is_fetched_once_per_process(world, api, settings, monkeypatch, second_owner):
    settings.LIST_MAX_AGE = 60
    first = api(world.owner).get(url(world.job))
    version = first["ETag"].strip('"')
    fetched: list[str] = []
    get = bundle.cache.get
    monkeypatch.setattr(bundle.cache, "get", lambda key, *a: fetched.append(key) or get(key, *a))
    api(second_owner).get(url(world.job))
    assert not [k for k in fetched if ":text:" in k], "kept in this process since it was built here"
    bundle._TEXTS.clear()  # another process: it reads the copy from the cache once, then keeps it
    for _ in range(2):
        again = api(second_owner).get(url(world.job))
        assert again["ETag"] == first["ETag"] and again.json()["me"]["username"] == "own2"
    assert [k for k in fetched if ":text:" in k] == [f"{_key(world)}:text:{version}"]


def test_a_copy_gone_from_the_cache_is_built_again(world, api, settings, second_owner):
    settings.LIST_MAX_AGE = 60
    first = api(world.owner).get(url(world.job))
    bundle.cache.delete(f"{_key(world)}:text:{first['ETag'].strip(chr(34))}")
    bundle._TEXTS.clear()
    again = api(second_owner).get(url(world.job))
    assert again.status_code == 200 and again["ETag"] == first["ETag"], "nothing changed: the same content"
    assert client_ids(again.json()) == client_ids(first.json())


def _key(world) -> str:
    return f"sealwalk:bundle:{bundle.BUNDLE_FORMAT}:{world.job.pk}:owner"
