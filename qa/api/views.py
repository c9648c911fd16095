"""API views. Thin: resolve the job through the access helper, let serializers validate, let models act."""

from __future__ import annotations

from contextlib import contextmanager
from typing import TYPE_CHECKING

from django.db import IntegrityError, transaction
from django.db.models import Count, IntegerField, OuterRef, Prefetch, QuerySet, Subquery
from django.db.models.functions import Coalesce
from rest_framework import mixins, status, viewsets
from rest_framework.decorators import action
from rest_framework.exceptions import NotFound, ValidationError
from rest_framework.response import Response
from rest_framework.throttling import ScopedRateThrottle

from .. import actions
from ..access import membership, require
from ..actions.parse import parse_version
from ..choices import FindingStatus, Role, SealStatus
from ..converters import ID_REGEX
from ..models import Event, Finding, Job, Member, Opening, Photo, SealPoint, Wall, WallType
from . import serializers as s
from .filters import apply_filters

READ_ACTIONS = {"list", "retrieve", "metadata"}

if TYPE_CHECKING:
    # For the type checker only: the mixin always sits before a GenericViewSet, whose ``action``,
    # ``request`` and ``super()`` it uses. At run time the base stays ``object`` (a plain mixin).
    _JobScopedBase = viewsets.GenericViewSet
else:
    _JobScopedBase = object


class JobScopedMixin(_JobScopedBase):
    """Resolve ``job_pk`` for every request: a non-member gets 404, a member without the right 403."""

    lookup_value_regex = ID_REGEX

    #: The right needed for writes (reads need "view").
    write_right = "edit"

    def initial(self, request, *args, **kwargs):
        super().initial(request, *args, **kwargs)
        self.member = membership(request.user, kwargs.get("job_pk"))
        self.job = self.member.job
        require(self.member, self.right_needed())

    def right_needed(self) -> str:
        return "view" if self.action in READ_ACTIONS or self.action is None else self.write_right

    def get_serializer_context(self):
        context = super().get_serializer_context()
        if hasattr(self, "job"):
            context["job"] = self.job
        return context

    def record(self, verb: str, target, data: dict | None = None) -> None:
        Event.record(self.job, self.request.user, verb, target, data)

    def actor(self) -> actions.Actor:
        return actions.Actor(self.member)


class JobViewSet(viewsets.ReadOnlyModelViewSet):
    """Jobs the user is a member of."""

    serializer_class = s.JobSerializer
    lookup_url_kwarg = "job_pk"
    lookup_value_regex = ID_REGEX

    def get_queryset(self):
        return Job.objects.for_user(self.request.user)

    def get_serializer_context(self):
        context = super().get_serializer_context()
        members = (
            Member.objects.filter(user=self.request.user, active=True)
            if self.request.user.is_authenticated
            else []
        )
        context["members"] = {m.job_id: m for m in members}
        return context

    def retrieve(self, request, *args, **kwargs):
        membership(request.user, kwargs["job_pk"])
        return super().retrieve(request, *args, **kwargs)


class MemberViewSet(
    JobScopedMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    viewsets.GenericViewSet,
):
    """Members of a job. Inspectors manage them; removing a member deactivates it."""

    serializer_class = s.MemberSerializer
    queryset = Member.objects.none()  # for the schema only; get_queryset scopes to the job
    write_right = "manage_members"

    throttle_scope = "member_add"

    def get_throttles(self):
        # A refused add tells that no such account may be added; an accepted one, that it exists:
        # adds are counted per person so nobody can list the accounts by trying names.
        return [ScopedRateThrottle()] if self.action == "create" else []

    def get_queryset(self):
        return Member.objects.filter(job=self.job).select_related("user").order_by("id")

    @transaction.atomic
    def perform_create(self, serializer):
        member = serializer.save(job=self.job)
        self.record("member.added", member, {"role": member.role, "trade": member.trade})

    @transaction.atomic
    def perform_update(self, serializer):
        # Updates of one job's members queue on the job row, so two inspectors deactivating each
        # other at once cannot both pass the check below.
        Job.objects.select_for_update().filter(pk=self.job.pk).first()
        current = Member.objects.get(pk=serializer.instance.pk)
        data = serializer.validated_data
        stays = data.get("active", current.active) and data.get("role", current.role) == Role.INSPECTOR
        if current.active and current.role == Role.INSPECTOR and not stays:
            others = (
                Member.objects.filter(job=self.job, role=Role.INSPECTOR, active=True, user__is_active=True)
                .exclude(pk=current.pk)
                .exists()
            )
            if not others:
                field = "active" if not data.get("active", True) else "role"
                raise ValidationError(
                    {field: ["the job's last active inspector stays: add another inspector first"]}
                )
        member = serializer.save()
        self.record(
            "member.changed", member, {"role": member.role, "trade": member.trade, "active": member.active}
        )


