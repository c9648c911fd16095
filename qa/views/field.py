"""The printable field-test plan of a job: room pairs to test first, and how tested walls compare."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.db import transaction
from django.shortcuts import get_object_or_404, redirect, render
from django.urls import reverse
from django.views.decorators.http import require_POST, require_safe

from .. import actions
from ..access import job_for
from ..api.field_serializers import FieldTestSerializer
from ..field.choices import BuildingKind
from ..field.plan import job_test_plan, job_walls, measured_summary
from ..field.presentation import scatter_svg
from ..models import Wall


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


#: Session key of the values typed into a refused form (read back once by the wall page).
FORM_KEEP = "sealwalk_field_test_form"
#: The form's optional fields; an empty one is left out rather than refused as "not a number".
_FORM_FIELDS = ("tested_on", "tester", "standard", "volume_m3", "area_m2", "note", "allow_background_limit")


@require_POST
@login_required
def field_test_add(request, job_pk, wall_pk):
    """The wall page's form: a field test from a CSV of measured levels (band_hz,l1,l2,b2,t2), checked
    by the API's own rules and stored by the one write path; the answer shows beside the form."""
    job, member = job_for(request.user, job_pk, "edit")
    wall = get_object_or_404(Wall.objects.live().select_related("wall_type"), job=job, pk=wall_pk)
    back = reverse("qa:wall", kwargs={"job_pk": job.pk, "wall_pk": wall.pk}) + "#field-test-form"
    data = {k: request.POST[k] for k in _FORM_FIELDS if request.POST.get(k, "").strip()}
    data["source"] = "levels"
    if "file" in request.FILES:
        data["file"] = request.FILES["file"]
    serializer = FieldTestSerializer(data=data, context={"job": job, "wall": wall})
    if not serializer.is_valid():
        # What was typed comes back into the form (a file cannot), so an error costs one fix, not a retyping.
        request.session[FORM_KEEP] = {k: request.POST.get(k, "")[:300] for k in _FORM_FIELDS}
        for name, problems in serializer.errors.items():
            text = " ".join(str(p) for p in (problems if isinstance(problems, list) else [problems]))
            messages.error(request, f"Field test not stored. {name}: {text}", extra_tags="field-test")
        return redirect(back)
    with transaction.atomic():
        test = actions.add_field_test(actions.Actor(member), wall, serializer.validated_data)
    astc = (test.results or {}).get("astc")
    messages.success(
        request,
        f"Field test of {test.tested_on} stored"
        + (f": ASTC {astc}." if astc is not None else ".")
        + " The measured result is shown beside the prediction.",
        extra_tags="field-test",
    )
    return redirect(back)
