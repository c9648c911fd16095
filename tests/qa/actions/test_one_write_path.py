"""Every write the product knows lands the same way through each door: the REST API, the walk's sync
and the crew/check pages.

Each case runs once per door on its own fresh wall of the same job and compares what was stored —
the rows the write touches and the events it recorded — after replacing ids, tags and device
fields by placeholders. A door that writes one column or one event field differently fails.
"""

from __future__ import annotations

import hashlib
import io
import uuid

import pytest
from django.urls import reverse
from PIL import Image

from qa.models import Conflict, Event, Finding, Photo, SealPoint, Wall

pytestmark = pytest.mark.django_db

FINDING_BODY = {"kind": "slit", "face": "a", "width": 6, "length": 900, "trade": "electrical", "note": "gap"}
FINDING_FIELDS = (
    "kind",
    "face",
    "width_m",
    "length_m",
    "diameter_m",
    "depth_m",
    "area_m2",
    "fill",
    "at_edge",
    "count",
    "trade",
    "note",
    "status",
    "fix_note",
    "version",
    "removed",
)


def jpeg() -> bytes:
    out = io.BytesIO()
    Image.effect_noise((320, 240), 40).convert("RGB").save(out, "JPEG", quality=85)
    return out.getvalue()


PHOTO = jpeg()


class Door:
    """One way into the record, as the person using it would go."""

    def __init__(self, world, api, client):
        self.world, self.api, self.client = world, api, client

    # --- helpers shared by the doors -------------------------------------------------------------
    def sync(self, user, kind, payload, base=None):
        body = {
            "device_id": "phone-1",
            "ops": [
                {
                    "op_id": str(uuid.uuid4()),
                    "kind": kind,
                    "base_version": base,
                    "payload": payload,
                    "device_at": "2026-03-02T09:15:00+00:00",
                }
            ],
        }
        r = self.api(user).post(f"/api/jobs/{self.world.job.id}/sync/", body, format="json")
        assert r.status_code == 200, r.content
        answer = r.json()["results"][0]
        assert answer["status"] in ("applied", "conflict"), answer
        return answer


def fresh_wall(world, n: int) -> Wall:
    wall = Wall.objects.create(
        job=world.job,
        wall_type=world.wall_type,
        tag=f"7-{n:02d}",
        level="7",
        length_m=6.0,
        height_m=2.7,
        target_rating=50,
    )
    wall.add_template_seal_points()
    return wall


def seeded_finding(world, wall, status="open") -> Finding:
    point = wall.seal_points.order_by("position").first()
    return Finding.objects.create(
        job=world.job,
        wall=wall,
        seal_point=point,
        kind="slit",
        face="a",
        width_m=0.006,
        length_m=0.9,
        trade="electrical",
        created_by=world.inspector,
        status=status,
    )


# --- the writes, one function per door -----------------------------------------------------------


def create(door: str, world, api, client, wall):
    point = wall.seal_points.order_by("position").first()
    body = {**FINDING_BODY, "wall": wall.id, "seal_point": point.id, "client_id": str(uuid.uuid4())}
    if door == "api":
        r = api(world.inspector).post(f"/api/jobs/{world.job.id}/findings/", body, format="json")
        assert r.status_code == 201, r.json()
    else:
        Door(world, api, client).sync(world.inspector, "finding.create", body)


def tick(door, world, api, client, wall):
    point = wall.seal_points.order_by("position").first()
    if door == "api":
        url = f"/api/jobs/{world.job.id}/walls/{wall.id}/seal-points/{point.id}/"
        r = api(world.inspector).patch(url, {"status": "pass"}, format="json")
        assert r.status_code == 200, r.json()
    else:
        Door(world, api, client).sync(
            world.inspector, "seal_point.status", {"seal_point": point.id, "status": "pass"}, 1
        )


def edit(door, world, api, client, wall):
    f = seeded_finding(world, wall)
    if door == "api":
        r = api(world.inspector).patch(
            f"/api/jobs/{world.job.id}/findings/{f.id}/", {"width": 9, "version": 1}, format="json"
        )
        assert r.status_code == 200, r.json()
    else:
        Door(world, api, client).sync(
            world.inspector, "finding.update", {"finding": str(f.client_id), "changes": {"width": 9}}, 1
        )


def step(name: str, start: str, user_attr: str):
    def run(door, world, api, client, wall):
        f = seeded_finding(world, wall, status=start)
        user = getattr(world, user_attr)
        note = "the box was packed and sealed again"
        if door == "api":
            r = api(user).post(
                f"/api/jobs/{world.job.id}/findings/{f.id}/{name}/", {"note": note}, format="json"
            )
            assert r.status_code == 200, r.json()
        elif door == "sync":
            Door(world, api, client).sync(
                user, f"finding.{name}", {"finding": str(f.client_id), "note": note}, 1
            )
        else:
            client.force_login(user)
            if name == "fix":
                url = reverse("qa:finding-fixed", args=[world.job.id, f.id])
                r = client.post(url, {"note": note})
            else:
                url = reverse("qa:finding-check", args=[world.job.id, f.id])
                r = client.post(url, {"note": note, "action": name})
            assert r.status_code == 302
            assert Finding.objects.get(pk=f.pk).version == 2, "the page did not apply the step"

    return run


