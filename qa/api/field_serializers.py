"""Serializers of the field rating: room pairs, junction overrides, field tests, the building kind.

Volumes, areas and times are SI on the wire (``*_m3``, ``*_m2``, ``*_s``). Every rule broken is a 400
naming the field and the rule; a field test is checked by the engine before it is stored.
"""

from __future__ import annotations

import numpy as np
from rest_framework import serializers

from acoustics.building_kinds import predict_wall
from acoustics.field import FieldInputError

from ..field.choices import BuildingKind, FieldDescriptor, TestStandard
from ..field.inputs import MAX_VOLUME_M3, check_rooms, junctions_of, rooms_of, wall_structure
from ..field.measurements import clean_bands, compute_results, parse_csv
from ..models import FieldTest, JunctionOverride, RoomPair, WallType
from .fields import FiniteFloatField


class RoomPairSerializer(serializers.ModelSerializer):
    source_volume_m3 = FiniteFloatField(required=False, allow_null=True)
    receiving_volume_m3 = FiniteFloatField(required=False, allow_null=True)
    receiving_t_s = FiniteFloatField(required=False, allow_null=True)
    area_m2 = FiniteFloatField(required=False, allow_null=True)
    field_target = serializers.IntegerField(required=False, allow_null=True, min_value=0, max_value=100)

    class Meta:
        model = RoomPair
        fields = [
            "id",
            "label",
            "source_face",
            "source_volume_m3",
            "receiving_volume_m3",
            "receiving_t_s",
            "area_m2",
            "field_target",
            "field_descriptor",
            "updated_at",
        ]
        read_only_fields = ["id", "updated_at"]

    def validate(self, attrs):
        wall = self.context["wall"]
        merged = {f: getattr(self.instance, f, None) for f in self.Meta.fields if f not in ("id",)}
        merged.update(attrs)
        errors = check_rooms(wall, merged)
        if errors:
            raise serializers.ValidationError({k: [v] for k, v in errors.items()})
        return attrs


class JunctionOverrideSerializer(serializers.ModelSerializer):
    class Meta:
        model = JunctionOverride
        fields = ["id", "position", "kind", "element_from", "updated_at"]
        read_only_fields = ["id", "updated_at"]

    def validate(self, attrs):
        wall = self.context["wall"]
        job = self.context["job"]
        position = attrs.get("position", getattr(self.instance, "position", None))
        others = JunctionOverride.objects.filter(wall=wall, position=position)
        if self.instance is not None:
            others = others.exclude(pk=self.instance.pk)
        if others.exists():
            raise serializers.ValidationError({"position": ["this wall already has a junction here"]})
        trial = JunctionOverride(
            wall=wall,
            position=position,
            kind=attrs.get("kind", getattr(self.instance, "kind", None)),
            element_from=attrs.get("element_from", getattr(self.instance, "element_from", "")),
        )
        # The engine must accept the junction with this wall before it is stored.
        try:
            rooms = rooms_of(wall)
            predict_wall(
                np.full(21, 40.0),
                wall.length_m,
                wall.height_m,
                rooms.source,
                rooms.receiving,
                building_kind=job.building_kind,
                junctions=junctions_of([trial], job.building_kind),
                **wall_structure(wall),
            )
        except FieldInputError as exc:
            raise serializers.ValidationError({"kind": [f"{exc.field}: {exc.rule}"]}) from None
        return attrs


class BuildingKindSerializer(serializers.Serializer):
    building_kind = serializers.ChoiceField(choices=BuildingKind.choices)


class FieldTargetSerializer(serializers.Serializer):
    """One rule of the job's rule set: a field target for a kind of wall (a wall type, or every wall)."""

    wall_type = serializers.CharField(
        max_length=20,
        allow_null=True,
        required=False,
        default=None,
        help_text="Wall type code; null: every wall",
    )
    descriptor = serializers.ChoiceField(choices=FieldDescriptor.choices)
    value = serializers.IntegerField(min_value=10, max_value=100)


class FieldTargetsSerializer(serializers.Serializer):
    """The job's field targets; a wall is judged against the rule for its wall type, else the rule
    for every wall, unless its rooms have their own target."""

    field_targets = FieldTargetSerializer(many=True, max_length=100)  # type: ignore[call-arg]  # ListSerializer

    def validate_field_targets(self, rules: list[dict]) -> list[dict]:
        codes = set(WallType.objects.filter(job=self.context["job"]).values_list("code", flat=True))
        seen: set[str | None] = set()
        for i, rule in enumerate(rules):
            code = rule.get("wall_type") or None
            if code is not None and code not in codes:
                raise serializers.ValidationError(
                    f"item {i}: wall_type {code!r} is not a wall type of this job"
                )
            if code in seen:
                kind = "every wall" if code is None else f"wall type {code}"
                raise serializers.ValidationError(
                    f"item {i}: a second target for {kind}; one target per kind of wall"
                )
            seen.add(code)
        return [
            {"wall_type": r.get("wall_type") or None, "descriptor": r["descriptor"], "value": r["value"]}
            for r in rules
        ]


