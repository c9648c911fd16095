"""The job bundle: everything the walk needs to work a whole day offline, as one JSON document.

Lengths of findings and seal-point defaults are in the job's units (the API's convention); wall
and opening sizes are given in both SI and the job's units because the walk computes with them.
The bundle carries a version (a hash of its content) that doubles as the HTTP ETag.
"""

from __future__ import annotations

import hashlib
import json
import math
import threading
import time
from collections import OrderedDict
from datetime import timedelta
from types import SimpleNamespace
from typing import Any

from django.core.cache import cache
from django.core.serializers.json import DjangoJSONEncoder
from django.db.models import F
from django.urls import reverse
from django.utils import timezone

from .. import audit, units
from ..api.finding_json import FINDING_COLUMNS, finding_json
from ..audit.cache import first_reader
from ..audit.fix_order import fix_steps
from ..audit.verdicts import GAINS, NEEDED, RATINGS, STATES, verdicts_for_walls
from ..cautions import CAUTIONS, GENERAL_CAUTIONS
from ..choices import (
    SIZE_RULES,
    STATUS_GROUPS,
    AlongFrom,
    Face,
    FindingStatus,
    GapKind,
    HeightBand,
    SealStatus,
    Trade,
)
from ..field.prediction import field_for_walls
from ..field.presentation import FIELD_CAUTION, field_summary
from ..models import Conflict, Event, Finding, Job, Member, Opening, Photo, SealPoint, Wall, WallType
from .sync import conflict_data

BUNDLE_FORMAT = 1
#: Seconds after a person's own change during which they are always sent a bundle built anew.
WRITE_MARGIN_S = 10
#: Longest one reader may take to build a shared bundle before another builds it (s).
BUILD_LOCK_S = 60


def _plain(value: Any) -> Any:
    """JSON-safe copy: numpy scalars and arrays become numbers and lists, NaN becomes null."""
    kind = type(value)
    # The plain JSON types first, by exact type: nearly every value of an audit is one of them.
    if kind is str or kind is int or kind is bool or value is None:
        return value
    if kind is float:
        return value if math.isfinite(value) else None
    if kind is dict:
        return {str(k): _plain(v) for k, v in value.items()}
    if kind is list or kind is tuple:
        return [_plain(v) for v in value]
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if hasattr(value, "tolist"):
        return _plain(value.tolist())
    if hasattr(value, "_asdict"):
        return _plain(value._asdict())
    if hasattr(value, "__dataclass_fields__"):
        from dataclasses import asdict

        return _plain(asdict(value))
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


#: The seal-point columns the bundle reads (rows, not model instances).
POINT_COLUMNS = (
    "id",
    "wall_id",
    "label",
    "face",
    "trade",
    "correct",
    "usual_defect",
    "caution",
    "status",
    "version",
    "position",
    "gap",
    "gap_kind",
    "at_edge",
)


def prefill(point: SealPoint | SimpleNamespace, wall: Wall, job_units: str) -> dict:
    """A seal point's default defect geometry in the job's units (slit length from ``length_fraction``)."""
    gap = dict(point.gap or {})
    if "length_fraction" in gap and "length_m" not in gap:
        gap["length_m"] = gap.pop("length_fraction") * wall.length_m
    out: dict[str, Any] = {
        "kind": point.gap_kind,
        "face": point.face,
        "trade": point.trade,
        "at_edge": point.at_edge,
        "count": int(gap.get("count", 1) or 1),
    }
    for si, name in units.SI_TO_API.items():
        if gap.get(si) is not None:
            out[name] = units.in_job_units(gap[si], units.FIELD_QUANTITY[si], job_units)
    if point.gap_kind == GapKind.BRIDGE:
        out["face"] = Face.THROUGH
    return out


#: Audit summary keys the walk shows; the curves and alternative views stay on the server.
AUDIT_KEYS = (
    "scheme",
    "rating_name",
    "target",
    "designed",
    "as_found",
    "walked",
    "shortfall",
    "error",
    "order",
    "after",
    "needed",
    "flags",
    "flag_text",
    "unmodelled",
)


def _slim_audit(summary: dict, client_ids: dict[int, str]) -> dict:
    out: dict[str, Any] = {k: summary.get(k) for k in AUDIT_KEYS if k in summary}
    for key in ("order", "needed"):
        if out.get(key) is not None:
            out[key] = [client_ids.get(i, str(i)) for i in out[key]]
    out["rows"] = [
        {
            "finding": client_ids.get(r.get("finding"), str(r.get("finding"))),
            "gain": r.get("gain"),
            "label": r.get("label"),
            "status": r.get("status"),
        }
        for r in summary.get("rows") or []
    ]
    # Which findings this audit counted: the walk marks the ones recorded or changed since as missing.
    counted = set(summary.get("views", {}).get("walked", {}).get("order") or summary.get("order") or [])
    out["includes"] = [client_ids[i] for i in sorted(counted) if i in client_ids]
    return _plain(out)


