from __future__ import annotations

from django.conf import settings
from django.db import models

from ..choices import RatingScheme, Role, Trade, Units
from ..field.choices import BuildingKind


class JobQuerySet(models.QuerySet):
    def for_user(self, user) -> JobQuerySet:
        if not user.is_authenticated:
            return self.none()
        return self.filter(members__user=user, members__active=True).distinct()


class Job(models.Model):
    """One building project."""

    name = models.CharField(max_length=120)
    address = models.CharField(max_length=200, blank=True)
    units = models.CharField(max_length=10, choices=Units.choices, default=Units.METRIC)
    rating_scheme = models.CharField(
        max_length=4,
        choices=RatingScheme.choices,
        default=RatingScheme.STC,
        help_text="Default rating scheme for walls of this job.",
    )
    rule_set = models.CharField(
        max_length=200,
        blank=True,
        help_text="The code or specification the targets come from, e.g. 'Project spec: STC 55 between units'.",  # noqa: E501
    )
    building_kind = models.CharField(
        max_length=20,
        choices=BuildingKind.choices,
        default=BuildingKind.WOOD_FRAME,
        db_default=BuildingKind.WOOD_FRAME.value,  # rows written by other tools (imports, raw SQL) too
        help_text="Sets the default floors, ceilings and side walls of the field prediction.",
    )
    field_targets = models.JSONField(
        default=list,
        db_default=models.Value([], output_field=models.JSONField()),  # rows written by other tools too
        blank=True,
        help_text="The rule set's field targets per kind of wall: [{wall_type: code or null for every "
        "other wall, descriptor: astc | nnic | r_prime_w | dnt_w, value}] (qa.field.inputs.field_target).",
    )
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    objects = JobQuerySet.as_manager()

    class Meta:
        ordering = ["name", "id"]

    def __str__(self) -> str:
        return self.name


class Member(models.Model):
    """A user's role on one job. Crew members carry their trade."""

    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="members")
    user = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="memberships")
    role = models.CharField(max_length=10, choices=Role.choices)
    trade = models.CharField(max_length=12, choices=Trade.choices, blank=True)
    active = models.BooleanField(default=True)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["job", "user"], name="one_membership_per_job"),
            models.CheckConstraint(
                condition=(models.Q(role="crew") & ~models.Q(trade=""))
                | (~models.Q(role="crew") & models.Q(trade="")),
                name="crew_has_trade_others_none",
            ),
        ]

    def __str__(self) -> str:
        extra = f" ({self.trade})" if self.trade else ""
        return f"{self.user} — {self.role}{extra} on {self.job}"

    @property
    def is_inspector(self) -> bool:
        return self.role == Role.INSPECTOR

    @property
    def is_crew(self) -> bool:
        return self.role == Role.CREW

    @property
    def is_owner(self) -> bool:
        return self.role == Role.OWNER
