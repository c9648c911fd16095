"""Lists may answer with a wall's audit from a moment ago while its newest changes are counted.

A wall recorded fast (a sync every moment) would otherwise have its whole audit worked out again for
every reader of the wall list and the walk's bundle. The rules checked here: only within ``max_age``
seconds, always marked (``recounting`` and the verdict's text), never for one wall's own answer, and
a fresh audit as soon as the window has passed. Product rules, no published source.
"""

from __future__ import annotations

import uuid

import pytest

from qa.audit import summary
from qa.audit.verdicts import RECOUNTING
from qa.models import Finding, Wall

pytestmark = pytest.mark.django_db


def hole(world, diameter_m=0.03) -> Finding:
    return Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="hole",
        face="through",
        diameter_m=diameter_m,
        trade="plumbing",
        created_by=world.inspector,
    )


def walls(world) -> list[Wall]:
    return list(Wall.objects.filter(pk=world.wall.pk).select_related("wall_type"))


def counted(audit: dict) -> set[int]:
    return {row["finding"] for row in audit["rows"]}


def test_within_the_window_the_last_audit_is_answered_and_marked(world):
    first = hole(world)
    before = summary.audits_for_walls(walls(world), max_age=60)[world.wall.pk]
    assert counted(before) == {first.pk} and "recounting" not in before
    second = hole(world, 0.05)

    listed = summary.audits_for_walls(walls(world), max_age=60)[world.wall.pk]
    assert listed["recounting"] is True
    assert counted(listed) == {first.pk}, "the audit of a moment ago, not a mix"
    assert listed["as_found"] == before["as_found"]

    own = summary.audits_for_walls(walls(world))[world.wall.pk]  # max_age 0: a wall's own answer
    assert "recounting" not in own and counted(own) == {first.pk, second.pk}
    assert own["as_found"] < before["as_found"], "the second hole costs rating points"
    # Once recounted, lists get the new audit too.
    again = summary.audits_for_walls(walls(world), max_age=60)[world.wall.pk]
    assert "recounting" not in again and counted(again) == {first.pk, second.pk}


def test_after_the_window_the_wall_is_recounted(world, monkeypatch):
    hole(world)
    summary.audits_for_walls(walls(world), max_age=2)
    second = hole(world, 0.05)
    now = summary.time.time()
    monkeypatch.setattr(summary.time, "time", lambda: now + 2.5)
    fresh = summary.audits_for_walls(walls(world), max_age=2)[world.wall.pk]
    assert "recounting" not in fresh and second.pk in counted(fresh)


def test_the_verdict_says_it_is_being_recounted(world):
    from qa.audit.verdicts import verdicts_for_walls

    summary.audits_for_walls(walls(world))
    hole(world)
    listed = verdicts_for_walls(walls(world), max_age=60)[world.wall.pk]
    assert listed["recounting"] is True and listed["text"].endswith(RECOUNTING)
    own = verdicts_for_walls(walls(world))[world.wall.pk]
    assert own["recounting"] is False and RECOUNTING not in own["text"]


def test_api_wall_list_marks_it_and_the_wall_itself_is_recounted(world, api, settings):
    settings.LIST_MAX_AGE = 60
    client = api(world.owner)
    listing = f"/api/jobs/{world.job.id}/walls/"
    before = client.get(listing).json()["results"][0]["verdict"]
    assert before["recounting"] is False
    hole(world, 0.08)
    row = client.get(listing).json()["results"][0]
    assert row["findings_open"] == 1, "counts are always live"
    assert row["verdict"]["recounting"] is True and row["verdict"]["text"].endswith(RECOUNTING)
    assert row["verdict"]["ratings"]["current"] == before["ratings"]["current"]
    one = client.get(f"{listing}{world.wall.pk}/").json()["verdict"]
    assert one["recounting"] is False
    assert one["ratings"]["current"] < before["ratings"]["current"]


def test_a_bundle_built_with_older_audits_lists_what_they_counted(world, api):
    from qa.models import Member
    from qa.walk.bundle import build_bundle

    owner = Member.objects.get(job=world.job, user=world.owner)
    first = hole(world)
    build_bundle(world.job, owner, audit_age=60)
    op = {
        "op_id": str(uuid.uuid4()),
        "kind": "finding.create",
        "payload": {
            "client_id": str(uuid.uuid4()),
            "wall": world.wall.pk,
            "kind": "hole",
            "diameter": 40,
            "trade": "plumbing",
        },
    }
    api(world.inspector).post(
        f"/api/jobs/{world.job.id}/sync/", {"device_id": "p1", "ops": [op]}, format="json"
    )
    body = build_bundle(world.job, owner, audit_age=60)
    audit = body["audits"][str(world.wall.pk)]
    assert audit["includes"] == [str(first.client_id)], "the walk shows the new finding as not counted yet"
    assert len(body["findings"]) == 2
    assert body["verdicts"][str(world.wall.pk)]["recounting"] is True


