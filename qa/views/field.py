"""The printable field-test plan of a job: room pairs to test first, and how tested walls compare."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.db import transaction
from django.shortcuts import get_object_or_404, redirect, render
from django.urls import reverse
from django.views.decorators.http import require_POST, require_safe

from acoustics.building_kinds import default_junctions

from .. import actions
from ..access import job_for
from ..api.field_serializers import FieldTestSerializer, JunctionOverrideSerializer, RoomPairSerializer
from ..field.choices import BuildingKind, JunctionKind, JunctionPosition
from ..field.plan import job_test_plan, job_walls, measured_summary
from ..field.presentation import scatter_svg
from ..models import JunctionOverride, RoomPair, Wall
from . import feedback


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


def _wall_to_edit(request, job_pk, wall_pk, form: str):
    """(job, member, wall, the wall page at ``form``) for a member who may edit; 403 or 404 otherwise."""
    job, member = job_for(request.user, job_pk, "edit")
    wall = get_object_or_404(Wall.objects.live().select_related("wall_type"), job=job, pk=wall_pk)
    return job, member, wall, reverse("qa:wall", kwargs={"job_pk": job.pk, "wall_pk": wall.pk}) + f"#{form}"


def _refused(request, serializer, what: str, form: str) -> None:
    """One message per refused field, naming it and its rule, shown inside ``form``."""
    for name, problems in serializer.errors.items():
        text = " ".join(str(p) for p in (problems if isinstance(problems, list) else [problems]))
        messages.error(request, f"{what} {name}: {text}", extra_tags=feedback.form_tag(form))


#: Session key of the values typed into a refused form (read back once by the wall page).
FORM_KEEP = "sealwalk_field_test_form"
#: Session key of the rooms form's refused values.
ROOMS_KEEP = "sealwalk_field_rooms_form"
#: Session key of the junctions form's refused values.
JUNCTIONS_KEEP = "sealwalk_field_junctions_form"
#: The form's optional fields; an empty one is left out rather than refused as "not a number".
_FORM_FIELDS = ("tested_on", "tester", "standard", "volume_m3", "area_m2", "note", "allow_background_limit")


@require_POST
@login_required
def field_test_add(request, job_pk, wall_pk):
    """The wall page's form: a field test from a CSV of measured levels (band_hz,l1,l2,b2,t2), checked
    by the API's own rules and stored by the one write path; the answer shows beside the form."""
    job, member, wall, back = _wall_to_edit(request, job_pk, wall_pk, "field-test-form")
    data = {k: request.POST[k] for k in _FORM_FIELDS if request.POST.get(k, "").strip()}
    data["source"] = "levels"
    if "file" in request.FILES:
        data["file"] = request.FILES["file"]
    serializer = FieldTestSerializer(data=data, context={"job": job, "wall": wall})
    if not serializer.is_valid():
        # What was typed comes back into the form (a file cannot), so an error costs one fix, not a retyping.
        request.session[FORM_KEEP] = {k: request.POST.get(k, "")[:300] for k in _FORM_FIELDS}
        _refused(request, serializer, "Field test not stored.", "field-test-form")
        return redirect(back)
    with transaction.atomic():
        test = actions.add_field_test(actions.Actor(member), wall, serializer.validated_data)
    astc = (test.results or {}).get("astc")
    messages.success(
        request,
        f"Field test of {test.tested_on} stored"
        + (f": ASTC {astc}." if astc is not None else ".")
        + " The measured result is shown beside the prediction.",
        extra_tags=feedback.form_tag("field-test-form"),
    )
    return redirect(back)


#: The rooms form's fields; a blank number means "the default" (null), as in the API.
_ROOM_NUMBERS = ("source_volume_m3", "receiving_volume_m3", "receiving_t_s", "area_m2", "field_target")


def rooms_form(wall, kept: dict | None) -> dict:
    """The rooms form's values: what was typed into a refused form, else the wall's first room pair
    (blank where it takes the default)."""
    if kept is not None:
        return kept
    pair = RoomPair.objects.filter(wall=wall).order_by("id").first()
    if pair is None:
        return {"source_face": "a"}
    return {
        "label": pair.label,
        "source_face": pair.source_face,
        "field_descriptor": pair.field_descriptor,
        **{k: "" if getattr(pair, k) is None else f"{getattr(pair, k):g}" for k in _ROOM_NUMBERS},
    }


