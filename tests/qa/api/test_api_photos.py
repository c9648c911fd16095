"""Photos API: /api/jobs/{job}/photos/ (multipart upload with a device-made id) and the file view.

Roles (DESIGN.md): everyone on the job sees photos; the inspector adds any photo; a crew lead adds
a fix photo to a finding of their own trade; the owner adds none; a non-member gets 404.
"""

from __future__ import annotations

import io
import uuid

import pytest
from PIL import Image

from qa.models import Event, Finding, Photo
from tests.qa.roles import ROLES, SEE, as_role

pytestmark = pytest.mark.django_db

# Upload of a photo of an electrical finding ("crew" is the electrical lead).
ADD = {
    "inspector": 201,
    "crew": 201,
    "crew_other_trade": 403,
    "owner": 403,
    "outsider": 404,
    "anonymous": 403,
}
GPS_IFD = 0x8825


def url(job, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/photos", *map(str, rest)]) + "/"


def jpeg(gps: bool = False, size=(64, 48)) -> io.BytesIO:
    exif = Image.Exif()
    if gps:
        exif.get_ifd(GPS_IFD)[1] = "N"
        exif.get_ifd(GPS_IFD)[2] = (51.0, 30.0, 12.0)
    out = io.BytesIO()
    Image.new("RGB", size, (200, 40, 40)).save(out, "JPEG", exif=exif.tobytes())
    out.seek(0)
    out.name = "IMG_0001.jpg"
    return out


def upload(client, world, of_finding=None, **over):
    data = {"id": str(uuid.uuid4()), "image": jpeg(), "caption": "gap at floor"}
    if of_finding is not None:
        data["finding"] = of_finding.pk
    else:
        data["wall"] = world.wall.pk
    data.update(over)
    return client.post(url(world.job), {k: v for k, v in data.items() if v is not ...}, format="multipart")


@pytest.fixture
def finding(world):
    return Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="hole",
        diameter_m=0.012,
        trade="electrical",
        created_by=world.inspector,
    )


def test_inspector_uploads_a_photo_that_is_stored_clean(world, api, finding):
    photo_id = str(uuid.uuid4())
    r = upload(api(world.inspector), world, finding, id=photo_id, image=jpeg(gps=True))
    assert r.status_code == 201, r.json()
    photo = Photo.objects.get(pk=photo_id)
    assert (photo.wall, photo.finding, photo.purpose, photo.uploaded_by) == (
        world.wall,
        finding,
        "defect",
        world.inspector,
    )
    assert (photo.width, photo.height, photo.original_format) == (64, 48, "JPEG")
    with photo.image.open("rb") as fh:
        stored = fh.read()
    assert not Image.open(io.BytesIO(stored)).getexif().get_ifd(GPS_IFD)  # location gone from the stored file
    assert photo.bytes == len(stored)
    assert str(photo.job_id) in photo.image.name and "IMG_0001" not in photo.image.name
    assert r.json()["url"] == f"/jobs/{world.job.id}/photos/{photo_id}/image"
    event = Event.objects.get(verb="photo.added")
    assert event.data == {"finding": finding.pk, "purpose": "defect", "sha256": photo.sha256}
    assert api(world.owner).get(url(world.job), {"finding": finding.pk}).json()["count"] == 1


def test_same_photo_id_uploaded_twice_is_one_photo(world, api, finding):
    photo_id = str(uuid.uuid4())
    client = api(world.inspector)
    first = upload(client, world, finding, id=photo_id)
    again = upload(client, world, finding, id=photo_id)
    assert (first.status_code, again.status_code) == (201, 200)
    assert first.json()["sha256"] == again.json()["sha256"]
    assert Photo.objects.count() == 1 and Event.objects.filter(verb="photo.added").count() == 1


def test_photo_id_of_another_job_is_refused(world, api):
    theirs = upload(
        api(world.outsider),
        world.__class__(**{**world.__dict__, "job": world.other_job, "wall": world.other_wall}),
    )
    assert theirs.status_code == 201
    r = upload(api(world.inspector), world, id=theirs.json()["id"])
    assert r.status_code == 400 and r.json() == {"id": ["is already used"]}
    assert Photo.objects.filter(job=world.job).count() == 0


def test_crew_photo_is_a_fix_photo_of_a_finding(world, api, finding):
    client = api(world.electrician)
    r = upload(client, world)  # wall only
    assert r.status_code == 400 and r.json() == {"finding": ["crew photos show the fix of a finding"]}
    r = upload(client, world, finding, purpose="defect")
    assert r.status_code == 201 and r.json()["purpose"] == "fix"


@pytest.mark.parametrize(
    "image, rule",
    [
        (b"<html><script>alert(1)</script></html>", "not a readable image"),
        (b'<svg xmlns="http://www.w3.org/2000/svg"/>', "not a readable image"),
        (b"", "empty"),
    ],
)
def test_not_an_image_is_refused(world, api, image, rule):
    fake = io.BytesIO(image)
    fake.name = "photo.jpg"
    r = upload(api(world.inspector), world, image=fake)
    assert r.status_code == 400 and rule in r.json()["image"][0], r.json()
    assert not Photo.objects.exists() and not Event.objects.exists()


def test_oversize_photo_is_refused(world, api, settings):
    settings.PHOTO_MAX_BYTES = 1024
    r = upload(api(world.inspector), world, image=jpeg(size=(400, 300)))
    assert r.status_code == 400 and r.json() == {"image": ["the file is larger than 1 KB"]}
    assert not Photo.objects.exists()