class WallTypeViewSet(
    JobScopedMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    viewsets.GenericViewSet,
):
    serializer_class = s.WallTypeSerializer
    queryset = WallType.objects.none()  # for the schema only; get_queryset scopes to the job

    def get_queryset(self):
        return WallType.objects.filter(job=self.job)

    @transaction.atomic
    def perform_create(self, serializer):
        wall_type = serializer.save(job=self.job)
        self.record("walltype.created", wall_type, {"code": wall_type.code})

    @transaction.atomic
    def perform_update(self, serializer):
        wall_type = serializer.save()
        self.record("walltype.changed", wall_type, {"fields": sorted(serializer.validated_data)})


def _count(rows: QuerySet) -> Coalesce:
    """``COUNT(*)`` of ``rows`` (correlated to the outer wall) as an annotation."""
    counted = rows.order_by().values("wall").annotate(n=Count("pk")).values("n")
    return Coalesce(Subquery(counted, output_field=IntegerField()), 0)


class WallViewSet(
    JobScopedMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    mixins.DestroyModelMixin,
    viewsets.GenericViewSet,
):
    """Walls of a job, filterable by ``level`` and ``wall_type``. Creating a wall creates its seal points."""

    serializer_class = s.WallSerializer
    queryset = Wall.objects.none()  # for the schema only; get_queryset scopes to the job

    def get_queryset(self):
        # Counts by correlated subqueries: joining seal points and findings in one query multiplies
        # the rows (points x findings per wall) and grew with every finding recorded.
        points = SealPoint.objects.filter(wall=OuterRef("pk"), removed=False)
        walls = (
            Wall.objects.live()
            .filter(job=self.job)
            .annotate(
                seal_points_total=_count(points),
                seal_points_checked=_count(points.exclude(status=SealStatus.UNCHECKED)),
                findings_open=_count(
                    Finding.objects.filter(
                        wall=OuterRef("pk"),
                        removed=False,
                        status__in=[FindingStatus.OPEN, FindingStatus.REOPENED],
                    )
                ),
            )
        )
        return apply_filters(
            walls,
            self.request.query_params,
            {"level": ("level", "text"), "wall_type": ("wall_type_id", "id")},
        )

    @transaction.atomic
    def perform_create(self, serializer):
        wall = serializer.save(job=self.job)
        wall.add_template_seal_points()
        self.record("wall.created", wall, {"tag": wall.tag})

    @transaction.atomic
    def perform_update(self, serializer):
        wall = serializer.save(version=serializer.instance.version + 1)
        self.record("wall.changed", wall, {"fields": sorted(serializer.validated_data)})

    @transaction.atomic
    def perform_destroy(self, wall):
        wall.removed = True
        wall.version += 1
        wall.save(update_fields=["removed", "version", "updated_at"])
        self.record("wall.removed", wall, {"tag": wall.tag})


class WallChildMixin(JobScopedMixin):
    """Objects that hang off one wall: /jobs/{job}/walls/{wall}/..."""

    def initial(self, request, *args, **kwargs):
        super().initial(request, *args, **kwargs)
        try:
            self.wall = Wall.objects.select_related("wall_type").get(
                pk=int(kwargs["wall_pk"]), job=self.job, removed=False
            )
        except (Wall.DoesNotExist, ValueError):
            raise NotFound("No such wall in this job") from None

    def get_serializer_context(self):
        context = super().get_serializer_context()
        if hasattr(self, "wall"):
            context["wall"] = self.wall
        return context


