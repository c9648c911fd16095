"""The one access helper: find an object through a job the user belongs to, or raise 404/403.

A non-member never learns a job exists (404); a member without the right gets 403.
"""

from __future__ import annotations

from django.core.exceptions import PermissionDenied
from django.http import Http404

from .choices import Role
from .models import Job, Member

# What each role may do (DESIGN.md, "Roles"). Crew rights on findings are limited to their trade.
RIGHTS = {
    "view": {Role.INSPECTOR, Role.CREW, Role.OWNER},
    "edit": {Role.INSPECTOR},
    "fix": {Role.INSPECTOR, Role.CREW},
    "verify": {Role.INSPECTOR},
    "sign": {Role.OWNER},
    "manage_members": {Role.INSPECTOR},
}


def membership(user, job_id) -> Member:
    """The user's active membership of job ``job_id``, or Http404."""
    if not getattr(user, "is_authenticated", False):
        raise Http404("No such job")
    try:
        member = Member.objects.select_related("job").get(job_id=job_id, user=user, active=True)
    except (Member.DoesNotExist, ValueError, TypeError, OverflowError):
        raise Http404("No such job") from None
    member.user = user  # the signed-in user is this member's: no query to read it again
    return member


def require(member: Member, right: str, *, trade: str | None = None) -> Member:
    """Raise PermissionDenied unless ``member`` has ``right`` (and, for crew, the finding's ``trade``)."""
    if member.role not in RIGHTS[right]:
        raise PermissionDenied(f"A {member.get_role_display().lower()} may not do this on this job")
    if member.role == Role.CREW and trade is not None and trade != member.trade:
        raise PermissionDenied("Crew members act only on findings of their own trade")
    return member


def job_for(user, job_id, right: str = "view") -> tuple[Job, Member]:
    member = require(membership(user, job_id), right)
    return member.job, member


def can(member: Member, right: str) -> bool:
    return member.role in RIGHTS[right]
