"""Serializers: validate once, convert the job's units to SI once, name the field and the rule on error."""

from __future__ import annotations

import copy
import json
import math
from typing import TYPE_CHECKING, Any, cast

from django.conf import settings
from django.contrib.auth import get_user_model
from rest_framework import serializers

from .. import units
from ..audit.curves import curve_errors, resolve_wall_type_curve
from ..choices import Role
from ..models import Event, Finding, Job, Member, Opening, Photo, SealPoint, Wall, WallType
from ..models.findings import geometry_errors
from .fields import FiniteFloatField, UnitField
from .finding_json import finding_json

if TYPE_CHECKING:
    from django.contrib.auth.models import User  # the project keeps Django's user model

#: Geometry errors are reported under the API's names (width, not width_m).
SI_TO_API = {**units.SI_TO_API, "count": "count", "face": "face"}


class CurveField(serializers.ListField):
    """A TL curve: 21 values in dB on the bands 50–5000 Hz, null where a band was not measured."""

    def __init__(self, **kwargs):
        # Finite floats only: a boolean or NaN band is a client bug, not a measurement.
        kwargs.setdefault("child", FiniteFloatField(allow_null=True, limit=1e3))
        kwargs.setdefault("allow_empty", True)
        kwargs.setdefault("required", False)
        super().__init__(**kwargs)

    def to_internal_value(self, data):
        if isinstance(data, list):
            for value in data:
                if isinstance(value, float) and not math.isfinite(value):
                    raise serializers.ValidationError("every band must be a finite number or null")
        values = super().to_internal_value(data)
        problem = curve_errors(values)
        if problem:
            raise serializers.ValidationError(problem)
        return values


class JobSerializer(serializers.ModelSerializer):
    role = serializers.SerializerMethodField()
    trade = serializers.SerializerMethodField()

    class Meta:
        model = Job
        fields = [
            "id",
            "name",
            "address",
            "units",
            "rating_scheme",
            "rule_set",
            "role",
            "trade",
            "updated_at",
        ]
        read_only_fields = ["id", "role", "trade", "updated_at"]

    def _member(self, job):
        return self.context.get("members", {}).get(job.id)

    def get_role(self, job) -> str | None:
        member = self._member(job)
        return member.role if member else None

    def get_trade(self, job) -> str | None:
        member = self._member(job)
        return member.trade or None if member else None


LAYERS_MAX = 20_000

#: The one answer for a name that cannot be added, whether no account has it or the account cannot
#: join: an inspector learns nothing about accounts outside their jobs from it.
NOT_ADDABLE = "no account by that name can be added to this job"


class MemberUsernameField(serializers.SlugRelatedField):
    """The member's account by username: an active account only, with one answer for every refusal.

    On an existing membership the name cannot change; a different name is refused without looking
    it up, so the answer does not depend on whether the name exists.
    """

    default_error_messages = {"does_not_exist": NOT_ADDABLE, "invalid": NOT_ADDABLE}

    def __init__(self, **kwargs):
        super().__init__(
            slug_field="username", queryset=get_user_model().objects.filter(is_active=True), **kwargs
        )

    def to_internal_value(self, data):
        instance = getattr(self.parent, "instance", None)
        if instance is not None:
            if data != instance.user.username:
                raise serializers.ValidationError("cannot be changed; add a new member instead")
            return instance.user
        if not isinstance(data, str) or not 0 < len(data) <= 150:
            self.fail("invalid")
        return super().to_internal_value(data)


class MemberSerializer(serializers.ModelSerializer):
    username = MemberUsernameField(source="user")
    name = serializers.SerializerMethodField()

    class Meta:
        model = Member
        fields = ["id", "username", "name", "role", "trade", "active"]
        read_only_fields = ["id", "name"]

    def get_name(self, member) -> str:
        return member.user.get_full_name() or member.user.username

    def validate(self, attrs):
        role = attrs.get("role", getattr(self.instance, "role", None))
        trade = attrs.get("trade", getattr(self.instance, "trade", ""))
        if role == Role.CREW and not trade:
            raise serializers.ValidationError({"trade": ["required for a crew member"]})
        if role != Role.CREW and trade:
            raise serializers.ValidationError({"trade": ["only crew members have a trade"]})
        job = self.context["job"]
        user = attrs.get("user")
        if user and self.instance is None and Member.objects.filter(job=job, user=user).exists():
            raise serializers.ValidationError({"username": ["is already a member of this job"]})
        return attrs