class OpeningViewSet(
    WallChildMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    mixins.DestroyModelMixin,
    viewsets.GenericViewSet,
):
    serializer_class = s.OpeningSerializer
    queryset = Opening.objects.none()  # for the schema only; get_queryset scopes to the job

    def get_queryset(self):
        return Opening.objects.filter(wall=self.wall, removed=False)

    @transaction.atomic
    def perform_create(self, serializer):
        opening = serializer.save(wall=self.wall)
        if opening.kind == "door":
            self.wall.add_door_seal_points()
        self.record("opening.created", opening, {"wall": self.wall.tag})

    @transaction.atomic
    def perform_update(self, serializer):
        opening = serializer.save()
        self.record("opening.changed", opening, {"fields": sorted(serializer.validated_data)})

    @transaction.atomic
    def perform_destroy(self, opening):
        opening.removed = True
        opening.save(update_fields=["removed"])
        self.record("opening.removed", opening, {"wall": self.wall.tag})


class SealPointViewSet(
    WallChildMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    mixins.DestroyModelMixin,
    viewsets.GenericViewSet,
):
    """Seal points of a wall. PATCH ``status`` to tick one; DELETE removes it (kept in the record)."""

    serializer_class = s.SealPointSerializer
    queryset = SealPoint.objects.none()  # for the schema only; get_queryset scopes to the job

    def get_queryset(self):
        return SealPoint.objects.filter(wall=self.wall, removed=False)

    @transaction.atomic
    def perform_create(self, serializer):
        position = (
            self.get_queryset().order_by("-position").values_list("position", flat=True).first() or 0
        ) + 1
        point = serializer.save(wall=self.wall, position=serializer.validated_data.get("position", position))
        self.record("sealpoint.added", point, {"label": point.label})

    @transaction.atomic
    def perform_update(self, serializer):
        point = SealPoint.objects.select_for_update().get(pk=serializer.instance.pk)
        data = dict(serializer.validated_data)
        status_ = data.pop("status", None)
        ticked = status_ is not None and status_ != point.status
        if ticked:
            actions.tick_seal_point(self.actor(), point, status_)
        if data or not ticked:
            for name, value in data.items():
                setattr(point, name, value)
            point.version += 1
            point.save()
            self.record("sealpoint.changed", point, {"fields": sorted(data), "version": point.version})
        serializer.instance = point

    @transaction.atomic
    def perform_destroy(self, point):
        point.removed = True
        point.version += 1
        point.save(update_fields=["removed", "version"])
        self.record("sealpoint.removed", point, {"label": point.label})