def _audits(job: Job, walls: list[Wall], member: Member, audits: dict[int, dict]) -> tuple[dict, dict, list]:
    """The last leak audit of each wall slimmed for the phone, each wall's verdict, and the
    fix-first list, all keyed by wall id.

    The verdict (:func:`qa.audit.verdicts.verdict`) is what the desktop shows under the same word.
    A crew member's fix-first steps are their own trade's only (step numbers stay the wall's).
    """
    verdicts = verdicts_for_walls(walls, audits)
    rows = Finding.objects.filter(job=job).order_by("id").values_list("id", "client_id", "trade", "status")
    client_ids = {k: str(c) for k, c, _t, _s in rows}
    trade_of = {k: t for k, _c, t, _s in rows}
    slim = {str(k): _slim_audit(v, client_ids) for k, v in (audits or {}).items() if isinstance(v, dict)}
    fix_first = []
    for w in walls:
        for fid, st in fix_steps(audits[w.pk]).items():
            if member.is_crew and trade_of.get(fid) != member.trade:
                continue
            fix_first.append(
                {
                    "finding": client_ids.get(fid, str(fid)),
                    "wall": w.pk,
                    "step": st["step"],
                    "in_order": st["buys"],
                    "alone": st["alone"],
                    "after": st["after"],
                    "needed": st["needed"],
                }
            )
        if member.is_crew:
            a = slim.get(str(w.pk))
            if a is not None:  # the walk lists a crew member's own items only
                mine = {client_ids[f] for f, t in trade_of.items() if t == member.trade and f in client_ids}
                a["rows"] = [r for r in a["rows"] if r["finding"] in mine]
                a["needed"] = None if a.get("needed") is None else [f for f in a["needed"] if f in mine]
    fix_first.sort(key=lambda r: (-(r["in_order"] or 0), -(r["alone"] or 0), r["wall"], r["step"]))
    return slim, {str(k): _plain(v) for k, v in verdicts.items()}, fix_first


def vocabulary() -> dict:
    """The words of :mod:`qa.audit.verdicts` for the walk: wall states (with tone), ratings, gains."""
    terms = {"states": STATES, "ratings": RATINGS, "gains": GAINS}
    # {group: {key: term}} for the term groups, plus "needed": one term
    out: dict[str, dict[str, Any]] = {
        group: {k: {"word": t.word, "meaning": t.meaning, "tone": t.tone} for k, t in items.items()}
        for group, items in terms.items()
    }
    out["needed"] = {"word": NEEDED.word, "meaning": NEEDED.meaning, "tone": NEEDED.tone}
    return out


def _me(member: Member) -> dict:
    user = member.user
    return {
        "username": user.username,
        "name": user.get_full_name() or user.username,
        "role": member.role,
        "trade": member.trade or None,
    }


