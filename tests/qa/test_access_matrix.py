"""Access control, proven route by route: every URL the resolver knows, for every persona.

The expected answers come from the Roles table of the design (transcribed in ``DESIGN_ROLES``
below, not imported from ``qa.access``, so the code is checked against the design and not against
itself). The routes come from ``django.urls.get_resolver()``: a route added anywhere in the project
appears here by itself, and a route missing from ``TABLE`` fails
``test_every_route_has_a_rights_entry`` with the line to add.

What each persona gets
----------------------
- allowed by the table: the action's success code (200, 201, 204, or the redirect of a form);
- a member without the right: 403;
- a member of another job (the outsider): 404 — nobody learns that a job exists;
- anonymous: pages redirect to the sign-in page with ``?next=``; the API answers **403** (DRF's
  answer when session authentication comes first in ``DEFAULT_AUTHENTICATION_CLASSES``: it sends
  no ``WWW-Authenticate`` challenge, so "not signed in" is 403, never 401). Photo files answer 404
  (an image tag cannot sign in, and a photo id must not be confirmed).

Adding a route = adding one line to ``TABLE`` (and, if its URL has a new parameter, one line to
``KWARGS``).
"""

from __future__ import annotations

import io
import uuid
from dataclasses import dataclass, field
from typing import Any

import pytest
from django.core.files.base import ContentFile
from django.urls import URLPattern, URLResolver, get_resolver, reverse
from PIL import Image

from tests.conftest import FLAT_50, PASSWORD

# --- the design's Roles table --------------------------------------------------------------------
# DESIGN.md, "Roles": rows are rights, columns who may. Crew rights on a finding hold only for the
# finding's trade ("crew (own trade)"); a crew member of another trade is refused (403).
DESIGN_ROLES = {
    "view": {"inspector", "crew", "owner"},  # see the job, walls, findings, audits, photos
    "edit": {"inspector"},  # add/edit walls, seal points, findings
    "fix": {"inspector", "crew"},  # mark a finding fixed, add a fix photo
    "verify": {"inspector"},  # verify or reopen a finding
    "sign": {"owner"},  # sign off the hand-over report
    "manage_members": {"inspector"},  # manage members
}
TRADE_LIMITED = {"fix"}  # rights that a crew member holds only on findings of their own trade

PERSONAS = ["inspector", "crew", "crew_other_trade", "owner", "outsider", "anonymous"]
API_ANONYMOUS = 403

# --- fixtures of the scene ------------------------------------------------------------------------


def jpeg_bytes(size=(64, 48), color=(120, 130, 140)) -> bytes:
    buf = io.BytesIO()
    Image.new("RGB", size, color).save(buf, "JPEG", quality=80)
    return buf.getvalue()


@dataclass
class Scene:
    world: Any
    finding: Any  # electrical, open, on world.wall
    photo: Any  # defect photo of ``finding``
    opening: Any
    seal_point: Any
    member: Any  # the electrician's membership
    conflict: Any = None  # an open sync conflict on ``finding``
    foreign: dict = field(default_factory=dict)  # objects of the other job, by basename


def make_photo(job, wall, finding, user, purpose="defect"):
    from qa.models import Photo

    photo = Photo(job=job, wall=wall, finding=finding, purpose=purpose, uploaded_by=user, width=64, height=48)
    data = jpeg_bytes()
    photo.image.save("p.jpg", ContentFile(data), save=False)
    photo.thumbnail.save("t.jpg", ContentFile(data), save=False)
    photo.bytes = len(data)
    photo.save()
    return photo


