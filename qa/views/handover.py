"""The hand-over report page, its PDF and punch-list CSV downloads, and the owner's sign-off.

The content, its hash and the files come from :mod:`qa.report`; a sign-off is an Event carrying the
SHA-256 of the content the owner saw.
"""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.core.exceptions import PermissionDenied
from django.http import HttpResponse
from django.shortcuts import redirect, render
from django.urls import reverse
from django.views.decorators.http import require_POST

from .. import report as report_mod
from ..access import can, job_for
from ..cautions import GENERAL_CAUTIONS, cautions_for
from ..models import Event
from ..report.content import outstanding
from . import feedback


@login_required
def report_page(request, job_pk):
    job, member = job_for(request.user, job_pk)
    content = report_mod.report_content(job)
    digest = report_mod.content_sha256(content)
    signed = report_mod.last_sign_off(job)
    out = outstanding(content)
    top, beside = feedback.split(request, [0])  # 0: the sign-off form
    return render(
        request,
        "qa/report/index.html",
        {
            "page_messages": top,
            "sign_feedback": beside.get(0, []),
            "out": out,
            "anything_outstanding": any(out.values()),
            "coverage": content["coverage"],
            "glossary": content["glossary"],
            "job": job,
            "member": member,
            "digest": digest,
            "signed": signed,
            "current": signed is not None and signed.data.get("sha256") == digest,
            "can_sign": can(member, "sign"),
            "totals": content["totals"],
            "cautions": cautions_for(GENERAL_CAUTIONS),
        },
    )


@login_required
def report_pdf(request, job_pk):
    job, _member = job_for(request.user, job_pk)
    content = report_mod.report_content(job)
    pdf = report_mod.cached_pdf(job, content)
    response = HttpResponse(pdf, content_type="application/pdf")
    response["Content-Disposition"] = f'attachment; filename="{report_mod.file_stem(job)}-handover.pdf"'
    return response


@login_required
def punch_list_csv(request, job_pk):
    job, _member = job_for(request.user, job_pk)
    # The body starts with the UTF-8 byte order mark (see qa.report.content.BOM).
    response = HttpResponse(report_mod.punch_list_csv(job), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{report_mod.file_stem(job)}-punch-list.csv"'
    return response


@login_required
@require_POST
def sign_off(request, job_pk):
    """The owner signs the report as it stands: an Event with who, when and the content's sha256.

    When items are still open, fixes wait for a check, or walls are below target or not fully
    walked, the owner must tick the confirmation; what was outstanding is recorded with the event.
    """
    job, member = job_for(request.user, job_pk)
    if not can(member, "sign"):
        raise PermissionDenied("Only the owner signs off the hand-over report")
    content = report_mod.report_content(job)
    digest = report_mod.content_sha256(content)
    seen = request.POST.get("sha256", "")
    back = redirect(reverse("qa:report", kwargs={"job_pk": job.pk}) + "#s-h")
    if seen and seen != digest:
        messages.error(
            request,
            "The record changed while you were reading; review the report again, then sign.",
            extra_tags=feedback.tag(0),
        )
        return back
    out = outstanding(content)
    confirmed = request.POST.get("confirm") == "yes"
    if any(out.values()) and not confirmed:
        messages.error(
            request,
            "confirm: tick the box to sign with the items listed above still outstanding.",
            extra_tags=feedback.tag(0),
        )
        return back
    Event.record(
        job,
        request.user,
        "report.signed",
        job,
        {
            "sha256": digest,
            "who": request.user.get_full_name() or request.user.username,
            "walls": content["totals"]["walls"],
            "open": content["totals"]["open"],
            "outstanding": {
                "open": [f["id"] for f in out["open"]],
                "waiting_check": [f["id"] for f in out["waiting"]],
                "below_target": [w["tag"] for w in out["below"]],
                "not_fully_walked": [w["tag"] for w in out["unwalked"]],
                "no_rating": [w["tag"] for w in out["no_rating"]],
            },
            "confirmed_outstanding": bool(any(out.values()) and confirmed),
        },
    )
    messages.success(request, "Hand-over report signed off.", extra_tags=feedback.tag(0))
    return back