@pytest.mark.parametrize(
    "change, field, rule",
    [
        ({"image": ...}, "image", "No file was submitted"),
        ({"wall": ...}, "wall", "give the wall or the finding"),
        ({"wall": 999_999}, "wall", "Invalid pk"),
        ({"finding": 999_999}, "finding", "Invalid pk"),
        ({"purpose": "selfie"}, "purpose", "not a valid choice"),
        ({"id": "not-a-uuid"}, "id", "valid UUID"),
        ({"captured_at": "yesterday"}, "captured_at", "Datetime has wrong format"),
    ],
)
def test_bad_fields_are_refused(world, api, change, field, rule):
    r = upload(api(world.inspector), world, **change)
    assert r.status_code == 400 and rule in str(r.json()[field]), r.json()
    assert not Photo.objects.exists()


def test_wall_and_finding_of_another_job_or_wall_are_refused(world, api, finding):
    client = api(world.inspector)
    r = upload(client, world, wall=world.other_wall.pk)
    assert r.status_code == 400 and "Invalid pk" in r.json()["wall"][0]
    theirs = Finding.objects.create(
        job=world.other_job,
        wall=world.other_wall,
        kind="hole",
        diameter_m=0.01,
        trade="electrical",
        created_by=world.outsider,
    )
    r = upload(client, world, theirs)
    assert r.status_code == 400 and "Invalid pk" in r.json()["finding"][0]
    from qa.models import Wall

    second = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-02", level="2", length_m=4, height_m=2.7
    )
    r = upload(client, world, finding, wall=second.pk)
    assert r.status_code == 400 and r.json() == {"wall": ["is not the wall of this finding"]}
    assert not Photo.objects.exists()


def test_file_view_checks_membership(world, api, client, finding):
    photo_id = upload(api(world.inspector), world, finding).json()["id"]
    path = f"/jobs/{world.job.id}/photos/{photo_id}/"
    client.force_login(world.owner)
    r = client.get(path + "image")
    assert (
        r.status_code == 200
        and r["Content-Type"] == "image/jpeg"
        and r["Cache-Control"].startswith("private")
    )
    # Read the streams to the end rather than calling close(): the test client's own wrapper closes the
    # file, and a second close() sends request_finished, which drops the test's transaction connection
    # on PostgreSQL.
    assert b"".join(r.streaming_content)[:2] == b"\xff\xd8"
    r = client.get(path + "thumb")
    assert r.status_code == 200
    assert b"".join(r.streaming_content)[:2] == b"\xff\xd8"
    client.force_login(world.outsider)
    assert client.get(path + "image").status_code == 404
    client.logout()
    assert client.get(path + "image").status_code == 404
    client.force_login(world.outsider)  # their own job id with our photo id: still not found
    assert client.get(f"/jobs/{world.other_job.id}/photos/{photo_id}/image").status_code == 404
    assert client.post(path + "image").status_code in (404, 405)


def test_media_files_are_not_served_publicly(world, api, client, finding):
    upload(api(world.inspector), world, finding)
    photo = Photo.objects.get()
    client.force_login(world.inspector)
    assert client.get(f"/media/{photo.image.name}").status_code == 404
    assert client.get(f"/media-is-not-served/{photo.image.name}").status_code == 404


def test_another_jobs_photo_is_404(world, api):
    mine = world.__class__(**{**world.__dict__, "job": world.other_job, "wall": world.other_wall})
    theirs = upload(api(world.outsider), mine).json()["id"]
    client = api(world.inspector)
    assert client.get(url(world.job, theirs)).status_code == 404
    assert client.delete(url(world.job, theirs)).status_code == 404
    assert not Photo.objects.get(pk=theirs).removed


@pytest.mark.parametrize(
    "method, on_item", [("put", False), ("delete", False), ("patch", True), ("put", True)]
)
def test_wrong_method_is_405(world, api, method, on_item):
    photo_id = upload(api(world.inspector), world).json()["id"]
    target = url(world.job, photo_id) if on_item else url(world.job)
    assert getattr(api(world.inspector), method)(target, {}, format="json").status_code == 405


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_photos(world, api, role):
    photo_id = upload(api(world.inspector), world).json()["id"]
    client = as_role(world, api, role)
    assert client.get(url(world.job)).status_code == SEE[role]
    assert client.get(url(world.job, photo_id)).status_code == SEE[role]


@pytest.mark.parametrize("role", ROLES)
def test_who_adds_photos_of_a_finding(world, api, finding, role):
    r = upload(as_role(world, api, role), world, finding)
    assert r.status_code == ADD[role]
    assert Photo.objects.count() == (1 if ADD[role] == 201 else 0)
    assert Event.objects.count() == (1 if ADD[role] == 201 else 0)


@pytest.mark.parametrize("role", ROLES)
def test_who_removes_photos(world, api, role):
    photo_id = upload(api(world.inspector), world).json()["id"]
    expected = {
        "inspector": 204,
        "crew": 403,
        "crew_other_trade": 403,
        "owner": 403,
        "outsider": 404,
        "anonymous": 403,
    }[role]
    assert as_role(world, api, role).delete(url(world.job, photo_id)).status_code == expected
    photo = Photo.objects.get(pk=photo_id)
    assert photo.removed is (role == "inspector")
    assert Event.objects.filter(verb="photo.removed").count() == (1 if role == "inspector" else 0)