def build_scene(world) -> Scene:
    from qa.models import FieldTest, Finding, JunctionOverride, Member, Opening, RoomPair, SealPoint

    w = world
    finding = Finding.objects.create(
        job=w.job,
        wall=w.wall,
        kind="slit",
        width_m=0.003,
        length_m=0.5,
        trade="electrical",
        created_by=w.inspector,
    )
    photo = make_photo(w.job, w.wall, finding, w.inspector)
    opening = Opening.objects.create(
        wall=w.wall, kind="door", label="D1", width_m=0.9, height_m=2.1, rating=30
    )
    point = SealPoint.objects.filter(wall=w.wall).order_by("position").first()
    member = Member.objects.get(job=w.job, user=w.electrician)
    other_finding = Finding.objects.create(
        job=w.other_job,
        wall=w.other_wall,
        kind="hole",
        diameter_m=0.01,
        trade="electrical",
        created_by=w.outsider,
    )
    foreign = {
        "wall": w.other_wall,
        "walltype": w.other_wall.wall_type,
        "finding": other_finding,
        "photo": make_photo(w.other_job, w.other_wall, other_finding, w.outsider),
        "opening": Opening.objects.create(
            wall=w.other_wall, kind="door", width_m=0.9, height_m=2.1, rating=30
        ),
        "sealpoint": SealPoint.objects.filter(wall=w.other_wall).first(),
        "member": Member.objects.get(job=w.other_job, user=w.outsider),
        # field rating (qa/api/field.py)
        "roompair": RoomPair.objects.create(wall=w.other_wall, receiving_volume_m3=30.0),
        "junction": JunctionOverride.objects.create(wall=w.other_wall, position="floor", kind="rigid_t"),
        "fieldtest": FieldTest.objects.create(
            wall=w.other_wall, tested_on="2026-11-01", tester="x", standard="ISO 16283-1"
        ),
    }
    from qa.models import Conflict, SyncOperation

    op = SyncOperation.objects.create(
        op_id=uuid.uuid4(), job=w.job, user=w.inspector, kind="finding.update", result={"status": "conflict"}
    )
    conflict = Conflict.objects.create(
        finding=finding,
        operation=op,
        base_version=1,
        server_version={"note": ""},
        device_version={"note": "from the phone"},
        created_by=w.inspector,
    )
    return Scene(w, finding, photo, opening, point, member, conflict=conflict, foreign=foreign)


def set_fixed(scene: Scene) -> None:
    scene.finding.mark_fixed(scene.world.inspector, "sealed")


# --- URL parameters ---------------------------------------------------------------------------------
# name of a URL parameter -> its value in the scene. ``pk`` depends on the route's basename (OBJECTS).
KWARGS = {
    "job_pk": lambda s, name: s.world.job.pk,
    "wall_pk": lambda s, name: s.world.wall.pk,
    "finding_pk": lambda s, name: s.finding.pk,
    "photo_id": lambda s, name: s.photo.pk,
    "kind": lambda s, name: "image",
    "conflict_pk": lambda s, name: s.conflict.pk,
    "pk": lambda s, name: OBJECTS[name.split(":")[-1].rsplit("-", 1)[0]](s).pk,
}
OBJECTS = {
    "job": lambda s: s.world.job,
    "member": lambda s: s.member,
    "walltype": lambda s: s.world.wall_type,
    "wall": lambda s: s.world.wall,
    "finding": lambda s: s.finding,
    "photo": lambda s: s.photo,
    "opening": lambda s: s.opening,
    "sealpoint": lambda s: s.seal_point,
    "roompair": lambda s: _field_object(s, "roompair"),
    "junction": lambda s: _field_object(s, "junction"),
    "fieldtest": lambda s: _field_object(s, "fieldtest"),
}


def _field_object(s, basename):
    """A room pair, junction or field test of the scene's wall, made once when a route needs its pk."""
    from qa.models import FieldTest, JunctionOverride, RoomPair

    wall = s.world.wall
    if basename == "roompair":
        return RoomPair.objects.get_or_create(wall=wall, label="matrix")[0]
    if basename == "junction":
        return JunctionOverride.objects.get_or_create(
            wall=wall, position="end_a", defaults={"kind": "rigid_t"}
        )[0]
    return FieldTest.objects.get_or_create(
        wall=wall, tester="matrix", defaults={"tested_on": "2026-11-01", "standard": "ISO 16283-1"}
    )[0]


# --- request bodies ------------------------------------------------------------------------------------


