"""The pictures and the HTML report, checked for content (not pixels): the network has one box per
step and one arrow per stream, failing steps are marked, the T–Q series hold the exchanger's profile
points, the exergy account closes; the exchanger's rating values and the LMTD function; the HTML is
self-contained and escapes the balance's text."""

from __future__ import annotations

import copy
import dataclasses
import re
from pathlib import Path

import pytest
from conftest import SAMPLE

import audit
from audit.accounts import exergy_account
from audit.commands.main import main
from audit.exitcodes import EXIT_FINDINGS, EXIT_PASS
from audit.physics.heat_transfer import log_mean_temperature_difference
from audit.report.html.report import report_html
from audit.report.machine import to_dict
from audit.report.pictures.exergy_bars import exergy_bars_svg
from audit.report.pictures.exergy_flow import exergy_flow_svg
from audit.report.pictures.network import network_svg
from audit.report.pictures.svg import step_marks
from audit.report.pictures.tq import tq_svg

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"
CLEAN = SAMPLE / "quillon-bay-clean.yaml"


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SEEDED)


@pytest.fixture(scope="module")
def clean():
    return audit.run(CLEAN)


def _named_streams(result) -> set[str]:
    return {s for step in result.steps for s in (*step.inlets, *step.outlets)}


# -- the LMTD -----------------------------------------------------------------------------------------
def test_lmtd_incropera_example_11_1():
    # Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., Example 11.1 (from memory):
    # counterflow oil cooler, oil 100 -> 60 °C, water 30 -> 40.2 °C; printed ΔT_lm = 43.2 °C.
    # Tolerance 0.05 K: the printed value has one decimal.
    assert log_mean_temperature_difference(100.0 - 40.2, 60.0 - 30.0) == pytest.approx(43.2, abs=0.05)


def test_lmtd_limits():
    # Analytic: equal terminal differences give that difference; a crossed terminal has no mean.
    assert log_mean_temperature_difference(12.0, 12.0) == pytest.approx(12.0)
    assert log_mean_temperature_difference(10.0, 0.0) is None
    assert log_mean_temperature_difference(-1.0, 5.0) is None


# -- the exchanger's values -----------------------------------------------------------------------
def test_exchanger_keeps_its_profile_and_rating(seeded):
    hx = seeded.step("HX1")
    profile, rating = hx.profile, hx.exchanger
    assert profile is not None and rating is not None
    assert (
        len(profile.duty) == len(profile.hot_T) == len(profile.cold_T) > 5
    )  # the ends, the phase changes and the refinement
    assert profile.duty == sorted(profile.duty)
    assert profile.duty[0] == 0.0 and profile.duty[-1] == pytest.approx(rating.duty)
    assert rating.arrangement == "counter-current"
    assert rating.ends == ("hot end", "cold end")
    # the seeded internal pinch: the profiles cross inside although the terminals do not
    assert min(rating.end_approach) > 0 > rating.min_approach
    assert profile.approach[profile.pinch_index] == rating.min_approach == hx.extra["min_approach"]
    assert rating.min_approach_duty == pytest.approx(rating.min_approach_fraction * rating.duty)
    assert rating.lmtd == pytest.approx(log_mean_temperature_difference(*rating.end_approach))
    assert "internal-pinch" in {f.name for f in seeded.findings_for("HX1")}


def test_profile_and_rating_stay_out_of_the_json(seeded):
    steps = to_dict(seeded)["steps"]
    assert all("profile" not in s and "exchanger" not in s for s in steps)


# -- the network ------------------------------------------------------------------------------------
def test_network_has_one_box_per_step_and_one_arrow_per_stream(seeded):
    svg = network_svg(seeded)
    boxes = re.findall(
        r'<g class="step [a-z]+" id="net-([^"]+)" data-step="[^"]+" data-severity="(\w+)"', svg
    )
    assert sorted(b for b, _ in boxes) == sorted(s.id for s in seeded.steps)
    arrows = re.findall(r'<g class="stream [a-z ]+" data-stream="([^"]+)"', svg)
    assert sorted(arrows) == sorted(_named_streams(seeded))
    marks = step_marks(seeded)
    assert {b: sev for b, sev in boxes} == {k: v or "none" for k, v in marks.items()}
    assert marks["HX1"] == "error" and marks["P1"] is None


def test_network_boxes_link_to_their_steps(seeded):
    svg = network_svg(seeded, lambda s: f"#step-{s}")
    assert svg.count('<a href="#step-') == len(seeded.steps)


def test_marks_leave_out_accepted_findings(seeded):
    result = copy.deepcopy(seeded)
    result.findings = [
        dataclasses.replace(f, accepted="reviewed") if f.step == "HX1" else f for f in result.findings
    ]
    assert step_marks(result)["HX1"] is None


