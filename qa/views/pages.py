"""Server-rendered pages: sign-in, the job list, a job, a wall."""

from __future__ import annotations

from collections import OrderedDict

from django.contrib.auth import views as auth_views
from django.contrib.auth.decorators import login_required
from django.db.models import Count, Prefetch, Q
from django.http import Http404
from django.shortcuts import render

from .. import units
from ..access import can, job_for
from ..cautions import GENERAL_CAUTIONS, cautions_for
from ..choices import FindingStatus, SealStatus
from ..models import Finding, Member, Photo, SealPoint, Wall

OPEN = [FindingStatus.OPEN, FindingStatus.REOPENED]


class LoginView(auth_views.LoginView):
    template_name = "qa/login.html"
    redirect_authenticated_user = True


@login_required
def job_list(request):
    members = (
        Member.objects.filter(user=request.user, active=True)
        .select_related("job")
        .annotate(
            wall_count=Count("job__walls", filter=Q(job__walls__removed=False), distinct=True),
            open_count=Count(
                "job__findings",
                filter=Q(job__findings__removed=False, job__findings__status__in=OPEN),
                distinct=True,
            ),
        )
        .order_by("job__name")
    )
    return render(request, "qa/job_list.html", {"members": members})


@login_required
def job_page(request, job_pk):
    job, member = job_for(request.user, job_pk)
    walls = (
        Wall.objects.live()
        .filter(job=job)
        .select_related("wall_type")
        .annotate(
            points=Count("seal_points", filter=Q(seal_points__removed=False), distinct=True),
            checked=Count(
                "seal_points",
                filter=Q(seal_points__removed=False) & ~Q(seal_points__status=SealStatus.UNCHECKED),
                distinct=True,
            ),
            open_findings=Count("findings", filter=Q(findings__removed=False, findings__status__in=OPEN),
                                distinct=True),
            fixed_findings=Count(
                "findings", filter=Q(findings__removed=False, findings__status=FindingStatus.FIXED), distinct=True
            ),
        )
        .order_by("level", "tag")
    )
    level = request.GET.get("level", "")
    all_levels = sorted({w.level for w in walls})
    by_level: OrderedDict[str, list] = OrderedDict()
    for wall in walls:
        if level and wall.level != level:
            continue
        by_level.setdefault(wall.level, []).append(wall)
    return render(request, "qa/job.html", {
        "job": job, "member": member, "by_level": by_level, "levels": all_levels, "level": level,
        "wall_count": sum(len(v) for v in by_level.values()),
    })


@login_required
def wall_page(request, job_pk, wall_pk):
    job, member = job_for(request.user, job_pk)
    photos = Prefetch("photos", queryset=Photo.objects.filter(removed=False).order_by("uploaded_at"))
    try:
        wall = Wall.objects.live().select_related("wall_type").get(pk=wall_pk, job=job)
    except Wall.DoesNotExist:
        raise Http404("No such wall") from None
    points = SealPoint.objects.filter(wall=wall, removed=False).order_by("position", "id")
    findings = (
        Finding.objects.live().filter(wall=wall).select_related("seal_point", "created_by").prefetch_related(photos)
    )
    if member.is_crew:
        findings = findings.filter(trade=member.trade)
    u = job.units
    rows = [
        {
            "finding": f,
            "size": describe_size(f, u),
            "photos": list(f.photos.all()),
        }
        for f in findings
    ]
    caution_keys = list(GENERAL_CAUTIONS) + sorted({p.caution for p in points if p.caution})
    return render(request, "qa/wall.html", {
        "job": job, "member": member, "wall": wall, "points": points, "rows": rows,
        "length": units.fmt(wall.length_m, "size", u), "height": units.fmt(wall.height_m, "size", u),
        "cautions": cautions_for(dict.fromkeys(caution_keys)),
        "can_edit": can(member, "edit"),
    })


def describe_size(finding: Finding, u: str) -> str:
    """A finding's size in words and the job's units, e.g. '6 mm × 900 mm slit'."""
    parts = []
    if finding.width_m and finding.length_m:
        parts.append(f"{units.fmt(finding.width_m, 'gap', u)} × {units.fmt(finding.length_m, 'gap', u)}")
    elif finding.width_m and finding.diameter_m:
        parts.append(f"{units.fmt(finding.width_m, 'gap', u)} gap round ⌀ {units.fmt(finding.diameter_m, 'gap', u)}")
    elif finding.diameter_m:
        parts.append(f"⌀ {units.fmt(finding.diameter_m, 'gap', u)}")
    if finding.area_m2:
        parts.append(units.fmt(finding.area_m2, "area", u))
    if finding.count > 1:
        parts.append(f"× {finding.count}")
    return " ".join(parts) or "—"