def wall_body(s):
    return {
        "tag": "3-07",
        "level": "3",
        "location": "between 307 and 308",
        "length": 5.0,
        "height": 2.7,
        "wall_type": s.world.wall_type.pk,
        "target_rating": 50,
        "rating_scheme": "stc",
        "face_a_label": "Unit 307",
        "face_b_label": "Unit 308",
    }


def walltype_body(s):
    return {
        "code": "T9",
        "name": "Double stud",
        "construction": "double_stud",
        "tl": FLAT_50,
        "tl_source": "lab",
        "thickness": 250,
        "rating_scheme": "stc",
        "fire_rated": True,
    }


def finding_body(s):
    return {
        "client_id": str(uuid.uuid4()),
        "wall": s.world.wall.pk,
        "kind": "slit",
        "face": "through",
        "width": 3,
        "length": 400,
        "trade": "electrical",
        "note": "gap at box",
    }


def photo_body(s):
    from django.core.files.uploadedfile import SimpleUploadedFile

    return {
        "id": str(uuid.uuid4()),
        "finding": s.finding.pk,
        "purpose": "fix",
        "image": SimpleUploadedFile("fix.jpg", jpeg_bytes(), content_type="image/jpeg"),
    }


def upload_body(s):
    return {
        "id": str(uuid.uuid4()),
        "finding": str(s.finding.client_id),
        "purpose": "fix",
        "total_bytes": 1000,
        "sha256": "ab" * 32,
    }


def open_upload_as_inspector(s):
    """An upload in progress for the scene's photo id slot (KWARGS photo_id then points at it)."""
    from qa.models import PhotoUpload

    s.photo = PhotoUpload.objects.create(
        id=uuid.uuid4(),
        job=s.world.job,
        wall=s.world.wall,
        finding=s.finding,
        total_bytes=1000,
        sha256="ab" * 32,
        user=s.world.inspector,
    )


def finished_upload(s):
    """The scene's photo is already stored: finishing its upload again answers the stored photo."""


def credentials(s, user):
    username = user.username if user is not None else s.world.inspector.username
    return {"username": username, "password": PASSWORD}


# --- the rights table ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class Rule:
    """What one (route, method) needs and answers.

    right: a row of DESIGN_ROLES, or "auth" (any signed-in user, no job involved) or "public".
    ok: the success code, or a dict by persona ("*" for the rest).
    body: ``f(scene)`` or ``f(scene, user)`` giving the request data; fmt "json" or "multipart".
    before: ``f(scene)`` run before the request (e.g. put the finding in the state the action needs).
    anonymous: override of the anonymous answer (photo files: 404).
    """

    right: str
    ok: int | dict = 200
    body: Any = None
    fmt: str = "json"
    before: Any = None
    anonymous: int | None = None
    with_user: bool = False
    on_finding: bool = True  # False: a "fix" right not tied to one finding's trade (crew of any trade)
    path_suffix: str = ""
    only_opener: bool = False  # the object belongs to the inspector who made it: other members get 404
    known: Any = None  # {persona: reason}: a known deviation from the design, reported with its fix (xfail)


