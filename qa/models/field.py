"""The field rating's record: the rooms on each face of a wall, junction overrides and field tests.

Everything in SI: volumes m³, areas m², reverberation times s, levels dB. Band series are lists of
21 values over the one-third octaves 50–5000 Hz (``acoustics.BANDS``), null where not measured.
What the rooms and junctions mean to the prediction is in :mod:`qa.field.inputs`.
"""

from __future__ import annotations

from django.conf import settings
from django.db import models

from ..choices import Face
from ..field.choices import BuildingKind, FieldDescriptor, JunctionKind, JunctionPosition, TestStandard
from .walls import Wall


class RoomPair(models.Model):
    """The two rooms a wall separates: what a field test of the wall would measure between.

    Blank values default (:mod:`qa.field.inputs`): volumes to the wall's length × 4 m × height, the
    receiving room's reverberation time to 0.5 s (furnished), the separating area to the wall's area.
    """

    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="room_pairs")
    label = models.CharField(max_length=120, blank=True, help_text="e.g. 'Unit 304 to unit 305'")
    source_face = models.CharField(
        max_length=1,
        choices=[(Face.A, "Face A"), (Face.B, "Face B")],
        default=Face.A,
        help_text="The face of the wall in the source room.",
    )
    source_volume_m3 = models.FloatField(null=True, blank=True)
    receiving_volume_m3 = models.FloatField(null=True, blank=True)
    receiving_t_s = models.FloatField(null=True, blank=True, help_text="Reverberation time, s.")
    area_m2 = models.FloatField(null=True, blank=True, help_text="Separating area the rooms share, m².")
    field_target = models.IntegerField(null=True, blank=True)
    field_descriptor = models.CharField(max_length=10, choices=FieldDescriptor.choices, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["wall", "id"]

    def __str__(self) -> str:
        return self.label or f"rooms of {self.wall}"


class JunctionOverride(models.Model):
    """A junction of a wall entered by a consultant; the others default from the job's building kind."""

    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="junction_overrides")
    position = models.CharField(max_length=8, choices=JunctionPosition.choices)
    kind = models.CharField(max_length=24, choices=JunctionKind.choices)
    element_from = models.CharField(
        max_length=20,
        choices=BuildingKind.choices,
        blank=True,
        help_text="Building kind whose flanking element at this position is built here (blank: the job's).",
    )
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["wall", "position"]
        constraints = [
            models.UniqueConstraint(fields=["wall", "position"], name="one_junction_per_wall_position")
        ]

    def __str__(self) -> str:
        return f"{self.wall} {self.position}: {self.kind}"


class FieldTest(models.Model):
    """A field test of a pair of rooms across a wall: measured band levels or a report's band results.

    ``bands`` holds {"l1", "l2", "b2", "t2"} (``source == "levels"``) or any of {"r_prime", "dnt",
    "atl", "nnr"} (``source == "report"``); ``results`` caches the engine's descriptors
    (:func:`qa.field.measurements.compute_results`), written with the bands in one save. A test is
    never deleted by a user: removal sets ``removed`` and is recorded as an event.
    """

    SOURCES = [("levels", "Measured levels"), ("report", "Band results of a test report")]

    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="field_tests")
    room_pair = models.ForeignKey(
        RoomPair, on_delete=models.SET_NULL, null=True, blank=True, related_name="field_tests"
    )
    tested_on = models.DateField()
    tester = models.CharField(max_length=120)
    standard = models.CharField(max_length=12, choices=TestStandard.choices)
    source = models.CharField(max_length=8, choices=SOURCES, default="levels")
    volume_m3 = models.FloatField(null=True, blank=True, help_text="Receiving-room volume, m³.")
    area_m2 = models.FloatField(null=True, blank=True, help_text="Separating area, m².")
    bands = models.JSONField(default=dict)
    results = models.JSONField(default=dict, blank=True)
    note = models.CharField(max_length=300, blank=True)
    removed = models.BooleanField(
        default=False, db_default=False, help_text="Removal is an event, not a delete."
    )
    created_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.SET_NULL, null=True, blank=True, related_name="+"
    )
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["wall", "-tested_on", "-id"]

    def __str__(self) -> str:
        return f"{self.standard} test of {self.wall} on {self.tested_on}"