@require_POST
@login_required
def rooms_save(request, job_pk, wall_pk):
    """The wall page's rooms form: the rooms on the wall's two faces and their own field target, checked
    by the API's rules and stored by the one write path (the wall's first room pair, made if none)."""
    job, member, wall, back = _wall_to_edit(request, job_pk, wall_pk, "rooms-form")
    pair = RoomPair.objects.filter(wall=wall).order_by("id").first()
    data: dict = {
        "label": request.POST.get("label", "").strip(),
        "source_face": request.POST.get("source_face", "a"),
        "field_descriptor": request.POST.get("field_descriptor", ""),
    }
    for name in _ROOM_NUMBERS:
        data[name] = request.POST.get(name, "").strip() or None
    serializer = RoomPairSerializer(instance=pair, data=data, context={"job": job, "wall": wall})
    if not serializer.is_valid():
        request.session[ROOMS_KEEP] = {k: ("" if v is None else str(v))[:120] for k, v in data.items()}
        _refused(request, serializer, "Rooms not saved.", "rooms-form")
        return redirect(back)
    with transaction.atomic():
        actions.save_field_input(actions.Actor(member), wall, "rooms", serializer)
    messages.success(
        request,
        "Rooms saved: the field prediction now uses them.",
        extra_tags=feedback.form_tag("rooms-form"),
    )
    return redirect(back)


def junction_choices() -> dict:
    """The junctions form's two lists: how a junction is built, and whose flanking element meets it."""
    return {"junction_kinds": JunctionKind.choices, "element_kinds": BuildingKind.choices}


def junctions_form(wall, kept: dict | None) -> list[dict]:
    """The junctions form's rows, one per position: what was typed into a refused form, else the wall's
    entered junctions (blank: the default of the job's building kind, named in ``default``)."""
    defaults = {j.position: j.kind for j in default_junctions(wall.job.building_kind)}
    if kept is None:
        entered = {j.position: j for j in JunctionOverride.objects.filter(wall=wall)}
        kept = {}
        for p in JunctionPosition.values:
            j = entered.get(p)
            kept[f"kind_{p}"] = j.kind if j else ""
            kept[f"from_{p}"] = j.element_from if j else ""
    return [
        {
            "position": p,
            "label": label,
            "kind": kept.get(f"kind_{p}", ""),
            "element_from": kept.get(f"from_{p}", ""),
            "default": JunctionKind(defaults[p]).label if defaults.get(p) in JunctionKind.values else "",
        }
        for p, label in JunctionPosition.choices
    ]


@require_POST
@login_required
def junctions_save(request, job_pk, wall_pk):
    """The wall page's junctions form: for each of the four positions, a junction a consultant enters or
    the building kind's default. All four are checked by the API's rules first; then each is saved or
    removed by the one write path, in one transaction, or none is."""
    job, member, wall, back = _wall_to_edit(request, job_pk, wall_pk, "junctions-form")
    entered = {j.position: j for j in JunctionOverride.objects.filter(wall=wall)}
    typed = {
        f"{k}_{p}": request.POST.get(f"{k}_{p}", "").strip()[:40]
        for p in JunctionPosition.values
        for k in ("kind", "from")
    }
    saves, removals, refused = [], [], False
    for p, label in JunctionPosition.choices:
        kind = typed[f"kind_{p}"]
        if not kind:  # the default: an entered junction here goes
            if p in entered:
                removals.append(entered[p])
            continue
        data = {"position": p, "kind": kind, "element_from": typed[f"from_{p}"]}
        serializer = JunctionOverrideSerializer(
            instance=entered.get(p), data=data, context={"job": job, "wall": wall}
        )
        if serializer.is_valid():
            saves.append(serializer)
        else:
            refused = True
            _refused(request, serializer, f"Junctions not saved. {label}:", "junctions-form")
    if refused:
        request.session[JUNCTIONS_KEEP] = typed
        return redirect(back)
    actor = actions.Actor(member)
    with transaction.atomic():
        for obj in removals:
            was = dict(JunctionOverrideSerializer(obj, context={"job": job, "wall": wall}).data)
            actions.remove_field_input(actor, wall, "junction", obj, was)
        for serializer in saves:
            actions.save_field_input(actor, wall, "junction", serializer)
    messages.success(
        request,
        "Junctions saved: the field prediction now uses them.",
        extra_tags=feedback.form_tag("junctions-form"),
    )
    return redirect(back)