FIELD_TEST_BODY = {
    "tested_on": "2026-11-20",
    "tester": "matrix",
    "standard": "ASTM E336",
    "source": "report",
    "bands": {"atl": [50.0] * 21, "nnr": [50.0] * 21},
}
R = Rule
TABLE: dict[str, dict[str, Rule]] = {
    # pages
    "qa:job-list": {"GET": R("auth")},
    "qa:login": {
        "GET": R("public", ok={"anonymous": 200, "*": 302}),
        "POST": R("public", ok=302, body=credentials, fmt="form", with_user=True),
    },
    "qa:logout": {"POST": R("public", ok=302, fmt="form")},
    "qa:job": {"GET": R("view")},
    "qa:wall": {"GET": R("view")},
    "qa:photo-file": {"GET": R("view", anonymous=404)},
    # API: jobs
    "api:job-list": {"GET": R("auth")},
    "api:job-detail": {"GET": R("view")},
    "api:member-list": {
        "GET": R("view"),
        "POST": R("manage_members", ok=201, body=lambda s: {"username": "out", "role": "owner"}),
    },
    "api:member-detail": {
        "GET": R("view"),
        "PUT": R(
            "manage_members",
            body=lambda s: {"username": "elec", "role": "crew", "trade": "plumbing", "active": True},
        ),
        "PATCH": R("manage_members", body=lambda s: {"active": False}),
    },
    "api:walltype-list": {"GET": R("view"), "POST": R("edit", ok=201, body=walltype_body)},
    "api:walltype-detail": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: walltype_body(s) | {"code": "T1"}),
        "PATCH": R("edit", body=lambda s: {"name": "Renamed"}),
    },
    "api:wall-list": {"GET": R("view"), "POST": R("edit", ok=201, body=wall_body)},
    "api:wall-detail": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: wall_body(s) | {"tag": "2-01"}),
        "PATCH": R("edit", body=lambda s: {"location": "between 201 and 203"}),
        "DELETE": R("edit", ok=204),
    },
    "api:wall-audit": {"GET": R("view")},
    "api:opening-list": {
        "GET": R("view"),
        "POST": R(
            "edit", ok=201, body=lambda s: {"kind": "window", "width": 1.0, "height": 1.2, "rating": 32}
        ),
    },
    "api:opening-detail": {
        "GET": R("view"),
        "PUT": R(
            "edit", body=lambda s: {"kind": "door", "label": "D1", "width": 0.9, "height": 2.1, "rating": 35}
        ),
        "PATCH": R("edit", body=lambda s: {"rating": 33}),
        "DELETE": R("edit", ok=204),
    },
    "api:sealpoint-list": {
        "GET": R("view"),
        "POST": R(
            "edit", ok=201, body=lambda s: {"label": "Extra pipe", "trade": "plumbing", "gap_kind": "ring"}
        ),
    },
    "api:sealpoint-detail": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: {"label": "Bottom track", "trade": "drywall", "status": "pass"}),
        "PATCH": R("edit", body=lambda s: {"status": "pass"}),
        "DELETE": R("edit", ok=204),
    },
    "api:finding-list": {"GET": R("view"), "POST": R("edit", ok=201, body=finding_body)},
    "api:finding-detail": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: finding_body(s) | {"client_id": str(s.finding.client_id)}),
        "PATCH": R("edit", body=lambda s: {"note": "wider than thought"}),
        "DELETE": R("edit", ok=204),
    },
    "api:finding-fix": {"POST": R("fix", body=lambda s: {"note": "sealed"})},
    "api:finding-verify": {"POST": R("verify", body=lambda s: {"note": "seen"}, before=set_fixed)},
    "api:finding-reopen": {"POST": R("verify", body=lambda s: {"note": "still open"}, before=set_fixed)},
    "api:photo-list": {"GET": R("view"), "POST": R("fix", ok=201, body=photo_body, fmt="multipart")},
    "api:photo-detail": {"GET": R("view"), "DELETE": R("edit", ok=204)},
    "api:event-list": {"GET": R("view")},
    "api:token": {"POST": R("public", body=credentials, with_user=True)},
    "api:token-revoke": {"POST": R("auth", ok=204)},
    "api:schema": {"GET": R("auth")},  # the map of every route: signed-in users only
    "api:docs": {"GET": R("auth")},
    # the walk (qa/views/walk_urls.py)
    "qa:walk": {"GET": R("auth")},
    "qa:walk-bundle": {"GET": R("view")},
    "qa:walk-sync": {"POST": R("fix", on_finding=False, body=lambda s: {"device_id": "matrix", "ops": []})},
    "qa:walk-conflicts": {"GET": R("edit")},
    "qa:walk-conflict-resolve": {"POST": R("edit", body=lambda s: {"keep": "server"})},
    "qa:walk-upload-open": {"POST": R("fix", ok=201, body=upload_body)},
    # An upload in progress belongs to whoever opened it (here the inspector): nobody else's to probe.
    "qa:walk-upload": {
        "GET": R("view", only_opener=True, before=open_upload_as_inspector),
        "PUT": R(
            "fix",
            on_finding=False,
            only_opener=True,
            before=open_upload_as_inspector,
            body=lambda s: b"\xff\xd8",
            fmt="raw",
            path_suffix="?offset=0",
        ),
    },
    # Finishing an upload whose photo is already stored answers the stored photo (replay, lost reply).
    "qa:walk-upload-finish": {"POST": R("fix", on_finding=False, before=finished_upload)},
    # leak audits, crew and check lists, the hand-over report (qa/views/audit_urls.py)
    "qa:crew": {"GET": R("fix", on_finding=False)},
    "qa:check": {"GET": R("verify")},
    "qa:finding-fixed": {"POST": R("fix", ok=302, fmt="form", body=lambda s: {"note": "sealed"})},
    "qa:finding-check": {
        "POST": R("verify", ok=302, fmt="form", before=set_fixed, body=lambda s: {"action": "verify"})
    },
    "qa:report": {"GET": R("view")},
    "qa:report-pdf": {"GET": R("view")},
    "qa:report-csv": {"GET": R("view")},
    "qa:report-sign": {"POST": R("sign", ok=302, fmt="form")},
    # field rating (qa/api/field.py, qa/views/field.py)
    "qa:test-plan": {"GET": R("view")},
    "qa:field-test-add": {"POST": R("edit", ok=302, fmt="form")},
    "qa:rooms-save": {"POST": R("edit", ok=302, fmt="form")},
    "qa:junctions-save": {"POST": R("edit", ok=302, fmt="form")},
    "api:field-prediction": {"GET": R("view")},
    "api:test-plan": {"GET": R("view")},
    "api:test-plan-csv": {"GET": R("view")},
    "api:building-kind": {"GET": R("view"), "PUT": R("edit", body=lambda s: {"building_kind": "clt"})},
    "api:field-targets": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: {"field_targets": [{"descriptor": "astc", "value": 45}]}),
    },
    "api:roompair-list": {
        "GET": R("view"),
        "POST": R("edit", ok=201, body=lambda s: {"receiving_volume_m3": 40.0}),
    },
    "api:roompair-detail": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: {"label": "A to B", "receiving_volume_m3": 40.0}),
        "PATCH": R("edit", body=lambda s: {"receiving_t_s": 0.7}),
        "DELETE": R("edit", ok=204),
    },
    "api:junction-list": {
        "GET": R("view"),
        "POST": R("edit", ok=201, body=lambda s: {"position": "floor", "kind": "rigid_t"}),
    },
    "api:junction-detail": {
        "GET": R("view"),
        "PUT": R("edit", body=lambda s: {"position": "end_a", "kind": "rigid_cross"}),
        "PATCH": R("edit", body=lambda s: {"kind": "rigid_cross"}),
        "DELETE": R("edit", ok=204),
    },
    "api:fieldtest-list": {"GET": R("view"), "POST": R("edit", ok=201, body=lambda s: FIELD_TEST_BODY)},
    "api:fieldtest-detail": {"GET": R("view"), "DELETE": R("edit", ok=204)},
}
#: URL names deliberately outside the matrix, with the reason.
EXEMPT = {
    "admin:*": "Django admin: staff only, guarded by Django's own admin login; no job data editable there "
    "except by staff (Event has no change/delete, see test_hardening).",
}