class FindingViewSet(
    JobScopedMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.UpdateModelMixin,
    mixins.DestroyModelMixin,
    viewsets.GenericViewSet,
):
    """Findings of a job, filterable by ``wall``, ``level``, ``trade`` and ``status``.

    Crew members see every finding of the job but may act only on their own trade's.
    A replayed create with the same ``client_id`` returns the finding already stored.
    """

    serializer_class = s.FindingSerializer
    queryset = Finding.objects.none()  # for the schema only; get_queryset scopes to the job
    STEP_RIGHTS = {"fix": "fix", "verify": "verify", "reopen": "verify"}

    def right_needed(self) -> str:
        return self.STEP_RIGHTS.get(self.action) or super().right_needed()

    def get_queryset(self):
        findings = (
            Finding.objects.live()
            .filter(job=self.job)
            .select_related("created_by")
            .prefetch_related(Prefetch("photos", queryset=Photo.objects.only("id", "finding_id", "removed")))
        )
        return apply_filters(
            findings,
            self.request.query_params,
            {
                "trade": ("trade", "text"),
                "status": ("status", "text"),
                "level": ("wall__level", "text"),
                "kind": ("kind", "text"),
                "wall": ("wall_id", "id"),
            },
        )

    def create(self, request, *args, **kwargs):
        serializer = self.get_serializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        actor = self.actor()
        existing = actions.findings.existing_finding(actor, serializer.validated_data.get("client_id"))
        if existing is None:
            try:
                with transaction.atomic():
                    finding = actions.create_finding(actor, serializer.validated_data)
            except IntegrityError:
                # The same client_id arrived twice at once; the other request stored it first.
                existing = actions.findings.existing_finding(
                    actor, serializer.validated_data.get("client_id")
                )
                if existing is None:
                    raise
            else:
                return Response(self.get_serializer(finding).data, status=status.HTTP_201_CREATED)
        return Response(self.get_serializer(existing).data, status=status.HTTP_200_OK)

    def perform_update(self, serializer):
        seen = self.request.data.get("version") if hasattr(self.request.data, "get") else None
        base = None
        if seen is not None:
            try:
                base = parse_version(seen, "version")
            except actions.Reject as exc:
                raise ValidationError(exc.errors) from None
        with transaction.atomic():
            finding = Finding.objects.select_for_update().get(pk=serializer.instance.pk)
            with api_names():
                serializer.instance = actions.edit_finding(
                    self.actor(), finding, dict(serializer.validated_data), base
                )

    def perform_destroy(self, finding):
        # An optional body {"note", "version"}: the note is held to the same 2000 characters as
        # every other note, the version the client saw is checked like an edit's.
        body = s.NoteSerializer(data=self.request.data if self.request.data else {})
        body.is_valid(raise_exception=True)
        with transaction.atomic():
            finding = Finding.objects.select_for_update().get(pk=finding.pk)
            with api_names():
                actions.remove_finding(
                    self.actor(), finding, body.validated_data["note"], body.validated_data.get("version")
                )

    def _step(self, request, name: str):
        body = s.NoteSerializer(data=request.data)
        body.is_valid(raise_exception=True)
        with transaction.atomic():
            finding = Finding.objects.select_for_update().get(pk=self.get_object().pk)
            with api_names():
                actions.finding_step(
                    self.actor(),
                    finding,
                    name,
                    body.validated_data["note"],
                    body.validated_data.get("version"),
                )
        # The action's serializer_class is the request body; the answer is the whole finding.
        return Response(s.FindingSerializer(finding, context=self.get_serializer_context()).data)

    @action(detail=True, methods=["post"], serializer_class=s.NoteSerializer)
    def fix(self, request, *args, **kwargs):
        """Mark fixed (crew of the finding's trade, or the inspector)."""
        return self._step(request, "fix")

    @action(detail=True, methods=["post"], serializer_class=s.NoteSerializer)
    def verify(self, request, *args, **kwargs):
        """Verify a fixed finding (inspector)."""
        return self._step(request, "verify")

    @action(detail=True, methods=["post"], serializer_class=s.NoteSerializer)
    def reopen(self, request, *args, **kwargs):
        """Reopen a fixed or verified finding (inspector; say why in ``note``)."""
        return self._step(request, "reopen")


@contextmanager
def api_names():
    """The API calls the version a client saw ``version``; the write path calls it ``base_version``."""
    try:
        yield
    except actions.Reject as exc:
        if "base_version" in exc.errors:
            exc.errors["version"] = exc.errors.pop("base_version")
        raise


class EventViewSet(JobScopedMixin, mixins.ListModelMixin, viewsets.GenericViewSet):
    """The job's audit trail (read-only, append-only). Filter by ``target_type`` and ``target_id``."""

    serializer_class = s.EventSerializer
    queryset = Event.objects.none()  # for the schema only; get_queryset scopes to the job

    def get_queryset(self):
        events = Event.objects.filter(job=self.job).select_related("actor").order_by("-at", "-id")
        events = apply_filters(
            events,
            self.request.query_params,
            {"target_type": ("target_type", "text"), "target_id": ("target_id", "text")},
        )
        return events