def build_bundle(job: Job, member: Member, *, audit_age: float = 0) -> dict:
    """The walk's offline copy of ``job`` for ``member`` (crew see their own trade's findings only),
    without its version: :func:`bundle_json` writes it out and stamps it. ``audit_age``: how old
    (seconds) a wall's audit may be while its newest changes are recounted (marked in its verdict)."""
    u = job.units
    tz = timezone.get_current_timezone()
    walls = list(Wall.objects.live().filter(job=job).select_related("wall_type"))
    wall_by_id = {w.id: w for w in walls}
    points = [
        SimpleNamespace(**row)
        for row in SealPoint.objects.filter(wall__job=job, wall__removed=False, removed=False)
        .order_by("wall_id", "position", "id")
        .values(*POINT_COLUMNS)
    ]
    # Rows, not model instances: a job holds thousands of findings and the walk asks for all of them.
    findings = (
        Finding.objects.live().filter(job=job).values(*FINDING_COLUMNS, author=F("created_by__username"))
    )
    if member.is_crew:
        findings = findings.filter(trade=member.trade)
    photos_of: dict[int, list[str]] = {}
    for photo_id, finding_id in (
        Photo.objects.filter(job=job, removed=False, finding__isnull=False)
        .order_by("uploaded_at", "id")
        .values_list("id", "finding_id")
    ):
        photos_of.setdefault(finding_id, []).append(str(photo_id))
    photos = Photo.objects.filter(job=job, removed=False).only(
        "id",
        "wall_id",
        "finding_id",
        "purpose",
        "width",
        "height",
        "bytes",
        "thumbnail_bytes",
        "sha256",
        "captured_at",
    )
    if member.is_crew:
        photos = photos.filter(finding__trade=member.trade)
    # An audit may be a moment old while a wall is recorded fast: the walk marks the findings it has
    # not counted yet (``includes``) and the verdict says it is being recounted.
    summaries = audit.audits_for_walls(walls, max_age=audit_age)
    audits, verdicts, fix_first = _audits(job, walls, member, summaries)

    body = {
        "format": BUNDLE_FORMAT,
        "job": {
            "id": job.id,
            "name": job.name,
            "address": job.address,
            "units": u,
            "rating_scheme": job.rating_scheme,
            "rule_set": job.rule_set,
            "symbols": {q: units.symbol(q, u) for q in units.FACTORS[u]},
            "unit_factors": units.table(u),
        },
        "me": _me(member),
        "members": [
            {
                "username": m.user.username,
                "name": m.user.get_full_name() or m.user.username,
                "role": m.role,
                "trade": m.trade or None,
            }
            for m in Member.objects.filter(job=job, active=True).select_related("user").order_by("id")
        ],
        "choices": {
            "gap_kinds": [[v, label] for v, label in GapKind.choices],
            "faces": [[v, label] for v, label in Face.choices],
            "trades": [[v, label] for v, label in Trade.choices],
            "seal_status": [[v, label] for v, label in SealStatus.choices],
            "finding_status": [[v, label] for v, label in FindingStatus.choices],
            "height_bands": [[v, label] for v, label in HeightBand.choices],
            "along_from": [[v, label] for v, label in AlongFrom.choices],
        },
        # The rules the walk's forms apply, from their one source (the server's own checks read them too).
        "size_rules": {kind: {k: list(v) for k, v in rule.items()} for kind, rule in SIZE_RULES.items()},
        "status_groups": {name: list(group) for name, group in STATUS_GROUPS.items()},
        "cautions": {k: {"title": c.title, "text": c.text, "basis": c.basis} for k, c in CAUTIONS.items()},
        "vocabulary": vocabulary(),
        "verdicts": verdicts,
        # Each wall's predicted field rating (as designed, as walked, now) and its field target.
        "field": {
            str(pk): _plain(field_summary(result))
            for pk, result in field_for_walls(walls, job, summaries).items()
        },
        "field_caution": FIELD_CAUTION,
        "fix_first": fix_first,
        "general_cautions": list(GENERAL_CAUTIONS),
        "wall_types": [
            {
                "id": t.id,
                "code": t.code,
                "name": t.name,
                "construction": t.construction,
                "design_rating": t.design_rating,
                "rating_scheme": t.rating_scheme,
                "fire_rated": t.fire_rated,
                "thickness": units.in_job_units(t.thickness_m, "gap", u),
            }
            for t in WallType.objects.filter(job=job)
        ],
        "walls": [
            {
                "id": w.id,
                "tag": w.tag,
                "level": w.level,
                "location": w.location,
                "wall_type": w.wall_type_id,
                "face_a_label": w.face_a_label,
                "face_b_label": w.face_b_label,
                "length": units.in_job_units(w.length_m, "size", u),
                "height": units.in_job_units(w.height_m, "size", u),
                "target_rating": w.target_rating,
                "rating_scheme": w.rating_scheme,
                "version": w.version,
                "fire_rated": w.wall_type.fire_rated,
                "url": reverse("qa:wall", kwargs={"job_pk": job.id, "wall_pk": w.id}),
            }
            for w in walls
        ],
        "openings": [
            {
                "id": o.id,
                "wall": o.wall_id,
                "kind": o.kind,
                "label": o.label,
                "width": units.in_job_units(o.width_m, "size", u),
                "height": units.in_job_units(o.height_m, "size", u),
                "rating": o.rating,
                "fire_rated": o.fire_rated,
            }
            for o in Opening.objects.filter(wall__job=job, wall__removed=False, removed=False)
        ],
        "seal_points": [
            {
                "id": p.id,
                "wall": p.wall_id,
                "label": p.label,
                "face": p.face,
                "trade": p.trade,
                "correct": p.correct,
                "usual_defect": p.usual_defect,
                "caution": p.caution,
                "status": p.status,
                "version": p.version,
                "position": p.position,
                "prefill": prefill(p, wall_by_id[p.wall_id], u),
            }
            for p in points
        ],
        "findings": [
            finding_json(SimpleNamespace(**f), u, photos_of.get(f["id"], []), f["author"], tz)
            for f in findings
        ],
        "photos": [
            {
                "id": str(p.id),
                "wall": p.wall_id,
                "finding": p.finding_id,
                "purpose": p.purpose,
                "width": p.width,
                "height": p.height,
                "bytes": p.bytes,
                "sha256": p.sha256,
                "thumb_bytes": p.thumbnail_bytes,
                "thumbnail_url": reverse(
                    "qa:photo-file", kwargs={"job_pk": job.id, "photo_id": p.id, "kind": "thumb"}
                ),
                "image_url": reverse(
                    "qa:photo-file", kwargs={"job_pk": job.id, "photo_id": p.id, "kind": "image"}
                ),
            }
            for p in photos
        ],
        "conflicts": [],
    }
    if member.is_inspector:
        open_conflicts = Conflict.objects.filter(finding__job=job, resolution="").select_related(
            "finding", "created_by"
        )
        body["conflicts"] = [conflict_data(c, job) for c in open_conflicts]
    if audits is not None:
        body["audits"] = audits
    return body


