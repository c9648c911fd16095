from __future__ import annotations

import math
import uuid

from django.conf import settings
from django.db import models
from django.utils import timezone

from ..choices import AREA_KINDS, SIZE_RULES, AlongFrom, Face, Fill, FindingStatus, GapKind, HeightBand, Trade
from ..units import API_TO_SI
from .jobs import Job
from .walls import SealPoint, Wall

# Sanity bounds on recorded geometry, SI. A value outside them is a typo or a unit mix-up.
MIN_GAP_M = 1e-5  # 0.01 mm: below a hairline crack
MAX_DEPTH_M = 1.0  # no partition in this trade is a metre thick
MAX_HOLE_DIAMETER_M = 0.6  # larger than this, record an open area
MAX_COUNT = 500


class TransitionError(ValueError):
    """A lifecycle step that the finding's status does not allow."""


def geometry_errors(kind: str, face: str, dims: dict, wall: Wall) -> dict[str, str]:
    """Check a finding's SI geometry against its kind and its wall; return {field: rule broken}.

    ``dims`` holds any of width_m, length_m, diameter_m, depth_m, area_m2, count.
    Messages name the rule in words; the serializer puts them back in the job's units.
    """
    errors: dict[str, str] = {}
    need = tuple(API_TO_SI[name] for name in SIZE_RULES[kind]["required"])
    if kind == GapKind.OPEN_AREA and dims.get("area_m2") is None:
        need = ("width_m", "length_m")  # an open area may be given as its width and length
    for name in ("width_m", "length_m", "diameter_m", "depth_m", "area_m2"):
        value = dims.get(name)
        if value is None:
            if name in need:
                errors[name] = f"required for a {GapKind(kind).label.lower()}"
            continue
        if not math.isfinite(value):
            errors[name] = "must be a finite number"
        elif value <= 0:
            errors[name] = "must be greater than zero"
    count = dims.get("count", 1)
    if count is not None and not (1 <= count <= MAX_COUNT):
        errors["count"] = f"must be between 1 and {MAX_COUNT}"
    if errors:
        return errors

    thickness = wall.wall_type.thickness_m
    perimeter = 2 * (wall.length_m + wall.height_m)
    width, length = dims.get("width_m"), dims.get("length_m")
    if width is not None and width < MIN_GAP_M:
        errors["width_m"] = "is below 0.01 mm; check the units"
    if kind in (GapKind.SLIT, GapKind.RING) and width is not None and width > thickness:
        errors["width_m"] = "is wider than the wall is thick; record an open area instead"
    if kind == GapKind.SLIT and length is not None and length > perimeter:
        errors["length_m"] = "is longer than the wall's perimeter"
    if kind == GapKind.OPEN_AREA and width and length and width * length > wall.area_m2:
        errors["length_m"] = "gives an open area larger than the wall"
    if kind == GapKind.HOLE and dims["diameter_m"] > min(MAX_HOLE_DIAMETER_M, wall.length_m, wall.height_m):
        errors["diameter_m"] = "is too large for a hole; record an open area instead"
    if kind == GapKind.RING and dims["diameter_m"] > min(wall.length_m, wall.height_m):
        errors["diameter_m"] = "is larger than the wall"
    depth = dims.get("depth_m")
    if depth is not None and depth > MAX_DEPTH_M:
        errors["depth_m"] = "is over 1 m; check the units"
    area = dims.get("area_m2")
    if (
        (kind in AREA_KINDS or kind in (GapKind.OPEN_AREA, GapKind.BACK_TO_BACK))
        and area is not None
        and area > wall.area_m2
    ):
        errors["area_m2"] = "is larger than the wall"
    return errors


class FindingQuerySet(models.QuerySet):
    def live(self) -> FindingQuerySet:
        """Findings that count: not removed, on a wall that is not removed either (a removed wall's
        findings stay in the record but no list, bundle, total or CSV counts them)."""
        return self.filter(removed=False, wall__removed=False)


