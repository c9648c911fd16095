"""The walk's bundle and the desktop pages say the same thing about every wall of the demo.

For each wall, the word for its state and the number under each rating word must match between the
bundle (what the walk shows offline) and the job page (what the owner reads). A crew member's bundle
carries only their trade's fix-first items. The rule is the product's own (issue 12, items 1-3).
"""

from __future__ import annotations

import html
import re

import pytest
from django.contrib.auth.models import User
from django.test import Client

from qa.demo import load_demo
from qa.models import Finding, Member
from qa.walk.bundle import build_bundle


@pytest.fixture
def demo_job(db):
    job, _ = load_demo(photos=False)
    return job


def _job_rows(job, username: str) -> dict[str, dict]:
    client = Client()
    client.force_login(User.objects.get(username=username))
    page = client.get(f"/jobs/{job.pk}/").content.decode()
    rows = {}
    for m in re.finditer(
        r'<tr class="state-[^"]*" data-wall-tag="([^"]+)" data-wall-id="(\d+)"(.*?)</tr>', page, re.S
    ):
        body = m[3]
        rows[m[1]] = {
            "id": int(m[2]),
            "word": html.unescape(re.search(r'<span class="v-word">([^<]+)</span>', body)[1]),
            "current": re.search(r'data-current="(\d*)"', body)[1],
            "cells": {
                html.unescape(label): html.unescape(re.sub(r"<[^>]+>", " ", cell)).split()
                for label, cell in re.findall(r'<td data-label="([^"]+)"[^>]*>(.*?)</td>', body, re.S)
            },
        }
    return rows


def test_bundle_and_job_page_show_the_same_number_under_the_same_word(demo_job):
    inspector = Member.objects.get(job=demo_job, user__username="inspector")
    bundle = build_bundle(demo_job, inspector)
    rows = _job_rows(demo_job, "inspector")
    words = bundle["vocabulary"]
    assert len(rows) == len(bundle["walls"]) == len(bundle["verdicts"]) > 0
    for wall in bundle["walls"]:
        row = rows[wall["tag"]]
        v = bundle["verdicts"][str(wall["id"])]
        assert row["word"] == v["word"] == words["states"][v["state"]]["word"], wall["tag"]
        assert row["current"] == str(v["ratings"]["current"]), wall["tag"]
        name = v["rating_name"]
        # The same number under the same rating word: the page's column named by the vocabulary.
        for key in ("designed", "as_found", "current"):
            label = words["ratings"][key]["word"]
            value = v["ratings"][key]
            assert row["cells"][label][:2] == [name, str(value)], (wall["tag"], label)
        checked, total = v["coverage"]["checked"], v["coverage"]["total"]
        assert row["cells"]["State"][-4:] == [str(checked), "of", str(total), "checked"], wall["tag"]


def test_crew_bundle_holds_only_their_trade(demo_job):
    crew = Member.objects.get(job=demo_job, user__username="electrical")
    bundle = build_bundle(demo_job, crew)
    ids = {str(c): t for c, t in Finding.objects.filter(job=demo_job).values_list("client_id", "trade")}
    assert bundle["fix_first"], "the demo has open electrical items"
    assert {ids[r["finding"]] for r in bundle["fix_first"]} == {"electrical"}
    for a in bundle["audits"].values():
        assert {ids[r["finding"]] for r in a["rows"]} <= {"electrical"}
    assert {f["trade"] for f in bundle["findings"]} == {"electrical"}
    # Every back-box point carries the energised-box caution, in full, in the bundle.
    boxes = [p for p in bundle["seal_points"] if p["label"].startswith("Back-boxes")]
    assert boxes and {p["caution"] for p in boxes} == {"energised_boxes"}
    assert "live parts" in bundle["cautions"]["energised_boxes"]["text"]  # qa/cautions.py, in full
    # The inspector's bundle has every trade.
    inspector = Member.objects.get(job=demo_job, user__username="inspector")
    everyone = build_bundle(demo_job, inspector)
    assert len({ids[r["finding"]] for r in everyone["fix_first"]}) > 1


def test_crew_job_page_counts_their_trade_only(demo_job):
    rows = _job_rows(demo_job, "electrical")
    open_elec = Finding.objects.live().filter(
        job=demo_job, trade="electrical", status__in=["open", "reopened"]
    )
    per_wall = {}
    for f in open_elec.select_related("wall"):
        per_wall[f.wall.tag] = per_wall.get(f.wall.tag, 0) + 1
    for tag, row in rows.items():
        label = next(k for k in row["cells"] if k.startswith("Open"))
        assert int(row["cells"][label][0]) == per_wall.get(tag, 0), tag


def test_bundle_and_job_page_show_the_same_field_prediction(demo_job):
    """The walk's "Field, predicted now" and the job page's column are one figure per wall."""
    inspector = Member.objects.get(job=demo_job, user__username="inspector")
    bundle = build_bundle(demo_job, inspector)
    page = Client()
    page.force_login(User.objects.get(username="owner"))
    text = page.get(f"/jobs/{demo_job.pk}/").content.decode()
    predicted = 0
    for wall in bundle["walls"]:
        field = bundle["field"][str(wall["id"])]
        row = text.split(f'data-wall-id="{wall["id"]}"', 1)[1].split("</tr>", 1)[0]
        if field is None or field["now"] is None:
            assert "data-field-now" not in row, wall["tag"]
            continue
        predicted += 1
        assert f'data-field-now="{field["now"]}"' in row, wall["tag"]
        assert f'data-field-margin="{field["margin"]}"' in row, wall["tag"]
    assert predicted == len(bundle["walls"]), "the demo's walls all have a field prediction"
    assert "not a field test" in bundle["field_caution"]