# --- route discovery ------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Route:
    name: str
    pattern: str
    callback: Any
    is_api: bool
    methods: tuple[str, ...] | None  # None: a function view (methods not introspectable)
    kwargs: tuple[str, ...]


def _declared_methods(func) -> tuple[str, ...] | None:
    """Methods allowed by Django's ``require_http_methods`` family (require_GET, require_POST...)."""
    while func is not None:
        for cell in getattr(func, "__closure__", None) or ():
            try:
                value = cell.cell_contents
            except ValueError:
                continue
            if (
                isinstance(value, list | tuple)
                and value
                and all(
                    isinstance(v, str) and v in {"GET", "POST", "PUT", "PATCH", "DELETE", "HEAD"}
                    for v in value
                )
            ):
                return tuple(sorted(set(value) - {"HEAD"}))
        func = getattr(func, "__wrapped__", None)
    return None


def _methods(callback) -> tuple[str, ...] | None:
    actions = getattr(callback, "actions", None)
    if actions:
        return tuple(sorted(m.upper() for m in actions if m not in ("options", "head")))
    view_class = getattr(callback, "cls", None) or getattr(callback, "view_class", None)
    if view_class is not None:
        names = getattr(view_class, "http_method_names", [])
        return tuple(
            sorted(m.upper() for m in names if m not in ("options", "head") and hasattr(view_class, m))
        )
    return _declared_methods(callback)