def _shared_view(member: Member) -> str:
    """What a bundle depends on besides the job: the role, and a crew member's trade (``me`` aside)."""
    return f"crew-{member.trade}" if member.is_crew else str(member.role)


def _wrote_lately(job: Job, member: Member, seconds: float) -> bool:
    """Whether ``member`` changed anything on ``job`` in the last ``seconds`` (every write logs an event)."""
    since = timezone.now() - timedelta(seconds=seconds)
    return Event.objects.filter(job=job, actor_id=member.user_id, at__gte=since).exists()


#: Shared bundle texts this process has read, by version (a version names one text for good): a copy
#: is megabytes on a busy job, and every reader of it would otherwise fetch and decode it again.
_TEXTS: OrderedDict[str, bytes] = OrderedDict()
_TEXTS_KEPT = 8
_TEXTS_LOCK = threading.Lock()


def _keep_text(version: str, text: bytes) -> None:
    with _TEXTS_LOCK:
        _TEXTS[version] = text
        _TEXTS.move_to_end(version)
        while len(_TEXTS) > _TEXTS_KEPT:
            _TEXTS.popitem(last=False)


def _shared_text(key: str, version: str) -> bytes | None:
    """The shared copy named ``version``: from this process, else from the cache (then kept here)."""
    with _TEXTS_LOCK:
        text = _TEXTS.get(version)
    if text is None:
        text = cache.get(f"{key}:text:{version}")
        if text is not None:
            _keep_text(version, text)
    return text


def bundle_json(job: Job, member: Member, *, max_age: float = 0) -> tuple[str, bytes]:
    """The bundle of :func:`build_bundle` as JSON text, encoded once: (version, UTF-8 bytes).

    The version hashes everything but ``me`` and the moment it was written, so an unchanged job keeps
    its ETag. ``max_age`` (seconds): people with the same view of the job (role, a crew member's
    trade) share one copy at most this old — unless they changed something lately themselves, so
    nobody is shown a copy from before their own change. The copy says when it was written
    (``generated_at``); the walk marks findings its audits have not counted yet.
    """
    key = f"sealwalk:bundle:{BUNDLE_FORMAT}:{job.pk}:{_shared_view(member)}"
    shared, lock, audit_age = None, None, max_age
    if max_age > 0:
        shared = cache.get(key)  # which copy is current: its version, when built (a few bytes)
        age = time.time() - shared["built"] if shared is not None else -1.0
        # The margin covers a change committed a moment after its event was stamped.
        if _wrote_lately(job, member, max_age + WRITE_MARGIN_S):
            shared, audit_age = None, 0  # their own change, counted in every audit
        elif not 0 <= age <= max_age + BUILD_LOCK_S:
            shared = None
        elif age > max_age:  # past the window: one reader builds anew, the others answer with this copy
            lock = f"{key}:building"
    text: bytes | None = None
    with first_reader(lock, BUILD_LOCK_S) as mine:
        if shared is not None and not (lock is not None and mine):
            text = _shared_text(key, shared["version"])
        if shared is None or text is None:  # none to share, ours to build, or the copy gone from the cache
            shared, text = _build_shared(job, member, key, max_age, audit_age)
    extra = json.dumps(
        {"generated_at": shared["generated_at"], "me": _me(member), "version": shared["version"]},
        cls=DjangoJSONEncoder,
        separators=(",", ":"),
    )
    # The three keys follow the shared content; the walk reads JSON, not the order of its keys.
    return shared["version"], text[:-1] + b"," + extra[1:].encode()


def _build_shared(job: Job, member: Member, key: str, max_age: float, audit_age: float) -> tuple[dict, bytes]:
    """Build the bundle, without ``me``: (what names the copy, its JSON text); kept for ``max_age`` if any.

    ``audit_age``: how old the audits in it may be (see :func:`qa.audit.audits_for_walls`).
    """
    body = build_bundle(job, member, audit_age=audit_age)
    del body["me"]
    text = json.dumps(body, cls=DjangoJSONEncoder, sort_keys=True, separators=(",", ":")).encode()
    version = hashlib.sha256(text).hexdigest()[:20]
    shared = {"version": version, "built": time.time(), "generated_at": timezone.now().isoformat()}
    if max_age > 0:
        timeout = int(max_age + BUILD_LOCK_S) + 1
        cache.set_many({f"{key}:text:{version}": text, key: shared}, timeout=timeout)
        _keep_text(version, text)
    return shared, text
