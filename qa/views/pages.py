"""Server-rendered pages: sign-in, the job list, a job, a wall."""

from __future__ import annotations

from django.contrib.auth import views as auth_views
from django.contrib.auth.decorators import login_required
from django.db.models import Count, F, Prefetch, Q
from django.http import Http404
from django.shortcuts import render

from .. import units
from ..access import can, job_for
from ..audit import audit_summary, audits_for_walls
from ..audit.presentation import job_overview, wall_overview
from ..audit.verdicts import coverage_of, face_name, verdicts_for_walls
from ..audit.verdicts import verdict as verdict_of
from ..cautions import GENERAL_CAUTIONS, cautions_for
from ..choices import OPEN_STATUSES, Role
from ..field.choices import FieldDescriptor
from ..field.prediction import field_for_walls
from ..field.presentation import FIELD_CAUTION, field_summary, field_target_rows
from ..login_throttle import LoginThrottleMixin
from ..models import Finding, Member, Photo, SealPoint, Wall
from . import feedback
from .field import FORM_KEEP, JUNCTIONS_KEEP, ROOMS_KEEP, junction_choices, junctions_form, rooms_form

OPEN = OPEN_STATUSES


class LoginView(LoginThrottleMixin, auth_views.LoginView):
    template_name = "qa/login.html"
    http_method_names = ["get", "post", "head", "options"]  # no PUT alias of the form post
    redirect_authenticated_user = True


@login_required
def job_list(request):
    members = (
        Member.objects.filter(user=request.user, active=True)
        .select_related("job")
        .annotate(
            wall_count=Count("job__walls", filter=Q(job__walls__removed=False), distinct=True),
            # A crew member counts their own trade's open items only.
            open_count=Count(
                "job__findings",
                filter=Q(job__findings__removed=False, job__findings__status__in=OPEN)
                & (~Q(role=Role.CREW) | Q(job__findings__trade=F("trade"))),
                distinct=True,
            ),
        )
        .order_by("job__name")
    )
    return render(request, "qa/job_list.html", {"members": members})


@login_required
def job_page(request, job_pk):
    """Walls with their ratings, filters, the job-wide fix-first list and repeated defects."""
    job, member = job_for(request.user, job_pk)
    walls = list(Wall.objects.live().filter(job=job).select_related("wall_type").order_by("level", "tag"))
    audits = audits_for_walls(walls)
    findings = list(
        Finding.objects.live()
        .filter(job=job)
        .values_list("id", "wall_id", "trade", "status", "kind", "seal_point__label")
    )
    params = request.GET
    if member.is_crew:  # a crew member's counts, fix-first list and repeats are their trade's only
        findings = [r for r in findings if r[2] == member.trade]
        params = params.copy()
        params["trade"] = ""
    ctx = job_overview(params, job, walls, audits, findings, verdicts_for_walls(walls, audits))
    fields = field_for_walls([r["wall"] for r in ctx["rows"]], job)
    for r in ctx["rows"]:  # the predicted field rating now, beside the laboratory-type ratings
        r["field"] = field_summary(fields[r["wall"].pk])
    ctx.update(
        {
            "field_caution": FIELD_CAUTION,
            "field_targets": field_target_rows(job.field_targets),
            "job": job,
            "member": member,
            "can_fix": can(member, "fix"),
            "can_verify": can(member, "verify"),
            "cautions": cautions_for(GENERAL_CAUTIONS),
            "page_messages": feedback.split(request)[0],
        }
    )
    return render(request, "qa/job.html", ctx)


@login_required
def wall_page(request, job_pk, wall_pk):
    """One wall: its TL chart, the leak audit table, findings with photos and actions, the timeline."""
    job, member = job_for(request.user, job_pk)
    try:
        wall = Wall.objects.live().select_related("wall_type").get(pk=wall_pk, job=job)
    except (Wall.DoesNotExist, ValueError):
        raise Http404("No such wall") from None
    summary = audit_summary(wall)
    points = list(SealPoint.objects.filter(wall=wall, removed=False).order_by("position", "id"))
    findings = list(
        Finding.objects.live()
        .filter(wall=wall)
        .select_related("seal_point", "created_by", "fixed_by", "verified_by")
        .prefetch_related(
            Prefetch("photos", queryset=Photo.objects.filter(removed=False).order_by("uploaded_at"))
        )
    )
    verdict = verdict_of(summary, coverage_of(wall, points))
    ctx = wall_overview(job, member, wall, summary, findings, verdict)
    top, beside = feedback.split(request, [it["f"].pk for it in ctx["items"]])
    top, at_form = feedback.by_form(
        top, ("field-test-form", "rooms-form", "junctions-form")
    )  # shown inside them
    for it in ctx["items"]:
        it["feedback"] = beside.get(it["f"].pk, [])
    for p in points:
        p.face_name = face_name(wall, p.face)
    caution_keys = list(GENERAL_CAUTIONS) + sorted({p.caution for p in points if p.caution})
    ctx.update(
        {
            "job": job,
            "member": member,
            "wall": wall,
            "points": points,
            "length": units.fmt(wall.length_m, "size", job.units),
            "height": units.fmt(wall.height_m, "size", job.units),
            "cautions": cautions_for(dict.fromkeys(caution_keys)),
            "can_edit": can(member, "edit"),
            "page_messages": top,
            "field_messages": at_form["field-test-form"],
            "rooms_messages": at_form["rooms-form"],
            "junctions_messages": at_form["junctions-form"],
            "field_form": request.session.pop(FORM_KEEP, {}),
            # Only those who may edit see the rooms form (and pay its query).
            "rooms_form": rooms_form(wall, request.session.pop(ROOMS_KEEP, None))
            if can(member, "edit")
            else {},
            "field_descriptors": FieldDescriptor.choices,
            "junctions_form": junctions_form(wall, request.session.pop(JUNCTIONS_KEEP, None))
            if can(member, "edit")
            else [],
            **junction_choices(),
        }
    )
    return render(request, "qa/wall.html", ctx)


def describe_size(finding: Finding, u: str) -> str:
    """A finding's size in words and the job's units, e.g. '6 mm × 900 mm slit'."""
    parts = []
    if finding.width_m and finding.length_m:
        parts.append(f"{units.fmt(finding.width_m, 'gap', u)} × {units.fmt(finding.length_m, 'gap', u)}")
    elif finding.width_m and finding.diameter_m:
        parts.append(
            f"{units.fmt(finding.width_m, 'gap', u)} gap round ⌀ {units.fmt(finding.diameter_m, 'gap', u)}"
        )
    elif finding.diameter_m:
        parts.append(f"⌀ {units.fmt(finding.diameter_m, 'gap', u)}")
    if finding.area_m2:
        parts.append(units.fmt(finding.area_m2, "area", u))
    if finding.count > 1:
        parts.append(f"× {finding.count}")
    return " ".join(parts) or "—"