def iter_routes() -> list[Route]:
    from rest_framework.views import APIView

    routes = []

    def walk(resolver, prefix="", ns=""):
        for p in resolver.url_patterns:
            if isinstance(p, URLResolver):
                sub = f"{ns}:{p.namespace}" if ns and p.namespace else (p.namespace or ns)
                walk(p, prefix + str(p.pattern), sub)
            elif isinstance(p, URLPattern):
                name = f"{ns}:{p.name}" if p.name and ns else (p.name or prefix + str(p.pattern))
                cb = p.callback
                api = isinstance(getattr(cb, "cls", None), type) and issubclass(cb.cls, APIView)
                kw = tuple(sorted(set(p.pattern.regex.groupindex) | set(_prefix_kwargs(prefix))))
                routes.append(Route(name, prefix + str(p.pattern), cb, api, _methods(cb), kw))

    walk(get_resolver())
    return routes


def _prefix_kwargs(prefix: str) -> list[str]:
    import re

    return re.findall(r"<(?:\w+:)?(\w+)>|\(\?P<(\w+)>", prefix) and [
        a or b for a, b in re.findall(r"<(?:\w+:)?(\w+)>|\(\?P<(\w+)>", prefix)
    ]


def _exempt(route: Route) -> bool:
    return any(
        route.name == key
        or (key.endswith(":*") and route.name.startswith(key[:-1]))
        or (key.endswith(":*") and route.pattern.startswith(key[:-2] + "/"))
        for key in EXEMPT
    )


ROUTES = {r.name: r for r in iter_routes() if not _exempt(r)}
CASES = [
    (name, method, persona)
    for name, methods in TABLE.items()
    if name in ROUTES
    for method in methods
    for persona in PERSONAS
]


def test_every_route_has_a_rights_entry():
    problems = []
    for name, route in sorted(ROUTES.items()):
        entry = TABLE.get(name)
        if entry is None:
            methods = route.methods or ("GET",)
            problems.append(
                f"route {name!r} ({route.pattern}) has no entry in TABLE of tests/qa/test_access_matrix.py; "
                f"add e.g. {name!r}: {{{', '.join(repr(m) + ': R(<right>)' for m in methods)}}} "
                "with the right "
                "from the design's Roles table (view/edit/fix/verify/sign/manage_members, or auth/public)"
            )
            continue
        if route.methods is not None:
            missing = sorted(set(route.methods) - set(entry))
            if missing:
                problems.append(
                    f"route {name!r} accepts {missing} but TABLE lists only {sorted(entry)}; add them"
                )
        for kw in route.kwargs:
            if kw not in KWARGS:
                problems.append(f"route {name!r} has URL parameter {kw!r}: add how to fill it to KWARGS")
    assert not problems, "\n".join(problems)


def test_table_lists_only_existing_routes():
    stale = sorted(set(TABLE) - set(ROUTES))
    assert not stale, f"TABLE entries for routes that no longer exist: {stale}; remove them"


def test_design_rights_cover_every_rule():
    for name, methods in TABLE.items():
        for method, rule in methods.items():
            assert rule.right in DESIGN_ROLES or rule.right in ("auth", "public"), (name, method, rule.right)


# --- expectations and the request ----------------------------------------------------------------------


