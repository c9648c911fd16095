"""The crew list, mark fixed and the inspector's check of fixed findings.

Forms are plain HTML posts; every change goes through the finding's lifecycle methods, which write
the Event shown in the timelines. A photo sent with a step is cleaned like an API upload.
"""

from __future__ import annotations

from collections import OrderedDict

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.db import transaction
from django.db.models import Prefetch
from django.http import Http404
from django.shortcuts import redirect, render
from django.urls import reverse
from django.utils.http import url_has_allowed_host_and_scheme
from django.views.decorators.http import require_POST

from .. import actions
from ..access import job_for, membership
from ..audit.presentation import item_caution
from ..audit.verdicts import face_name
from ..cautions import GENERAL_CAUTIONS, cautions_for
from ..choices import OPEN_STATUSES as OPEN
from ..choices import FindingStatus, PhotoPurpose, Trade
from ..models import Finding, Photo
from ..photos import PhotoError
from . import feedback


def _safe_next(request, fallback: str) -> str:
    nxt = request.POST.get("next") or request.GET.get("next") or ""
    if nxt and url_has_allowed_host_and_scheme(
        nxt, allowed_hosts={request.get_host()}, require_https=request.is_secure()
    ):
        return nxt
    return fallback


def _photos_prefetch():
    return Prefetch("photos", queryset=Photo.objects.filter(removed=False).order_by("uploaded_at"))


# --------------------------------------------------------------------------- crew and check lists
def _grouped(findings) -> OrderedDict:
    by_level: OrderedDict = OrderedDict()
    for f in findings:
        by_level.setdefault(f.wall.level, OrderedDict()).setdefault(f.wall, []).append(f)
    return by_level


def _dress(request, findings: list) -> tuple[list, list]:
    """Give each finding its face name, its seal point's caution and its feedback; return
    (messages for the top of the page, the cautions of the page: general ones and every item's)."""
    top, beside = feedback.split(request, [f.pk for f in findings])
    for f in findings:
        f.face_name = face_name(f.wall, f.face)
        f.caution_full = item_caution(f)
        f.feedback = beside.get(f.pk, [])
    keys = [f.caution_full.key for f in findings if f.caution_full] + list(GENERAL_CAUTIONS)
    return top, cautions_for(keys)


@login_required
def crew_page(request, job_pk):
    """A crew member's open findings of their trade, by level and wall, with what fixed looks like."""
    job, member = job_for(request.user, job_pk, "fix")
    trade = member.trade if member.is_crew else request.GET.get("trade", "")
    if trade and trade not in Trade.values:
        raise Http404("No such trade")
    findings = (
        Finding.objects.live()
        .filter(job=job, status__in=OPEN)
        .select_related("wall", "seal_point")
        .prefetch_related(_photos_prefetch())
        .order_by("wall__level", "wall__tag", "id")
    )
    waiting = Finding.objects.live().filter(job=job, status=FindingStatus.FIXED)
    if trade:
        findings, waiting = findings.filter(trade=trade), waiting.filter(trade=trade)
    findings = list(findings)
    top, cautions = _dress(request, findings)
    return render(
        request,
        "qa/audit/crew.html",
        {
            "page_messages": top,
            "job": job,
            "member": member,
            "trade": trade,
            "trade_label": dict(Trade.choices).get(trade, "all trades"),
            "trades": Trade.choices,
            "by_level": _grouped(findings),
            "count": len(findings),
            "waiting": waiting.count(),
            "cautions": cautions,
        },
    )


@login_required
def check_page(request, job_pk):
    """The inspector's list of findings reported fixed and waiting for a check."""
    job, member = job_for(request.user, job_pk, "verify")
    findings = list(
        Finding.objects.live()
        .filter(job=job, status=FindingStatus.FIXED)
        .select_related("wall", "seal_point", "fixed_by")
        .prefetch_related(_photos_prefetch())
        .order_by("wall__level", "wall__tag", "id")
    )
    top, cautions = _dress(request, findings)
    return render(
        request,
        "qa/audit/check.html",
        {
            "page_messages": top,
            "job": job,
            "member": member,
            "by_level": _grouped(findings),
            "count": len(findings),
            "cautions": cautions,
        },
    )


def _step(request, job_pk, finding_pk, step: str, purpose: str) -> Finding:
    """One lifecycle step from a page form, with its optional photo, through :mod:`qa.actions`."""
    member = membership(request.user, job_pk)
    try:
        finding = Finding.objects.select_for_update().get(pk=finding_pk, job_id=job_pk, removed=False)
    except (Finding.DoesNotExist, ValueError):
        raise Http404("No such finding") from None
    actor = actions.Actor(member)
    actions.finding_step(actor, finding, step, request.POST.get("note") or "")
    if request.FILES.get("photo"):
        actions.store_photo(
            actor, request.FILES["photo"].read(), wall=finding.wall, finding=finding, purpose=purpose
        )
    return finding


def _message(exc: Exception) -> str:
    if isinstance(exc, actions.Reject):
        return " ".join(f"{field}: {'; '.join(rules)}" for field, rules in exc.errors.items())
    return str(exc)


@login_required
@require_POST
def mark_fixed(request, job_pk, finding_pk):
    """Crew of the finding's trade (or the inspector) reports it fixed, with a photo and a note."""
    try:
        with transaction.atomic():
            finding = _step(request, job_pk, finding_pk, "fix", PhotoPurpose.FIX)
    except (actions.Reject, PhotoError) as exc:
        messages.error(request, _message(exc), extra_tags=feedback.tag(finding_pk))
    else:
        messages.success(
            request,
            f"{finding.get_kind_display()} on wall {finding.wall.tag} marked fixed. "
            "The inspector will check it.",
            extra_tags=feedback.tag(finding_pk),
        )
    return redirect(_safe_next(request, reverse("qa:crew", args=[job_pk])))


@login_required
@require_POST
def check_finding(request, job_pk, finding_pk):
    """The inspector verifies or reopens a fixed finding, optionally with a photo."""
    action = request.POST.get("action")
    if action not in ("verify", "reopen"):
        messages.error(request, "action: choose verify or reopen", extra_tags=feedback.tag(finding_pk))
        return redirect(_safe_next(request, reverse("qa:check", args=[job_pk])))
    try:
        with transaction.atomic():
            finding = _step(request, job_pk, finding_pk, action, PhotoPurpose.VERIFY)
    except (actions.Reject, PhotoError) as exc:
        messages.error(request, _message(exc), extra_tags=feedback.tag(finding_pk))
    else:
        done = "verified" if action == "verify" else "reopened"
        messages.success(
            request,
            f"{finding.get_kind_display()} on wall {finding.wall.tag} {done}.",
            extra_tags=feedback.tag(finding_pk),
        )
    return redirect(_safe_next(request, reverse("qa:check", args=[job_pk])))