# -- the T–Q diagram ----------------------------------------------------------------------------------
def test_tq_series_hold_the_profile_points(seeded):
    hx = seeded.step("HX1")
    svg = tq_svg(hx, "error")
    assert svg is not None
    for side, temperatures in (("hot", hx.profile.hot_T), ("cold", hx.profile.cold_T)):
        match = re.search(rf'<polyline points="([^"]+)"[^>]*data-side="{side}" data-points="(\d+)"', svg)
        assert match, side
        xy = [tuple(map(float, p.split(","))) for p in match.group(1).split()]
        assert len(xy) == int(match.group(2)) == len(temperatures)
        xs = [x for x, _ in xy]
        assert xs == sorted(xs)
        # hotter points are higher on the page (smaller y)
        order = sorted(range(len(xy)), key=lambda i: temperatures[i])
        assert [xy[i][1] for i in order] == sorted((y for _, y in xy), reverse=True)
    assert f'class="pinch" data-index="{hx.profile.pinch_index}"' in svg
    assert "smallest approach -6.6 K" in svg
    assert tq_svg(seeded.step("P1")) is None


# -- the exergy account and its pictures -----------------------------------------------------------
def test_exergy_account_closes_within_the_tolerances(clean):
    account = exergy_account(clean)
    out = sum(i.value for i in account.leaving) + sum(i.value for i in account.destroyed)
    tolerance = sum(s.energy_tolerance for s in clean.steps if not s.batch)
    assert abs(account.total_in - out) <= tolerance
    assert account.vessels == ["CIP1"]
    kinds = {i.label: i.kind for i in account.entering}
    assert kinds["chemical, released in B1"] == "chemical"


def test_exergy_flow_draws_every_flow_steps_destruction(seeded):
    svg = exergy_flow_svg(seeded)
    flow = [s for s in seeded.steps if not s.batch and s.exergy_destroyed >= 0]
    drawn = re.findall(r'<g class="destroyed (\w+)" data-step="([^"]+)"', svg)
    assert sorted(s for _, s in drawn) == sorted(s.id for s in flow)
    assert ("error", "HX1") in drawn
    assert "created in EV1 (impossible)" in svg  # the negative destruction enters as a flow
    assert "Vessels left out" in svg and "CIP1" in svg


def test_exergy_bars_keep_every_step_and_mark_failing_ones(seeded):
    svg = exergy_bars_svg(seeded)
    bars = re.findall(r'<g class="bar (\w+)" data-step="([^"]+)"', svg)
    assert sorted(s for _, s in bars) == sorted(s.id for s in seeded.steps if not s.batch)
    assert ("error", "B1") in bars and ("ok", "P1") in bars
    assert "logarithmic scale" in svg
    assert "negative, a second-law violation" in svg  # EV1


# -- the HTML report --------------------------------------------------------------------------------
def test_html_is_self_contained(seeded):
    text = report_html(seeded)
    assert "<script" not in text.lower()
    assert not re.search(r'(src|href)="(https?:)?//', text)
    for step in seeded.steps:
        assert f'id="step-{step.id}"' in text
    assert "not a safety review" in text and "licensed engineers" in text
    assert 'data-verdict="FAIL"' in text


def test_html_escapes_the_balance_text(seeded):
    result = copy.deepcopy(seeded)
    result.name = "<b>plant</b>"
    result.steps[0].description = "<script>alert(1)</script> & more"
    result.findings[0] = dataclasses.replace(result.findings[0], message='<img src=x onerror="y">')
    text = report_html(result)
    assert "<script>" not in text and "<img" not in text and "<b>plant" not in text
    assert "&lt;script&gt;alert(1)&lt;/script&gt; &amp; more" in text
    assert "&lt;b&gt;plant&lt;/b&gt;" in text


def test_check_writes_the_html_report(tmp_path: Path):
    target = tmp_path / "report.html"
    assert main(["check", str(CLEAN), "--html", str(target), "-q"]) == EXIT_PASS
    assert 'data-verdict="PASS"' in target.read_text(encoding="utf-8")


def test_batch_writes_reports_and_an_index(tmp_path: Path):
    out, history = tmp_path / "out", tmp_path / "runs.db"
    args = ["batch", str(CLEAN), str(SEEDED), "-o", str(out), "--history", str(history), "-q"]
    assert main([*args, "--workers", "1"]) == EXIT_FINDINGS
    index = (out / "index.html").read_text(encoding="utf-8")
    for name in ("quillon-bay-clean.html", "quillon-bay-seeded.html"):
        assert f'href="{name}"' in index and (out / name).is_file()
    assert index.count('class="trend"') == 2
    assert "errors per run: fail (20)" in index