def expected(route: Route, rule: Rule, persona: str) -> int | str:
    """The exact answer for ``persona``: a status code, or "login" for a redirect to the sign-in page."""
    ok = rule.ok if isinstance(rule.ok, int) else rule.ok.get(persona, rule.ok.get("*"))
    if rule.right == "public":
        return ok
    if persona == "anonymous":
        if rule.anonymous is not None:
            return rule.anonymous
        return API_ANONYMOUS if route.is_api else "login"
    if rule.right == "auth":
        return ok
    if persona == "outsider":
        return 404
    role = {"inspector": "inspector", "crew": "crew", "crew_other_trade": "crew", "owner": "owner"}[persona]
    if role not in DESIGN_ROLES[rule.right]:
        return 403
    if rule.only_opener and persona != "inspector":
        return 404
    if rule.right in TRADE_LIMITED and rule.on_finding and persona == "crew_other_trade":
        return 403  # the scene's finding is of the electrician's trade
    return ok


def persona_user(world, persona):
    return None if persona == "anonymous" else world.users()[persona]


def url_for(route: Route, scene: Scene, foreign_pk: Any = None) -> str:
    kwargs = {}
    for kw in route.kwargs:
        kwargs[kw] = (
            KWARGS[kw](scene, route.name) if not (kw == "pk" and foreign_pk is not None) else foreign_pk
        )
    try:
        return reverse(route.name, kwargs=kwargs)
    except Exception:  # unnamed route: fill the pattern by hand
        path = "/" + route.pattern
        for kw, value in kwargs.items():
            path = path.replace(f"<int:{kw}>", str(value)).replace(f"<{kw}>", str(value))
        return path


def send(client, method: str, url: str, rule: Rule, scene: Scene, user):
    data = None
    if rule.body is not None:
        data = rule.body(scene, user) if rule.with_user else rule.body(scene)
    call = getattr(client, method.lower())
    if rule.fmt == "raw":
        return call(url + rule.path_suffix, data, content_type="application/octet-stream")
    if rule.fmt == "multipart":
        return call(url, data or {}, format="multipart")
    if rule.fmt == "form":
        return call(url, data or {})
    return call(url, data, format="json") if data is not None else call(url)


@pytest.fixture
def scene(world):
    return build_scene(world)


@pytest.mark.parametrize(("name", "method", "persona"), CASES)
def test_access(name, method, persona, scene, client_for, request):
    from qa.models import Event

    route, rule = ROUTES[name], TABLE[name][method]
    if rule.known and persona in rule.known:
        request.applymarker(pytest.mark.xfail(reason=rule.known[persona], strict=True))
    if rule.before:
        rule.before(scene)
    user = persona_user(scene.world, persona)
    client = client_for(user)
    events_before = Event.objects.count()
    url = url_for(route, scene)
    response = send(client, method, url, rule, scene, user)
    want = expected(route, rule, persona)
    got = response.status_code
    body = getattr(response, "content", b"")[:300]
    if want == "login":
        assert got == 302, f"{persona} {method} {url}: expected a redirect to sign in, got {got}: {body!r}"
        assert response["Location"].startswith(reverse("qa:login") + "?next="), response["Location"]
    else:
        assert got == want, f"{persona} {method} {url}: expected {want}, got {got}: {body!r}"
    if not (200 <= got < 400):
        assert Event.objects.count() == events_before, f"a refused {method} {url} wrote an event"


@pytest.fixture
def client_for():
    """A client signed in through a real session (the way the app signs in), or anonymous."""
    from rest_framework.test import APIClient

    def make(user):
        client = APIClient()
        if user is not None:
            client.force_login(user)
        return client

    return make


# --- objects of another job, reached through one's own job: always 404 --------------------------------

FOREIGN_CASES = [
    (name, method)
    for name, methods in TABLE.items()
    if name in ROUTES and "pk" in ROUTES[name].kwargs and "job_pk" in ROUTES[name].kwargs
    for method in methods
]