def test_while_one_reader_recounts_the_others_answer_with_the_last_audit(world, monkeypatch):
    first = hole(world)
    summary.audits_for_walls(walls(world), max_age=2)
    second = hole(world, 0.05)
    now = summary.time.time()
    monkeypatch.setattr(summary.time, "time", lambda: now + 5)  # past the window
    # Another reader holds the recount of this wall: the last audit is answered, marked.
    ids = str(world.wall.pk)
    lock = "sealwalk:audit-recount:" + summary.hashlib.sha256(ids.encode()).hexdigest()[:24]
    assert summary.cache.add(lock, 1, 60)
    waiting = summary.audits_for_walls(walls(world), max_age=2)[world.wall.pk]
    assert waiting["recounting"] is True and counted(waiting) == {first.pk}
    summary.cache.delete(lock)
    done = summary.audits_for_walls(walls(world), max_age=2)[world.wall.pk]
    assert "recounting" not in done and counted(done) == {first.pk, second.pk}
    assert summary.cache.add(lock, 1, 60), "the recount let go of its lock"


def test_a_reader_recounts_the_oldest_few_and_the_next_reader_the_rest(world, monkeypatch):
    second_wall = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-02", level="2", length_m=5.0, height_m=2.7,
        target_rating=50,
    )  # fmt: skip
    both = list(Wall.objects.filter(job=world.job).select_related("wall_type").order_by("id"))
    summary.audits_for_walls(both[:1], max_age=2)  # the first wall's audit is the older one
    start = summary.time.time()
    monkeypatch.setattr(summary.time, "time", lambda: start + 1)
    summary.audits_for_walls(both[1:], max_age=2)
    hole(world)
    Finding.objects.create(
        job=world.job, wall=second_wall, kind="hole", face="through", diameter_m=0.03, trade="plumbing",
        created_by=world.inspector,
    )  # fmt: skip
    monkeypatch.setattr(summary, "RECOUNT_AT_ONCE", 1)
    monkeypatch.setattr(summary.time, "time", lambda: start + 10)  # both past the window
    first = summary.audits_for_walls(both, max_age=2)
    assert "recounting" not in first[world.wall.pk], "the oldest is recounted"
    assert first[second_wall.pk]["recounting"] is True and not first[second_wall.pk]["rows"]
    second = summary.audits_for_walls(both, max_age=2)
    assert "recounting" not in second[second_wall.pk] and len(second[second_wall.pk]["rows"]) == 1


def test_a_list_of_verdicts_reads_only_the_headlines_and_says_the_same(world, monkeypatch):
    from qa.audit.verdicts import coverage_for_walls, verdict, verdicts_for_walls

    hole(world)
    hole(world, 0.05)
    whole = summary.audits_for_walls(walls(world))[world.wall.pk]
    read: list[str] = []
    get_many = summary.cache.get_many
    monkeypatch.setattr(summary.cache, "get_many", lambda keys: read.extend(keys) or get_many(keys))
    listed = verdicts_for_walls(walls(world), max_age=60)[world.wall.pk]
    assert read == [summary._latest_key(world.wall.pk)], "no whole audit is read for a list"
    assert listed == verdict(whole, coverage_for_walls(walls(world))[world.wall.pk])
    head = summary.headline(whole)
    assert len(repr(head)) < len(repr(whole)) / 5
    assert head["key"] == whole["key"] and head["reported"] == {"as_found": whole["reported"]["as_found"]}


def test_a_whole_audit_gone_from_the_cache_is_recounted_not_lost(world):
    first = hole(world)
    summary.audits_for_walls(walls(world), max_age=60)
    key = summary.audit_keys(walls(world))[world.wall.pk]
    summary.cache.delete(key)  # culled: the headline still names it
    again = summary.audits_for_walls(walls(world), max_age=60)[world.wall.pk]
    assert "recounting" not in again and counted(again) == {first.pk}