class WallTypeSerializer(serializers.ModelSerializer):
    tl = CurveField()
    # 20 mm (a single board) to 1 m; the depth of every through-gap is taken from it.
    thickness = UnitField("gap", source="thickness_m", min_value=0.02, max_value=1.0)

    class Meta:
        model = WallType
        fields = [
            "id",
            "code",
            "name",
            "construction",
            "layers",
            "tl",
            "tl_source",
            "lab_reference",
            "design_rating",
            "rating_scheme",
            "thickness",
            "fire_rated",
            "updated_at",
        ]
        read_only_fields = ["id", "design_rating", "updated_at"]

    def validate_layers(self, layers):
        # Stored as given for a lab wall type: bounded like free text (a real build-up is < 2 KB).
        if len(json.dumps(layers)) > LAYERS_MAX:
            raise serializers.ValidationError(f"at most {LAYERS_MAX} characters of JSON")
        return layers

    def validate_code(self, code):
        clash = WallType.objects.filter(job=self.context["job"], code=code)
        if self.instance:
            clash = clash.exclude(pk=self.instance.pk)
        if clash.exists():
            raise serializers.ValidationError("is already used by another wall type of this job")
        return code

    def validate(self, attrs):
        merged = {
            f: attrs.get(f, getattr(self.instance, f, None))
            for f in ("tl", "tl_source", "layers", "rating_scheme")
        }
        try:
            attrs["tl"], attrs["design_rating"] = resolve_wall_type_curve(**merged)
        except ValueError as exc:
            field, _, rule = str(exc).partition(": ")
            raise serializers.ValidationError({field: [rule]} if rule else {"layers": [str(exc)]}) from None
        return attrs


class WallSerializer(serializers.ModelSerializer):
    length = UnitField("size", source="length_m", min_value=0.1, max_value=1000)
    height = UnitField("size", source="height_m", min_value=0.1, max_value=100)
    target_rating = serializers.IntegerField(min_value=0, max_value=100, allow_null=True, required=False)
    wall_type = serializers.PrimaryKeyRelatedField(queryset=WallType.objects.none())
    seal_points_total = serializers.IntegerField(read_only=True, default=None)
    seal_points_checked = serializers.IntegerField(read_only=True, default=None)
    findings_open = serializers.IntegerField(read_only=True, default=None)
    verdict = serializers.SerializerMethodField()

    class Meta:
        model = Wall
        fields = [
            "id",
            "tag",
            "level",
            "location",
            "face_a_label",
            "face_b_label",
            "length",
            "height",
            "target_rating",
            "rating_scheme",
            "wall_type",
            "version",
            "seal_points_total",
            "seal_points_checked",
            "findings_open",
            "verdict",
            "updated_at",
        ]
        read_only_fields = ["id", "version", "updated_at"]

    def get_verdict(self, wall) -> dict:
        """The wall's state in the words of :mod:`qa.audit.verdicts`, with its coverage per face.

        Worked out once for every wall of a list answer (one coverage query, cached audits).
        """
        from ..audit.verdicts import verdicts_for_walls

        # The stubs type ``context`` as a read-only Mapping; DRF hands every field the root's one dict,
        # which is what lets a list answer share this memo between its rows.
        memo = cast(dict[str, Any], self.context).setdefault("_verdicts", {})
        if wall.pk not in memo:
            many = getattr(self.parent, "instance", None) if self.parent is not None else None
            walls = [wall] if many is None else list(many)
            # A list may show an audit a moment old, marked so; one wall's answer is always recounted.
            max_age = 0 if many is None else settings.LIST_MAX_AGE
            memo.update(verdicts_for_walls([w for w in walls if w.pk not in memo] or [wall], max_age=max_age))
        return memo[wall.pk]

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        if "job" in self.context:
            self.fields["wall_type"].queryset = WallType.objects.filter(job=self.context["job"])

    def validate_tag(self, tag):
        clash = Wall.objects.filter(job=self.context["job"], tag=tag)
        if self.instance:
            clash = clash.exclude(pk=self.instance.pk)
        if clash.exists():
            raise serializers.ValidationError("is already used by another wall of this job")
        return tag


