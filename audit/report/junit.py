"""JUnit XML, so a CI system shows an audit like a test run (standard library only).

Layout: one ``<testsuite>`` per file, named by the file's path; its test cases' ``classname`` is
the path as a dotted name (:func:`dotted_name`). An audited file has one ``<testcase>`` per step
(named ``<step id> (<kind>)``, its ``time`` the step's evaluation time) plus one named ``plant and
streams`` for findings that belong to no step (its time the rest of the file's). A file that is
not a balance (skipped by a batch) is one test case marked ``<skipped>``. A test case *fails*
(one ``<failure>``, its text listing every such finding) when it has findings at or above the
gate that no reviewer accepted; accepted and lower findings are listed in its ``<system-out>``.
An invalid file is one test case ``load and validate`` with an ``<error type="invalid-input">``;
an internal error, one with ``<error type="internal-error">``. An audited file whose own workbook
could not be written has one more test case, ``write the workbook``, with an
``<error type="report-not-written">``.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path

from audit.findings import Finding, at_or_above
from audit.outcomes import INTERNAL, INVALID, SKIPPED, UNWRITTEN, FileOutcome
from audit.printable import xml_safe
from audit.report.files import write_text

PLANT_CASE = "plant and streams"
LOAD_CASE = "load and validate"
WORKBOOK_CASE = "write the workbook"


def _line(finding: Finding) -> str:
    where = finding.step or (f"stream {finding.stream}" if finding.stream else "plant")
    text = f"{finding.severity.upper()} {finding.name} at {where}: {finding.message}"
    if finding.accepted:
        text += f" [ACCEPTED: {finding.accepted}]"
    return text


def dotted_name(path: str) -> str:
    """A test class name for a balance file, as CI systems group them: its path without the
    suffix, folders joined with dots (``plants/north/boiler.yaml`` → ``plants.north.boiler``); dots
    inside a name become ``_``."""
    relative = Path(path)
    if relative.is_absolute():
        try:
            relative = relative.relative_to(Path.cwd())
        except ValueError:
            relative = Path(*relative.parts[1:])
    parts = [p.replace(".", "_") for p in relative.with_suffix("").parts if p not in ("", ".", "..")]
    return ".".join(parts) or "balance"


def junit_tree(outcomes: list[FileOutcome], fail_on: str = "error") -> ET.ElementTree:
    """The JUnit XML tree of a batch (or of one ``check``); see the module docstring."""
    root = ET.Element("testsuites", name="plant-audit")
    totals = {"tests": 0, "failures": 0, "errors": 0}
    for outcome in outcomes:
        suite = ET.SubElement(root, "testsuite", name=outcome.path)
        counts = {"tests": 0, "failures": 0, "errors": 0}
        skipped = 0
        classname = dotted_name(outcome.path)
        steps_time = 0.0
        if outcome.status == SKIPPED:
            case = ET.SubElement(suite, "testcase", classname=classname, name=LOAD_CASE, time="0.000")
            ET.SubElement(case, "skipped", message=(outcome.problems or ["not a balance"])[0])
            counts["tests"] += 1
            skipped += 1
        elif outcome.status in (INVALID, INTERNAL) or outcome.result is None:
            case = ET.SubElement(
                suite, "testcase", classname=classname, name=LOAD_CASE, time=f"{outcome.seconds:.3f}"
            )
            kind = "invalid-input" if outcome.status == INVALID else "internal-error"
            error = ET.SubElement(case, "error", type=kind, message=(outcome.problems or [kind])[0])
            error.text = "\n".join(outcome.problems)
            counts["tests"] += 1
            counts["errors"] += 1
        else:
            result = outcome.result
            ET.SubElement(
                ET.SubElement(suite, "properties"),
                "property",
                name="revision",
                value=result.revision or "",
            )
            cases = [(f"{s.id} ({s.kind})", s.id) for s in result.steps] + [(PLANT_CASE, None)]
            step_ids = {s.id for s in result.steps}
            for name, step_id in cases:
                own = [
                    f
                    for f in result.findings
                    if (f.step == step_id) or (step_id is None and f.step not in step_ids)
                ]
                if step_id is not None:
                    seconds = result.step_seconds.get(step_id, 0.0)
                    steps_time += seconds
                else:  # the rest of the file's time: reading, streams, review
                    seconds = max(outcome.seconds - steps_time, 0.0)
                case = ET.SubElement(
                    suite, "testcase", classname=classname, name=name, time=f"{seconds:.6f}"
                )
                failing = [f for f in own if at_or_above(f.severity, fail_on) and not f.accepted]
                counts["tests"] += 1
                if failing:
                    counts["failures"] += 1
                    names = ", ".join(dict.fromkeys(f.name for f in failing))
                    failure = ET.SubElement(
                        case,
                        "failure",
                        type=failing[0].name,
                        message=f"{len(failing)} finding(s) at or above '{fail_on}': {names}",
                    )
                    failure.text = "\n".join(_line(f) for f in failing)
                others = [f for f in own if f not in failing]
                if others:
                    ET.SubElement(case, "system-out").text = "\n".join(_line(f) for f in others)
            if outcome.status == UNWRITTEN:
                case = ET.SubElement(
                    suite, "testcase", classname=classname, name=WORKBOOK_CASE, time="0.000"
                )
                error = ET.SubElement(
                    case,
                    "error",
                    type="report-not-written",
                    message=(outcome.problems or ["report-not-written"])[0],
                )
                error.text = "\n".join(outcome.problems)
                counts["tests"] += 1
                counts["errors"] += 1
        for key, value in counts.items():
            suite.set(key, str(value))
            totals[key] += value
        suite.set("skipped", str(skipped))
        suite.set("time", f"{outcome.seconds:.3f}")
    for key, value in totals.items():
        root.set(key, str(value))
    _make_safe(root)
    ET.indent(root)
    return ET.ElementTree(root)


def _make_safe(root: ET.Element) -> None:
    """Spell every character XML 1.0 does not allow (and every control or format character) in the
    tree's attributes and texts as an escape, so that the file is well formed whatever the ids and
    file names hold (:func:`audit.printable.xml_safe`); texts keep their line breaks."""
    for element in root.iter():
        for key, value in element.attrib.items():
            element.set(key, xml_safe(value))
        if element.text:
            element.text = "\n".join(xml_safe(line) for line in element.text.split("\n"))


def write_junit(outcomes: list[FileOutcome], path: str | Path, fail_on: str = "error") -> None:
    """Write the JUnit XML of ``outcomes`` to ``path`` atomically."""
    root = junit_tree(outcomes, fail_on).getroot()
    assert root is not None
    text = ET.tostring(root, encoding="unicode", xml_declaration=True)
    write_text(path, text + "\n", "the JUnit XML")
