from __future__ import annotations

from django.db import models

from ..choices import Construction, CurveSource, Face, GapKind, OpeningKind, RatingScheme, SealStatus, Trade
from .jobs import Job


class WallType(models.Model):
    """A partition design: its layers, its TL curve on the 21 bands 50–5000 Hz, its design rating.

    ``tl`` is a list of 21 numbers (dB) or nulls for bands not measured. ``layers`` is the
    structured construction understood by ``acoustics.walls`` (see DEVELOPERS.md).
    """

    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="wall_types")
    code = models.CharField(max_length=20, help_text="Short mark on the drawings, e.g. 'W3'.")
    name = models.CharField(max_length=120)
    construction = models.CharField(max_length=20, choices=Construction.choices)
    layers = models.JSONField(default=dict, blank=True)
    tl = models.JSONField(default=list, blank=True)
    tl_source = models.CharField(max_length=10, choices=CurveSource.choices, default=CurveSource.PREDICTED)
    lab_reference = models.CharField(max_length=200, blank=True)
    design_rating = models.IntegerField(null=True, blank=True)
    rating_scheme = models.CharField(max_length=4, choices=RatingScheme.choices, default=RatingScheme.STC)
    thickness_m = models.FloatField(help_text="Overall thickness, m (depth of a gap through the wall).")
    fire_rated = models.BooleanField(default=True, help_text="Most demising walls are fire partitions.")
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["code", "id"]
        constraints = [models.UniqueConstraint(fields=["job", "code"], name="wall_type_code_per_job")]

    def __str__(self) -> str:
        return f"{self.code} {self.name}"


class WallQuerySet(models.QuerySet):
    def live(self) -> WallQuerySet:
        return self.filter(removed=False)


class Wall(models.Model):
    """One built partition of a wall type."""

    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="walls")
    wall_type = models.ForeignKey(WallType, on_delete=models.PROTECT, related_name="walls")
    tag = models.CharField(max_length=30)
    level = models.CharField(max_length=30)
    location = models.CharField(max_length=120, blank=True, help_text="e.g. 'between unit 304 and 305'")
    face_a_label = models.CharField(max_length=60, default="Face A")
    face_b_label = models.CharField(max_length=60, default="Face B")
    length_m = models.FloatField()
    height_m = models.FloatField()
    target_rating = models.IntegerField(null=True, blank=True)
    rating_scheme = models.CharField(max_length=4, choices=RatingScheme.choices, default=RatingScheme.STC)
    removed = models.BooleanField(default=False)
    version = models.PositiveIntegerField(default=1)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    objects = WallQuerySet.as_manager()

    class Meta:
        ordering = ["level", "tag", "id"]
        constraints = [models.UniqueConstraint(fields=["job", "tag"], name="wall_tag_per_job")]
        indexes = [models.Index(fields=["job", "level"])]

    def __str__(self) -> str:
        return self.tag

    @property
    def area_m2(self) -> float:
        return self.length_m * self.height_m

    def add_template_seal_points(self, construction: str | None = None) -> list[SealPoint]:
        """Create this wall's seal points from its wall type's checklist template (or another one).

        The template is placed on the wall type's faces (:func:`qa.checklists.template_for`): the
        resilient-channel checks go on the face its layers give the channel.
        """
        from ..checklists import template_for

        start = (self.seal_points.aggregate(models.Max("position"))["position__max"] or -1) + 1
        points = [
            SealPoint(
                wall=self,
                template_key=t.key,
                label=t.label,
                face=t.face,
                trade=t.trade,
                correct=t.correct,
                usual_defect=t.usual_defect,
                gap_kind=t.gap_kind,
                gap=dict(t.gap),
                at_edge=t.at_edge,
                caution=t.caution,
                position=start + i,
            )
            for i, t in enumerate(
                template_for(construction or self.wall_type.construction, self.wall_type.layers)
            )
        ]
        return SealPoint.objects.bulk_create(points)

    def add_door_seal_points(self) -> list[SealPoint]:
        """A wall that gets its first door also gets the door-set checklist."""
        from ..choices import Construction

        if self.seal_points.filter(template_key__in=_door_keys()).exists():
            return []
        return self.add_template_seal_points(Construction.DOOR)


def _door_keys() -> list[str]:
    from ..checklists import template_for
    from ..choices import Construction

    return [t.key for t in template_for(Construction.DOOR)]


class Opening(models.Model):
    """A door or window in a wall, with its own area and TL curve (or a single rating)."""

    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="openings")
    kind = models.CharField(max_length=10, choices=OpeningKind.choices, default=OpeningKind.DOOR)
    label = models.CharField(max_length=60, blank=True)
    width_m = models.FloatField()
    height_m = models.FloatField()
    tl = models.JSONField(default=list, blank=True)
    rating = models.IntegerField(null=True, blank=True, help_text="Used when no TL curve is known.")
    fire_rated = models.BooleanField(default=False)
    removed = models.BooleanField(default=False)

    class Meta:
        ordering = ["id"]

    def __str__(self) -> str:
        return self.label or self.get_kind_display()

    @property
    def area_m2(self) -> float:
        return self.width_m * self.height_m


class SealPoint(models.Model):
    """One thing to check on a wall, made from its wall type's checklist template or added by hand."""

    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="seal_points")
    template_key = models.CharField(max_length=60, blank=True)
    label = models.CharField(max_length=80)
    face = models.CharField(max_length=8, choices=Face.choices, default=Face.THROUGH)
    trade = models.CharField(max_length=12, choices=Trade.choices)
    correct = models.TextField(blank=True)
    usual_defect = models.TextField(blank=True)
    gap_kind = models.CharField(max_length=20, choices=GapKind.choices, default=GapKind.SLIT)
    gap = models.JSONField(default=dict, blank=True, help_text="Default defect geometry, SI.")
    at_edge = models.BooleanField(default=False)
    caution = models.CharField(max_length=40, blank=True)
    position = models.PositiveIntegerField(default=0)
    status = models.CharField(max_length=10, choices=SealStatus.choices, default=SealStatus.UNCHECKED)
    checked_by = models.ForeignKey(
        "auth.User", null=True, blank=True, on_delete=models.SET_NULL, related_name="+"
    )
    checked_at = models.DateTimeField(null=True, blank=True)
    removed = models.BooleanField(default=False)
    version = models.PositiveIntegerField(default=1)

    class Meta:
        ordering = ["position", "id"]

    def __str__(self) -> str:
        return f"{self.wall.tag}: {self.label}"