class OpeningSerializer(serializers.ModelSerializer):
    width = UnitField("size", source="width_m", min_value=0.05, max_value=20)
    height = UnitField("size", source="height_m", min_value=0.05, max_value=10)
    tl = CurveField()
    rating = serializers.IntegerField(min_value=0, max_value=100, allow_null=True, required=False)

    class Meta:
        model = Opening
        fields = ["id", "kind", "label", "width", "height", "tl", "rating", "fire_rated"]
        read_only_fields = ["id"]

    def validate(self, attrs):
        tl = attrs.get("tl", getattr(self.instance, "tl", []))
        rating = attrs.get("rating", getattr(self.instance, "rating", None))
        if not tl and rating is None:
            raise serializers.ValidationError({"rating": ["give a TL curve or a rating for the opening"]})
        wall = self.context["wall"]
        width = attrs.get("width_m", getattr(self.instance, "width_m", 0))
        height = attrs.get("height_m", getattr(self.instance, "height_m", 0))
        if width > wall.length_m:
            raise serializers.ValidationError({"width": ["is wider than the wall"]})
        if height > wall.height_m:
            raise serializers.ValidationError({"height": ["is taller than the wall"]})
        if width * height >= wall.area_m2:
            raise serializers.ValidationError({"width": ["the opening is as large as the wall or larger"]})
        return attrs


class SealPointSerializer(serializers.ModelSerializer):
    class Meta:
        model = SealPoint
        fields = [
            "id",
            "wall",
            "template_key",
            "label",
            "face",
            "trade",
            "correct",
            "usual_defect",
            "gap_kind",
            "gap",
            "at_edge",
            "caution",
            "position",
            "status",
            "checked_at",
            "version",
        ]
        read_only_fields = ["id", "wall", "template_key", "checked_at", "version", "gap"]
        # Free text is bounded like every note (the model's TextFields are not).
        extra_kwargs = {"correct": {"max_length": 2000}, "usual_defect": {"max_length": 2000}}


class FindingSerializer(serializers.ModelSerializer):
    client_id = serializers.UUIDField(required=False)
    wall = serializers.PrimaryKeyRelatedField(queryset=Wall.objects.none())
    seal_point = serializers.PrimaryKeyRelatedField(
        queryset=SealPoint.objects.none(), allow_null=True, required=False
    )
    width = UnitField("gap", source="width_m", required=False, allow_null=True)
    length = UnitField("gap", source="length_m", required=False, allow_null=True)
    diameter = UnitField("gap", source="diameter_m", required=False, allow_null=True)
    depth = UnitField("gap", source="depth_m", required=False, allow_null=True)
    area = UnitField("area", source="area_m2", required=False, allow_null=True)
    count = serializers.IntegerField(min_value=1, max_value=500, required=False)
    along = UnitField("size", source="along_m", required=False, allow_null=True)
    note = serializers.CharField(max_length=2000, required=False, allow_blank=True)
    created_by: serializers.SlugRelatedField[User] = serializers.SlugRelatedField(
        slug_field="username", read_only=True
    )
    photos = serializers.SerializerMethodField()

    class Meta:
        model = Finding
        fields = [
            "id",
            "client_id",
            "wall",
            "seal_point",
            "kind",
            "face",
            "width",
            "length",
            "diameter",
            "depth",
            "area",
            "fill",
            "at_edge",
            "count",
            "along",
            "along_from",
            "height_band",
            "trade",
            "note",
            "status",
            "fix_note",
            "version",
            "created_by",
            "created_at",
            "updated_at",
            "device_time",
            "fixed_at",
            "verified_at",
            "photos",
        ]
        read_only_fields = [
            "id",
            "status",
            "fix_note",
            "version",
            "created_by",
            "created_at",
            "updated_at",
            "fixed_at",
            "verified_at",
        ]

    #: The fields built from the model once per process; each serializer gets its own copies.
    _built_fields: dict | None = None

    def get_fields(self):
        # ModelSerializer re-reads the model's metadata for every instance; the walk's sync makes one
        # serializer per operation, so build the unbound fields once and hand out deep copies.
        cls = type(self)
        if cls.__dict__.get("_built_fields") is None:
            cls._built_fields = super().get_fields()
        return copy.deepcopy(cls._built_fields)

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        job = self.context.get("job")
        if job is not None:
            self.fields["wall"].queryset = Wall.objects.filter(job=job, removed=False).select_related(
                "wall_type"
            )
            self.fields["seal_point"].queryset = SealPoint.objects.filter(wall__job=job, removed=False)

    def get_photos(self, finding) -> list[str]:
        return [str(p.id) for p in finding.photos.all() if not p.removed]

    def to_representation(self, instance):
        # The same fields DRF would write (held equal by a test), at a tenth of the cost.
        return finding_json(
            instance, self.context["job"].units, self.get_photos(instance), instance.created_by.username
        )

    def validate_client_id(self, value):
        if self.instance is not None and value != self.instance.client_id:
            raise serializers.ValidationError("cannot be changed")
        return value

    def validate(self, attrs):
        current = {f: getattr(self.instance, f) for f in Finding.GEOMETRY_FIELDS} if self.instance else {}
        dims = {f: attrs.get(f, current.get(f)) for f in Finding.GEOMETRY_FIELDS}
        dims["count"] = dims["count"] or 1
        kind = attrs.get("kind", getattr(self.instance, "kind", None))
        face = attrs.get("face", getattr(self.instance, "face", "through"))
        wall = attrs.get("wall", getattr(self.instance, "wall", None))
        point = attrs.get("seal_point", getattr(self.instance, "seal_point", None))
        if point is not None and point.wall_id != wall.id:
            raise serializers.ValidationError({"seal_point": ["belongs to another wall"]})
        if self.instance is not None and "wall" in attrs and attrs["wall"].id != self.instance.wall_id:
            raise serializers.ValidationError({"wall": ["a finding cannot move to another wall"]})
        along = attrs.get("along_m", getattr(self.instance, "along_m", None))
        if along is not None:
            if along == 0:
                along = attrs["along_m"] = 0.0  # never store a negative zero
            if along < 0 or along > wall.length_m:
                raise serializers.ValidationError({"along": ["must be between zero and the wall's length"]})
            if not attrs.get("along_from", getattr(self.instance, "along_from", "")):
                attrs["along_from"] = "start"
        errors = geometry_errors(kind, face, dims, wall)
        if errors:
            raise serializers.ValidationError({SI_TO_API.get(k, k): [v] for k, v in errors.items()})
        return attrs


