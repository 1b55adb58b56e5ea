"""Messages that point the right way, the diff of written claims, streams named by a probable
cause, and JUnit times and class names."""

from __future__ import annotations

import copy
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
import yaml
from conftest import SAMPLE

import audit
from audit.commands.main import main
from audit.diff import compare
from audit.errors import InputError, StateError
from audit.outcomes import AUDITED, FileOutcome
from audit.properties.fluids import open_fluid
from audit.report.blame import blamed_streams, blamed_text
from audit.report.junit import dotted_name, junit_tree

CLEAN = SAMPLE / "quillon-bay-clean.yaml"
SEEDED = SAMPLE / "quillon-bay-seeded.yaml"


@pytest.fixture(scope="module")
def clean_data() -> dict:
    return yaml.safe_load(CLEAN.read_text(encoding="utf-8"))


def _write(tmp_path: Path, data: dict) -> Path:
    path = tmp_path / "plant.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return path


def test_swapped_pump_ports_are_named_without_a_splitter(clean_data: dict, tmp_path: Path) -> None:
    data = copy.deepcopy(clean_data)
    pump = next(s for s in data["steps"] if s["id"] == "P1")
    pump["inlet"], pump["outlet"] = pump["outlet"], pump["inlet"]
    with pytest.raises(InputError) as raised:
        audit.run(_write(tmp_path, data))
    (problem,) = raised.value.problems
    assert str(problem).endswith(
        "stream S02: is consumed by more than one step (P1, B1); a stream enters one step only "
        "(step P1 looks connected backwards, its outlet S01 entering no step: swap its inlet and "
        "outlet)"
    )
    assert "splitter" not in str(problem)


def test_a_stream_really_fed_to_two_steps_still_says_splitter(clean_data: dict, tmp_path: Path) -> None:
    data = copy.deepcopy(clean_data)
    valve = next(s for s in data["steps"] if s["id"] == "V1")
    valve["inlet"] = "S05"  # also the exchanger's hot inlet; the valve's outlet S08 feeds nothing
    data["steps"].append({"id": "X9", "kind": "valve", "inlet": "S08", "outlet": "S99"})
    data["streams"]["S99"] = dict(data["streams"]["S08"])
    with pytest.raises(InputError, match=r"add a splitter if the stream divides"):
        audit.run(_write(tmp_path, data))


def test_swapped_exchanger_sides_give_one_finding(clean_data: dict, tmp_path: Path) -> None:
    data = copy.deepcopy(clean_data)
    exchanger = next(s for s in data["steps"] if s["kind"] == "heat_exchanger")
    exchanger["hot"], exchanger["cold"] = exchanger["cold"], exchanger["hot"]
    result = audit.run(_write(tmp_path, data))
    found = [(f.name, f.message) for f in result.findings_for(exchanger["id"])]
    assert [name for name, _ in found] == ["temperature-cross"]
    assert found[0][1].endswith("hot and cold sides swapped?")
    assert not any("199" in message for _, message in found)


@pytest.mark.parametrize("name", ["Steam", "steam", "Vapour"])
def test_steam_is_pointed_at_water(name: str) -> None:
    with pytest.raises(StateError, match=rf"unknown fluid '{name}': write 'Water' \(steam, water"):
        open_fluid(name)
    with pytest.raises(StateError, match=r"not a CoolProp fluid name \(for example 'Water'"):
        open_fluid("Unobtainium")


def test_diff_lists_every_claim_written_differently(capsys: pytest.CaptureFixture[str]) -> None:
    diff = compare(audit.run(CLEAN), audit.run(SEEDED))
    written = {(c.id, c.field): (c.old, c.new) for c in diff.changes if c.field.startswith("written ")}
    assert written[("B1", "written fuel_lhv")] == ("47.0 MJ/kg", "52.1 MJ/kg")
    assert written[("T1", "written shaft_power")] == ("1.120 MW", "1.45 MW")
    main(["diff", str(CLEAN), str(SEEDED)])
    assert "B1: written fuel_lhv 47.0 MJ/kg → 52.1 MJ/kg" in capsys.readouterr().out


def test_the_same_claim_written_another_way_is_no_change(tmp_path: Path) -> None:
    text = CLEAN.read_text(encoding="utf-8").replace("fuel_lhv: 47.0 MJ/kg", "fuel_lhv: 47 MJ/kg")
    path = tmp_path / "plant.yaml"
    path.write_text(text, encoding="utf-8")
    diff = compare(audit.run(CLEAN), audit.run(path))
    assert not [c for c in diff.changes if c.field.startswith("written ")]


def test_a_stream_blamed_by_a_probable_cause_does_not_say_none() -> None:
    result = audit.run(SEEDED)
    assert blamed_streams(result) == {"S20": ["step R1", "step EV1"]}
    assert blamed_text(result, "S20") == (
        "none of its own; a probable cause of findings at step R1, step EV1"
    )
    assert blamed_text(result, "S01") is None


def test_junit_cases_carry_times_and_dotted_class_names() -> None:
    result = audit.run(SEEDED)
    outcome = FileOutcome("sample_plant/quillon-bay-seeded.yaml", AUDITED, result=result, seconds=2.5)
    cases = junit_tree([outcome]).getroot().findall("testsuite/testcase")
    assert {c.get("classname") for c in cases} == {"sample_plant.quillon-bay-seeded"}
    times = [float(c.get("time") or 0) for c in cases]
    assert all(t > 0 for t in times[:-1])  # every step took some time
    assert sum(times) == pytest.approx(2.5, abs=0.01)  # the plant case has the rest
    assert dotted_name("plants/north/boiler.v2.yaml") == "plants.north.boiler_v2"


def test_junit_lists_a_skipped_file(tmp_path: Path) -> None:
    (tmp_path / "mkdocs.yml").write_text("site_name: x\n", encoding="utf-8")
    (tmp_path / "plant.yaml").write_text(CLEAN.read_text(encoding="utf-8"), encoding="utf-8")
    junit = tmp_path / "out.xml"
    out = tmp_path / "out"
    command = ["batch", str(tmp_path), "--junit", str(junit), "-q", "--workers", "1", "-o", str(out)]
    assert main(command) == 0
    assert (out / "summary.xlsx").is_file()  # the summary lists the skipped file too
    suites = ET.parse(junit).getroot().findall("testsuite")
    skipped = [s for s in suites if s.get("skipped") == "1"]
    assert len(skipped) == 1 and skipped[0].find("testcase/skipped") is not None
