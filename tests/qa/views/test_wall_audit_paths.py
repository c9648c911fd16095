"""The wall page names the path the whole-wall model priced each finding as, and the pairs that leak together.

Issue 13 ("Done when"): the wall page names each finding's modelled path, and says "fix both faces: either
alone buys little" where fixing both buys more than the two alone (method notes Section 15.2).
"""

from __future__ import annotations

import pytest
from django.test import Client
from django.utils.html import escape

from qa.audit import audit_summary
from qa.models import Finding, SealPoint

pytestmark = pytest.mark.django_db


def page(world, user):
    c = Client()
    c.force_login(user)
    r = c.get(f"/jobs/{world.job.pk}/walls/{world.wall.pk}/")
    assert r.status_code == 200
    return r.content.decode()


def add(world, **kw) -> Finding:
    base = {"job": world.job, "wall": world.wall, "face": "through", "created_by": world.inspector}
    return Finding.objects.create(**(base | kw))


def test_wall_page_names_each_path_and_the_pairs(world):
    head = SealPoint.objects.get(wall=world.wall, template_key="head")
    pipe = SealPoint.objects.get(wall=world.wall, template_key="pipe-penetrations")
    gap = add(world, kind="slit", trade="drywall", width_m=0.013, length_m=1.5, at_edge=True, seal_point=head)
    ring = add(world, kind="ring", trade="plumbing", width_m=0.006, diameter_m=0.022, seal_point=pipe)
    hole = add(world, kind="hole", face="a", trade="electrical", diameter_m=0.05)
    s = audit_summary(world.wall)
    paths = {r["finding"]: r["path"] for r in s["rows"]}
    assert paths[gap.pk].startswith("cavity path A->B")  # head gap: one opening per face, cavity between
    assert "round the pipe" in paths[ring.pk]
    assert paths[hole.pk].startswith("one face: leaf A")
    html = page(world, world.inspector)
    for fid, path in paths.items():
        assert html.count(f"Modelled as: {escape(path)}") == 1, fid  # in the finding's own entry
        assert f"modelled as: {escape(path)}" in html  # and in the fix-first table
    assert s["interactions"], "the head gap and the pipe share the cavity"
    for pair in s["interactions"]:
        assert f'data-pair="{pair["findings"][0]}-{pair["findings"][1]}"' in html
        assert escape(pair["note"]) in html
    # A crew member sees only the pairs that touch their own trade.
    crew_html = page(world, world.electrician)
    trades = {gap.pk: "drywall", ring.pk: "plumbing", hole.pk: "electrical"}
    for pair in s["interactions"]:
        mine = any(trades[i] == "electrical" for i in pair["findings"])
        assert (f'data-pair="{pair["findings"][0]}-{pair["findings"][1]}"' in crew_html) == mine


def test_fix_both_faces_note_is_shown_when_it_holds(world):
    """On this lab-curve wall (empty cavity taken) the open head gap and the pipe's ring gaps leak through
    one cavity: fixing the pipe alone buys nothing while the head stays open (derived from the model)."""
    head = SealPoint.objects.get(wall=world.wall, template_key="head")
    pipe = SealPoint.objects.get(wall=world.wall, template_key="pipe-penetrations")
    add(world, kind="slit", trade="drywall", width_m=0.013, length_m=1.5, at_edge=True, seal_point=head)
    add(world, kind="ring", trade="plumbing", width_m=0.006, diameter_m=0.022, seal_point=pipe)
    s = audit_summary(world.wall)
    notes = [p["note"] for p in s["interactions"]]
    assert notes == ["fix both faces: either alone buys little"]
    (pair,) = s["interactions"]
    assert pair["fix_both"] > sum(pair["fix_alone"])
    assert "<strong>fix both faces: either alone buys little</strong>" in page(world, world.owner)