class PhotoSerializer(serializers.ModelSerializer):
    id = serializers.UUIDField(required=False)
    image = serializers.FileField(write_only=True)
    finding = serializers.PrimaryKeyRelatedField(
        queryset=Finding.objects.none(), allow_null=True, required=False
    )
    wall = serializers.PrimaryKeyRelatedField(queryset=Wall.objects.none(), required=False)
    url = serializers.SerializerMethodField()
    thumbnail_url = serializers.SerializerMethodField()
    uploaded_by: serializers.SlugRelatedField[User] = serializers.SlugRelatedField(
        slug_field="username", read_only=True
    )

    class Meta:
        model = Photo
        fields = [
            "id",
            "finding",
            "wall",
            "purpose",
            "image",
            "caption",
            "captured_at",
            "width",
            "height",
            "bytes",
            "sha256",
            "received_sha256",
            "original_format",
            "uploaded_by",
            "uploaded_at",
            "url",
            "thumbnail_url",
        ]
        read_only_fields = [
            "width",
            "height",
            "bytes",
            "sha256",
            "received_sha256",
            "original_format",
            "uploaded_by",
            "uploaded_at",
        ]

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        job = self.context.get("job")
        if job is not None:
            self.fields["finding"].queryset = Finding.objects.filter(job=job, removed=False)
            self.fields["wall"].queryset = Wall.objects.filter(job=job, removed=False).select_related(
                "wall_type"
            )

    def _url(self, photo, kind):
        from django.urls import reverse

        return reverse("qa:photo-file", kwargs={"job_pk": photo.job_id, "photo_id": photo.id, "kind": kind})

    def get_url(self, photo) -> str:
        return self._url(photo, "image")

    def get_thumbnail_url(self, photo) -> str:
        return self._url(photo, "thumb")

    def validate(self, attrs):
        finding = attrs.get("finding")
        wall = attrs.get("wall")
        if finding is None and wall is None:
            raise serializers.ValidationError({"wall": ["give the wall or the finding the photo shows"]})
        if finding is not None:
            if wall is not None and wall.id != finding.wall_id:
                raise serializers.ValidationError({"wall": ["is not the wall of this finding"]})
            attrs["wall"] = finding.wall
        return attrs


class EventSerializer(serializers.ModelSerializer):
    actor: serializers.SlugRelatedField[User] = serializers.SlugRelatedField(
        slug_field="username", read_only=True
    )

    class Meta:
        model = Event
        fields = ["id", "actor", "verb", "target_type", "target_id", "data", "at", "device_at", "device_id"]
        read_only_fields = fields


class NoteSerializer(serializers.Serializer):
    """Body of a lifecycle step (fix, verify, reopen, remove)."""

    note = serializers.CharField(max_length=2000, required=False, allow_blank=True, default="")
    version = serializers.IntegerField(
        required=False, min_value=1, help_text="The version the client saw; a stale one answers 409."
    )


__all__ = ["FiniteFloatField"]
