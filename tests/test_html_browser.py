"""The HTML report and the batch index opened in a real browser (headless Chromium): the rendered
page holds every step, marks the failing ones, logs nothing to the console, and renders at a
desktop and a narrow width. Skipped, with the reason, when Chromium is not installed (.ci/run
installs the Debian package when it can)."""

from __future__ import annotations

import re
import shutil
import struct
import subprocess
from pathlib import Path

import pytest
from conftest import SAMPLE

import audit
from audit.commands.main import main
from audit.report.html.report import write_html
from audit.report.pictures.svg import step_marks

SEEDED = SAMPLE / "quillon-bay-seeded.yaml"
CLEAN = SAMPLE / "quillon-bay-clean.yaml"
FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--enable-logging=stderr",
    "--v=0",
]
CONSOLE = re.compile(r":CONSOLE[:(]")  # how Chromium logs a page's console message to stderr


def _chromium() -> str:
    found = shutil.which("chromium") or shutil.which("chromium-browser")
    if found is None:
        pytest.skip("Chromium is not installed (Debian package 'chromium'): the browser checks need it")
    return found


def _open(page: Path, tmp_path: Path, *options: str) -> subprocess.CompletedProcess:
    profile = tmp_path / f"profile-{len(list(tmp_path.iterdir()))}"
    command = [_chromium(), *FLAGS, f"--user-data-dir={profile}", *options, page.resolve().as_uri()]
    done = subprocess.run(command, capture_output=True, text=True, timeout=120, cwd=tmp_path)
    assert done.returncode == 0, done.stderr[-2000:]
    assert not CONSOLE.search(done.stderr), done.stderr[-2000:]  # no console errors (or messages)
    return done


@pytest.fixture(scope="module")
def seeded():
    return audit.run(SEEDED)


@pytest.fixture
def report(seeded, tmp_path: Path) -> Path:
    target = tmp_path / "report.html"
    write_html(seeded, target)
    return target


def test_rendered_report_has_every_step_and_marks_failing_ones(seeded, report, tmp_path):
    dom = _open(report, tmp_path, "--dump-dom").stdout
    marks = step_marks(seeded)
    for step in seeded.steps:
        severity = marks[step.id] or "none"
        section = re.search(
            rf'<section id="step-{step.id}" class="step (\w+)"[^>]*data-severity="(\w+)"', dom
        )
        assert section, step.id
        assert section.group(2) == severity
        box = re.search(rf'<g class="step (\w+)" id="net-{step.id}"[^>]*data-severity="(\w+)"', dom)
        assert box and box.group(2) == severity, step.id
        assert f'<a href="#step-{step.id}">' in dom  # a box in the network links to its balance
    assert marks["HX1"] == "error" and 'class="pinch"' in dom
    assert 'data-verdict="FAIL"' in dom and "licensed engineers" in dom


@pytest.mark.parametrize("width, height", [(1366, 900), (390, 844)])
def test_report_renders_at_desktop_and_narrow_widths(report, tmp_path, width, height):
    shot = tmp_path / f"shot-{width}.png"
    _open(
        report, tmp_path, f"--screenshot={shot}", f"--window-size={width},{height}", "--hide-scrollbars"
    )
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    png_width, png_height = struct.unpack(">II", data[16:24])
    assert (png_width, png_height) == (width, height)
    assert len(data) > 10_000  # something was drawn, not a blank page


def test_rendered_batch_index_links_each_report(tmp_path):
    out = tmp_path / "out"
    main(["batch", str(CLEAN), str(SEEDED), "-o", str(out), "--workers", "1", "-q"])
    dom = _open(out / "index.html", tmp_path, "--dump-dom").stdout
    verdicts = dict(re.findall(r'data-file="[^"]*?([\w-]+)\.yaml" data-verdict="(\w+)"', dom))
    assert verdicts == {"quillon-bay-clean": "PASS", "quillon-bay-seeded": "FAIL"}
    for name in ("quillon-bay-clean.html", "quillon-bay-seeded.html"):
        assert f'href="{name}"' in dom
        _open(out / name, tmp_path, "--dump-dom")