class Finding(models.Model):
    """One recorded defect at a seal point.

    Geometry in SI; lifecycle open → fixed → verified (or reopened).
    """

    client_id = models.UUIDField(unique=True, default=uuid.uuid4, editable=False)
    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="findings")
    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="findings")
    seal_point = models.ForeignKey(
        SealPoint, null=True, blank=True, on_delete=models.SET_NULL, related_name="findings"
    )
    kind = models.CharField(max_length=20, choices=GapKind.choices)
    face = models.CharField(max_length=8, choices=Face.choices, default=Face.THROUGH)
    width_m = models.FloatField(null=True, blank=True)
    length_m = models.FloatField(null=True, blank=True)
    diameter_m = models.FloatField(null=True, blank=True)
    depth_m = models.FloatField(
        null=True, blank=True, help_text="Along the air path; default the board or wall."
    )
    area_m2 = models.FloatField(null=True, blank=True)
    fill = models.CharField(max_length=8, choices=Fill.choices, default=Fill.NONE)
    at_edge = models.BooleanField(default=False)
    count = models.PositiveIntegerField(default=1)
    # Where along the wall: a distance from one named end, and low / middle / high (all optional).
    along_m = models.FloatField(null=True, blank=True, help_text="Distance from the end named by along_from.")
    along_from = models.CharField(max_length=8, choices=AlongFrom.choices, blank=True)
    height_band = models.CharField(max_length=8, choices=HeightBand.choices, blank=True)
    trade = models.CharField(max_length=12, choices=Trade.choices)
    note = models.TextField(blank=True, max_length=2000)
    status = models.CharField(max_length=10, choices=FindingStatus.choices, default=FindingStatus.OPEN)
    fix_note = models.TextField(blank=True, max_length=2000)
    version = models.PositiveIntegerField(default=1)
    removed = models.BooleanField(default=False)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)
    device_time = models.DateTimeField(null=True, blank=True)
    fixed_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    fixed_at = models.DateTimeField(null=True, blank=True)
    verified_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    verified_at = models.DateTimeField(null=True, blank=True)

    objects = FindingQuerySet.as_manager()

    class Meta:
        ordering = ["wall_id", "id"]
        indexes = [
            models.Index(fields=["job", "status"]),
            models.Index(fields=["job", "trade"]),
        ]

    def __str__(self) -> str:
        return f"{self.get_kind_display()} at {self.wall.tag}"

    GEOMETRY_FIELDS = ("width_m", "length_m", "diameter_m", "depth_m", "area_m2", "count")

    def geometry(self) -> dict:
        return {name: getattr(self, name) for name in self.GEOMETRY_FIELDS}

    # Lifecycle. Each step bumps the version and writes an Event; callers wrap them in a transaction.
    ALLOWED = {
        "fix": (FindingStatus.OPEN, FindingStatus.REOPENED),
        "verify": (FindingStatus.FIXED,),
        "reopen": (FindingStatus.FIXED, FindingStatus.VERIFIED),
    }

    def check_step(self, step: str) -> None:
        if self.removed:
            raise TransitionError("status: this finding was removed")
        if self.status not in self.ALLOWED[step]:
            action = {"fix": "marked fixed", "verify": "verified", "reopen": "reopened"}[step]
            raise TransitionError(f"status: a finding that is {self.status} cannot be {action}")

    def mark_fixed(self, user, note: str = "", **event) -> None:
        self.check_step("fix")
        self.status, self.fixed_by, self.fixed_at = FindingStatus.FIXED, user, timezone.now()
        if note:
            self.fix_note = note
        self._bump("fixed", user, {"note": note}, **event)

    def verify(self, user, note: str = "", **event) -> None:
        self.check_step("verify")
        self.status, self.verified_by, self.verified_at = FindingStatus.VERIFIED, user, timezone.now()
        self._bump("verified", user, {"note": note}, **event)

    def reopen(self, user, note: str = "", **event) -> None:
        self.check_step("reopen")
        self.status, self.verified_by, self.verified_at = FindingStatus.REOPENED, None, None
        self._bump("reopened", user, {"note": note}, **event)

    def remove(self, user, note: str = "", **event) -> None:
        if self.removed:
            raise TransitionError("status: this finding was already removed")
        self.removed = True
        self._bump("removed", user, {"note": note}, **event)

    def _bump(self, verb: str, user, data: dict, **event) -> None:
        from .events import Event

        self.version += 1
        self.save()
        Event.record(self.job, user, f"finding.{verb}", self, {"version": self.version, **data}, **event)


class SyncOperation(models.Model):
    """One outbox operation from a device, applied exactly once; its answer is kept for replays."""

    op_id = models.UUIDField(unique=True)
    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="sync_operations")
    user = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    device_id = models.CharField(max_length=64, blank=True)
    kind = models.CharField(max_length=30)
    result = models.JSONField(default=dict)
    applied_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["applied_at", "id"]

    def __str__(self) -> str:
        return f"{self.kind} {self.op_id}"


class Conflict(models.Model):
    """A stale edit from a device: both versions kept until the inspector resolves it."""

    finding = models.ForeignKey(Finding, on_delete=models.CASCADE, related_name="conflicts")
    operation = models.OneToOneField(
        SyncOperation, null=True, on_delete=models.SET_NULL, related_name="conflict"
    )
    base_version = models.PositiveIntegerField()
    server_version = models.JSONField(default=dict)
    device_version = models.JSONField(default=dict)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField(auto_now_add=True)
    resolution = models.CharField(
        max_length=10, blank=True, help_text="'server', 'device' or empty while open"
    )
    resolved_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    resolved_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["created_at", "id"]

    def __str__(self) -> str:
        return f"conflict on finding {self.finding_id} ({self.resolution or 'open'})"
