"""Routes of the leak-audit views, the crew list and the hand-over report."""

from __future__ import annotations

from django.urls import path

from .. import converters  # noqa: F401  (registers <id:...>)
from . import crew, field, handover

urlpatterns: list = [
    path("jobs/<id:job_pk>/crew/", crew.crew_page, name="crew"),
    path("jobs/<id:job_pk>/check/", crew.check_page, name="check"),
    path("jobs/<id:job_pk>/findings/<id:finding_pk>/fixed/", crew.mark_fixed, name="finding-fixed"),
    path("jobs/<id:job_pk>/findings/<id:finding_pk>/check/", crew.check_finding, name="finding-check"),
    path("jobs/<id:job_pk>/report/", handover.report_page, name="report"),
    path("jobs/<id:job_pk>/report/handover.pdf", handover.report_pdf, name="report-pdf"),
    path("jobs/<id:job_pk>/report/punch-list.csv", handover.punch_list_csv, name="report-csv"),
    path("jobs/<id:job_pk>/report/sign/", handover.sign_off, name="report-sign"),
    path("jobs/<id:job_pk>/test-plan/", field.field_test_plan_page, name="test-plan"),
    path("jobs/<id:job_pk>/walls/<id:wall_pk>/field-tests/", field.field_test_add, name="field-test-add"),
    path("jobs/<id:job_pk>/walls/<id:wall_pk>/rooms/", field.rooms_save, name="rooms-save"),
    path("jobs/<id:job_pk>/walls/<id:wall_pk>/junctions/", field.junctions_save, name="junctions-save"),
]
