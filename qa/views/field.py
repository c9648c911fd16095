"""The printable field-test plan of a job: room pairs to test first, and how tested walls compare."""

from __future__ import annotations

from django.contrib.auth.decorators import login_required
from django.shortcuts import render
from django.views.decorators.http import require_safe

from ..access import job_for
from ..field.choices import BuildingKind
from ..field.plan import job_test_plan, job_walls, measured_summary
from ..field.presentation import scatter_svg


@require_safe
@login_required
def field_test_plan_page(request, job_pk):
    """Walls ranked by predicted field margin, then by what the walk found; every member may read it."""
    job, member = job_for(request.user, job_pk)
    walls_fields = job_walls(job)
    plan = job_test_plan(job, walls_fields)
    tested = measured_summary(job, walls_fields)
    return render(
        request,
        "qa/field/test_plan.html",
        {
            "job": job,
            "member": member,
            "plan": plan,
            "rows": plan["rows"],
            "tested": tested,
            "scatter": scatter_svg(tested["points"], tested["far_db"]),
            "building_kind": BuildingKind(job.building_kind).label,
        },
    )