class FieldTestSerializer(serializers.ModelSerializer):
    """A field test: JSON ``bands`` or (multipart) a CSV ``file`` one row a band."""

    volume_m3 = FiniteFloatField(required=False, allow_null=True)
    area_m2 = FiniteFloatField(required=False, allow_null=True)
    bands = serializers.JSONField(required=False)
    file = serializers.FileField(required=False, write_only=True)
    allow_background_limit = serializers.BooleanField(required=False, default=False, write_only=True)
    standard = serializers.ChoiceField(choices=TestStandard.choices)
    room_pair = serializers.PrimaryKeyRelatedField(
        queryset=RoomPair.objects.none(), required=False, allow_null=True
    )

    class Meta:
        model = FieldTest
        fields = [
            "id",
            "room_pair",
            "tested_on",
            "tester",
            "standard",
            "source",
            "volume_m3",
            "area_m2",
            "bands",
            "file",
            "allow_background_limit",
            "results",
            "note",
            "created_at",
        ]
        read_only_fields = ["id", "results", "created_at"]

    def get_fields(self):
        fields = super().get_fields()
        wall = self.context.get("wall")
        if wall is not None:
            fields["room_pair"].queryset = RoomPair.objects.filter(wall=wall)
        return fields

    def validate(self, attrs):
        upload = attrs.pop("file", None)
        strict = not attrs.pop("allow_background_limit", False)
        source = attrs.get("source", "levels")
        try:
            if upload is not None:
                if "bands" in attrs:
                    raise FieldInputError("file", "give the bands as JSON or as a CSV file, not both")
                try:
                    text = upload.read(64 * 1024 + 1).decode("utf-8")
                except UnicodeDecodeError:
                    raise FieldInputError("file", "must be UTF-8 text (CSV)") from None
                if source != "levels":
                    raise FieldInputError("file", "a CSV carries measured levels (source 'levels')")
                bands = parse_csv(text)
            elif "bands" in attrs:
                bands = attrs["bands"]
            else:
                raise FieldInputError("bands", "give the band series (JSON) or a CSV file")
            bands = clean_bands(bands, source)
            for key in ("volume_m3", "area_m2"):
                v = attrs.get(key)
                upper = MAX_VOLUME_M3 if key == "volume_m3" else 1e4
                if v is not None and not 0 < v <= upper:
                    unit = "m³" if key == "volume_m3" else "m²"
                    raise FieldInputError(key, f"must be > 0 {unit} and at most {upper:g} {unit}")
            results = compute_results(
                source,
                bands,
                volume=attrs.get("volume_m3"),
                area=attrs.get("area_m2"),
                strict_background=strict,
            )
        except FieldInputError as exc:
            field = {"volume": "volume_m3", "area": "area_m2"}.get(exc.field, exc.field)
            raise serializers.ValidationError({field: [exc.rule]}) from None
        attrs["bands"] = bands
        attrs["results"] = results
        return attrs


class FieldPredictionSerializer(serializers.Serializer):
    """The shape of a wall's field prediction (read-only; see :func:`qa.field.prediction.compute_field`)."""

    wall = serializers.IntegerField()
    building_kind = serializers.ChoiceField(choices=BuildingKind.choices)
    caution = serializers.CharField()
    error = serializers.CharField(allow_null=True)
    pairs = serializers.ListField(
        child=serializers.DictField(),
        help_text="Per room pair: rooms, junctions, target and states designed/walked/now with R'w, DnT,w "
        "(C, Ctr), ASTC, NNIC, bands, path shares and margin.",
    )
    tests = serializers.ListField(child=serializers.DictField())


class TestPlanSerializer(serializers.Serializer):
    """The shape of a job's test plan (read-only; see :func:`qa.field.plan.job_test_plan`)."""

    job = serializers.IntegerField()
    building_kind = serializers.ChoiceField(choices=BuildingKind.choices)
    caution = serializers.CharField()
    rows = serializers.ListField(child=serializers.DictField(), help_text="Walls in test order.")
    by_walk = serializers.ListField(
        child=serializers.IntegerField(), help_text="Wall ids by what the walk found."
    )


__all__ = [
    "BuildingKindSerializer",
    "FieldPredictionSerializer",
    "FieldTestSerializer",
    "JunctionOverrideSerializer",
    "RoomPairSerializer",
    "TestPlanSerializer",
]