def remove(door, world, api, client, wall):
    f = seeded_finding(world, wall)
    if door == "api":
        r = api(world.inspector).delete(f"/api/jobs/{world.job.id}/findings/{f.id}/")
        assert r.status_code == 204
    else:
        Door(world, api, client).sync(world.inspector, "finding.remove", {"finding": str(f.client_id)}, 1)


def photo(door, world, api, client, wall):
    f = seeded_finding(world, wall)
    pid = str(uuid.uuid4())
    user = world.electrician
    if door == "api":
        upload = io.BytesIO(PHOTO)
        upload.name = "fix.jpg"
        r = api(user).post(
            f"/api/jobs/{world.job.id}/photos/",
            {"id": pid, "finding": f.id, "wall": wall.id, "purpose": "fix", "image": upload},
            format="multipart",
        )
        assert r.status_code == 201, r.json()
    else:  # the walk's resumable upload
        c = api(user)
        base = f"/api/jobs/{world.job.id}/uploads/"
        open_body = {
            "id": pid,
            "finding": str(f.client_id),
            "purpose": "fix",
            "total_bytes": len(PHOTO),
            "sha256": hashlib.sha256(PHOTO).hexdigest(),
        }
        assert c.post(base, open_body, format="json").status_code == 201
        r = c.put(f"{base}{pid}/?offset=0", PHOTO, content_type="application/octet-stream")
        assert r.status_code == 200, r.content
        assert c.post(f"{base}{pid}/finish/").status_code == 201


def resolve(door, world, api, client, wall):
    f = seeded_finding(world, wall)
    f.version = 2
    f.save()
    conflict = Conflict.objects.create(
        finding=f,
        base_version=1,
        server_version={},
        device_version={"changes": {"width": 9}},
        created_by=world.inspector,
    )
    if door == "api":  # the walk's resolve endpoint
        r = api(world.inspector).post(
            f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/", {"keep": "device"}, format="json"
        )
        assert r.status_code == 200, r.json()
    else:
        Door(world, api, client).sync(
            world.inspector, "conflict.resolve", {"conflict": conflict.id, "keep": "device"}
        )


CASES = {
    "create a finding": (create, ("api", "sync")),
    "tick a seal point": (tick, ("api", "sync")),
    "edit a finding": (edit, ("api", "sync")),
    "mark fixed": (step("fix", "open", "electrician"), ("api", "sync", "page")),
    "verify": (step("verify", "fixed", "inspector"), ("api", "sync", "page")),
    "reopen": (step("reopen", "verified", "inspector"), ("api", "sync", "page")),
    "remove a finding": (remove, ("api", "sync")),
    "store a photo": (photo, ("api", "sync")),
    "resolve a conflict": (resolve, ("api", "sync")),
}


def snapshot(world, wall) -> dict:
    """What one wall's write left behind, with ids, tags, clocks and device fields as placeholders."""
    findings = list(Finding.objects.filter(wall=wall).order_by("id"))
    names = {str(f.pk): f"<finding{i}>" for i, f in enumerate(findings)}
    names[str(wall.pk)] = "<wall>"
    points = list(SealPoint.objects.filter(wall=wall).order_by("position"))

    def plain(value, key=""):
        if isinstance(value, dict):
            return {k: plain(v, k) for k, v in value.items() if k not in ("conflict", "sha256", "resumable")}
        if isinstance(value, list):
            return [plain(v) for v in value]
        if value == wall.tag:
            return "<wall>"
        if key in ("finding", "wall"):
            return names.get(str(value), value)
        return value

    targets = {("finding", str(f.pk)) for f in findings} | {("sealpoint", str(p.pk)) for p in points}
    photos = list(Photo.objects.filter(wall=wall))
    targets |= {("photo", str(p.pk)) for p in photos}
    events = [
        (e.verb, e.actor_id, e.target_type, plain(e.data))
        for e in Event.objects.filter(job=world.job).order_by("id")
        if (e.target_type, e.target_id) in targets
        or (e.target_type == "conflict" and e.data.get("finding") in {f.pk for f in findings})
    ]
    return {
        "findings": [
            {
                **{k: getattr(f, k) for k in FINDING_FIELDS},
                "created_by": f.created_by_id,
                "fixed_by": f.fixed_by_id,
                "verified_by": f.verified_by_id,
                "fixed": f.fixed_at is not None,
                "verified": f.verified_at is not None,
            }
            for f in findings
        ],
        "seal_points": [(p.status, p.version, p.checked_by_id, p.checked_at is not None) for p in points],
        "photos": sorted((p.purpose, p.uploaded_by_id, p.finding_id is not None, p.caption) for p in photos),
        "conflicts": [(c.resolution, c.resolved_by_id) for c in Conflict.objects.filter(finding__wall=wall)],
        "events": events,
    }


@pytest.mark.parametrize("case", list(CASES))
def test_each_write_stores_the_same_rows_and_events_through_every_door(case, world, api, client):
    write, doors = CASES[case]
    seen = {}
    for n, door in enumerate(doors):
        wall = fresh_wall(world, n)
        write(door, world, api, client, wall)
        seen[door] = snapshot(world, wall)
    first, *others = doors
    for door in others:
        assert seen[door] == seen[first], f"{case}: {door} differs from {first}"
    assert seen[first]["events"], f"{case}: no event recorded"