@pytest.mark.parametrize(("name", "method"), FOREIGN_CASES)
def test_object_of_another_job_is_404(name, method, scene, client_for):
    """The inspector of job A asks for an object of job B through job A's URL: 404, nothing written."""
    from qa.models import Event

    route, rule = ROUTES[name], TABLE[name][method]
    basename = name.split(":")[-1].rsplit("-", 1)[0]
    foreign = scene.foreign[basename]
    client = client_for(scene.world.inspector)
    before = Event.objects.count()
    response = send(
        client, method, url_for(route, scene, foreign_pk=foreign.pk), rule, scene, scene.world.inspector
    )
    assert response.status_code == 404, (name, method, response.status_code, response.content[:200])
    assert Event.objects.count() == before


def test_wall_of_another_job_through_own_job_is_404(scene, client_for):
    client = client_for(scene.world.inspector)
    other = scene.foreign["wall"]
    assert (
        client.get(reverse("qa:wall", kwargs={"job_pk": scene.world.job.pk, "wall_pk": other.pk})).status_code
        == 404
    )
    url = reverse("api:opening-list", kwargs={"job_pk": scene.world.job.pk, "wall_pk": other.pk})
    assert client.get(url).status_code == 404


def test_photo_of_another_job_through_own_job_is_404(scene, client_for):
    client = client_for(scene.world.inspector)
    url = reverse(
        "qa:photo-file",
        kwargs={"job_pk": scene.world.job.pk, "photo_id": scene.foreign["photo"].pk, "kind": "image"},
    )
    assert client.get(url).status_code == 404


def test_photo_file_is_the_stored_bytes_and_private(scene, client_for):
    client = client_for(scene.world.owner)
    for kind, field_name in (("image", "image"), ("thumb", "thumbnail")):
        url = reverse(
            "qa:photo-file", kwargs={"job_pk": scene.world.job.pk, "photo_id": scene.photo.pk, "kind": kind}
        )
        response = client.get(url)
        assert response.status_code == 200
        getattr(scene.photo, field_name).open("rb")
        assert b"".join(response.streaming_content) == getattr(scene.photo, field_name).read()
        assert "private" in response["Cache-Control"]


def test_removed_photo_is_404(scene, client_for):
    scene.photo.removed = True
    scene.photo.save()
    client = client_for(scene.world.inspector)
    url = reverse(
        "qa:photo-file", kwargs={"job_pk": scene.world.job.pk, "photo_id": scene.photo.pk, "kind": "image"}
    )
    assert client.get(url).status_code == 404


def test_inactive_member_is_an_outsider(scene, client_for):
    scene.member.active = False
    scene.member.save()
    client = client_for(scene.world.electrician)
    assert client.get(reverse("api:job-detail", kwargs={"job_pk": scene.world.job.pk})).status_code == 404
    assert client.get(reverse("qa:job", kwargs={"job_pk": scene.world.job.pk})).status_code == 404


def test_media_root_is_not_served(scene, client_for, settings):
    """No URL maps onto the media folder: the stored file's path is not reachable, signed in or not."""
    client = client_for(scene.world.inspector)
    name = scene.photo.image.name
    for prefix in ("/media/", settings.MEDIA_URL, "/static/../media/", "/"):
        response = client.get(prefix + name)
        assert response.status_code == 404, (prefix, response.status_code)


def test_photo_ids_are_random_uuids(scene):
    """Photo URLs are unguessable: a random (version 4) UUID made by the device or the server."""
    assert uuid.UUID(str(scene.photo.pk)).version == 4


def test_api_schema_and_docs_need_a_signed_in_user(scene, client_for):
    """The schema maps every route of the record: anonymous gets 403 (the docs page: sign in first)."""
    anonymous = client_for(None)
    assert anonymous.get("/api/schema/").status_code == 403
    docs = anonymous.get("/api/docs/")
    assert docs.status_code == 302 and docs["Location"].startswith(reverse("qa:login"))
    member = client_for(scene.world.electrician)
    schema = member.get("/api/schema/", HTTP_ACCEPT="application/vnd.oai.openapi+json")
    assert schema.status_code == 200 and "/api/jobs/{job_pk}/findings/" in schema.json()["paths"]
    assert member.get("/api/docs/").status_code == 200
