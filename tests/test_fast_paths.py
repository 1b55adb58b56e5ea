"""The fast paths give exactly what the slow ones give (benchmarks/run.py measures the gain).

* Reading YAML: the one-line flow mappings of :mod:`audit.input.flowlines`, composed by libyaml where
  PyYAML has it, must give the same data (same values, same types) and the same positions as the
  pure-Python parser composing the original text, and the same error for a bad file;
* units: each distinct unit string is read once; the checks that depend on the value (absolute
  zero, non-positive pressure, gauge without site pressure, negative flow) still apply afterwards;
* the workbook's cached formula values are filled in one pass over a sheet.
"""

from __future__ import annotations

import re

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from audit.errors import InputError, UnitError
from audit.input import document as loader
from audit.input import flowlines, yaml_limits
from audit.units import to_flow, to_si


def _read(text: str, fast: bool, libyaml: bool, monkeypatch: pytest.MonkeyPatch) -> tuple[str, object]:
    """('ok', (repr of the data, positions)) or ('error', message) for one way of reading."""
    with monkeypatch.context() as patch:
        if not libyaml:
            patch.setattr(yaml_limits, "FAST_LOADER", None)
        patch.setattr(loader, "POSITION_DEPTH", 10**6)  # every position, to compare them all
        try:
            if fast:
                document = loader.parse_document(text, "t.yaml")
            else:
                document = loader._parse(text, "t.yaml", None)
        except InputError as exc:
            return "error", str(exc)
    return "ok", (repr(document.data), document.positions)


def assert_reads_alike(text: str, monkeypatch: pytest.MonkeyPatch) -> tuple[str, object]:
    """The fast path reads ``text`` as the usual path does, with libyaml and without; and libyaml
    as pure PyYAML does, except for tags: libyaml reads ``!!str,`` in a flow collection as a tag
    on an empty value, where PyYAML takes the comma into the tag and refuses the text (both refuse
    the other tags, in different words)."""
    usual = _read(text, fast=False, libyaml=True, monkeypatch=monkeypatch)
    assert _read(text, fast=True, libyaml=True, monkeypatch=monkeypatch) == usual
    pure = _read(text, fast=False, libyaml=False, monkeypatch=monkeypatch)
    assert _read(text, fast=True, libyaml=False, monkeypatch=monkeypatch) == pure
    if "!" not in text:
        assert usual == pure
    return usual


STREAMS = """\
balance: {name: fast path}
streams:
  S1: {fluid: Water, T: 20 °C, P: 1.013 bar, flow: 10.8 t/h, phase: liquid}
  S2:   { fluid: Water ,  P: 40 barg,quality: 0.5, flow: 3 kg/s }
  S3: {fluid: Air, T: -5 degC, P: .5 MPa, flow: 1500 Nm3/h}
steps:
  - {id: V1, kind: valve, inlet: S1, outlet: S2}
  - {id: X1, kind: heat_exchanger, hot: {inlet: S1, outlet: S2}, cold: {inlet: S3, outlet: S4}}
  - id: P1
    kind: pump
    tolerances: {energy_relative: 0.02, mass_relative: 1e-3}
"""

CORPUS = {
    "streams and steps": STREAMS,
    "implicit types": "a: {b: 0.5, c: yes, d: null, e: .inf, f: 1_000, g: 0x1F, h: 2024-01-02,"
    " i: 1e5, j: 1.0e+5, k: -5, l: +5, m: .5, n: y, o: Off, p: NULL, q: 0o17}\n",
    "keys of implicit types": "a: {on: 1, 12: b, null: c, 1.5: d}\n",
    "a key written twice": "a: {b: 1, b: 2}\n",
    "two keys that read the same": "a: {on: 1, yes: 2}\n",
    "true and one are the same key": "a: {true: 1, 1: 2}\n",
    "a trailing comma": "a: {b: 1,}\n",
    "nested two deep": "a: {b: {c: {d: e}}}\n",
    "inside a literal block": "a: |\n  S1: {b: c}\nd: {e: f}\n",
    "inside a folded block": "a: >\n  S1: {b: c}\n  g: {h: i}\nd: {e: f}\n",
    "inside a quoted string": 'a: "x\n  {b: c}\n  y"\nd: {e: f}\n',
    "inside a flow sequence": "a: [\n  {b: c}\n  ]\nd: [{e: f}]\n",
    "with a comment after it": "a: {b: c} # note\nd: {e: f}\n",
    "commented out": "# a: {b: c}\nd: {e: f}\n",
    "anchor and alias": "a: &x {b: c}\nd: *x\ne: {f: g}\n",
    "crlf line ends": STREAMS.replace("\n", "\r\n"),
    "a lone carriage return": "a: {b: c}\rd: {e: f}\n",
    "a tab": "a: {b: c}\nd:\t{e: f}\n",
    "non-ascii before a key": "a: {T: 20 °C, P: 1 bar, x: µm, z: 5 m³}\n",
    "a syntax error after fast lines": STREAMS + "bad: [unclosed\n",
    "a duplicate outer key after fast lines": "a: {b: c}\na: {d: e}\n",
    "the whole document on one line": "{a: b, c: d}\n",
    "several documents": "a: {b: c}\n---\nd: {e: f}\n",
    "a nested sequence item": "- - {a: b}\n- {c: d}\n",
    "an empty mapping": "a: {}\nb: {c: d}\n",
    "an indented item key": "a:\n  - b: {c: d, e: f}\n",
    "a colon in a value": "a: {b: 12:30, c: d}\n",
    "a quoted value": "a: {b: 'c', d: e}\n",
    "a tag": "a: !!str {b: c}\nd: {e: f}\n",
    "a python tag inside": "a: {b: !!python/name:os.system x}\n",
}


@pytest.mark.parametrize("name", sorted(CORPUS))
def test_fast_path_reads_like_pure_pyyaml(name, monkeypatch):
    assert_reads_alike(CORPUS[name], monkeypatch)


def test_fast_path_is_taken_for_the_streams_and_steps(monkeypatch):
    scanned = flowlines.scan(STREAMS)
    assert scanned is not None
    assert sorted(line for line, _ in scanned.mappings) == [0, 2, 3, 4, 6, 7, 10]
    kind, (data, positions) = assert_reads_alike(STREAMS, monkeypatch)
    assert kind == "ok"
    assert positions[("streams", "S2", "quality")] == (4, 38)  # the key's line and column


def test_duplicate_key_error_is_the_usual_one(monkeypatch):
    kind, message = assert_reads_alike(CORPUS["a key written twice"], monkeypatch)
    assert kind == "error"
    assert "the key 'b' is written twice in the same mapping, on line 1" in message


def test_files_with_other_line_breaks_or_tabs_are_read_the_usual_way():
    assert flowlines.scan("a: {b: c}\rd: {e: f}\n") is None
    assert flowlines.scan("a: {b: c}\nd:\t{e: f}\n") is None
    assert flowlines.scan("\ufeffa: {b: c}\n") is None
    assert flowlines.scan("a: {b: c}\u2028d: {e: f}\n") is None


TOKENS = [
    "Water",
    "20 degC",
    "1.013 bar",
    "0.5",
    "yes",
    "no",
    "on",
    "null",
    "~",
    ".inf",
    "-.inf",
    "1_000",
    "0x1F",
    "2024-01-02",
    "12:30",
    "1e5",
    "-5 K",
    "+5",
    ".5",
    "°C",
    "5 m³",
    "a b",
    "a  b",
    "a#b",
    "a #b",
    "'q'",
    '"q"',
    "&a",
    "*a",
    "!x",
    "[1]",
    "{c: d}",
    "-",
    "- x",
    "?",
    "=",
    "<<",
    "",
    " ",
    "%",
    "@",
    "x,y",
    "kJ/(kg K)",
    "Nm3/h",
    "L0a",
    "R134a",
    "n-Propane",
]
KEYS = ["T", "P", "flow", "fluid", "on", "yes", "1", "null", "x y", "a", "a", "_k", "k1"]


@st.composite
def documents(draw) -> str:
    lines = []
    for index in range(draw(st.integers(1, 6))):
        items = [
            f"{draw(st.sampled_from(KEYS))}: {draw(st.sampled_from(TOKENS))}"
            for _ in range(draw(st.integers(0, 4)))
        ]
        separator = draw(st.sampled_from([", ", ",", " ,  "]))
        body = separator.join(items)
        lead = draw(st.sampled_from([f"S{index}: ", f"  S{index}: ", "- ", "  - ", ""]))
        lines.append(f"{lead}{{{body}}}{draw(st.sampled_from(['', ' ', '  # c']))}")
    return "\n".join(lines) + draw(st.sampled_from(["\n", "", "\n\n"]))


@settings(
    max_examples=150,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)
@given(documents())
def test_fast_path_reads_generated_lines_like_pure_pyyaml(monkeypatch, text):
    assert_reads_alike(text, monkeypatch)


def test_plain_text_is_tagged_as_the_resolver_tags_it():
    # text starting with a character no implicit resolver reads is a string without asking it
    # (ids and names); anything else is asked; either way the tag is the resolver's
    resolver = yaml.resolver.Resolver()
    texts = [t for t in TOKENS if t.strip()] + KEYS + ["L12a", "yes", "Yes", "off", "NULL", "True"]
    for text in texts:
        flowlines._PLAIN.pop(text, None)
        tag = resolver.resolve(yaml.ScalarNode, text, (True, False))
        assert flowlines._plain(text) == (text, None if tag == flowlines.STR_TAG else tag)


# -- units ----------------------------------------------------------------------------------------
def test_value_checks_still_apply_once_a_unit_is_known():
    # 0 °C = 273.15 K exactly (SI brochure, 9th ed.): a known unit keeps its offset...
    assert to_si("20 degC", "temperature") == pytest.approx(293.15, abs=1e-12)
    # ...and the checks that depend on the number
    with pytest.raises(UnitError, match=r"'-300 degC' is at or below absolute zero"):
        to_si("-300 degC", "temperature")
    assert to_si("2 bar", "pressure") == 2e5
    with pytest.raises(UnitError, match=r"'-2 bar' is not a positive absolute pressure"):
        to_si("-2 bar", "pressure")
    assert to_si("5 barg", "pressure", site_pressure=101_325.0) == 5e5 + 101_325.0
    with pytest.raises(
        UnitError,
        match=r"'5 barg' is a gauge pressure, but the balance "
        r"declares no site_pressure",
    ):
        to_si("5 barg", "pressure")


def test_the_same_unit_reads_per_kind():
    # a temperature difference has no offset; a temperature in degC has 273.15 K
    assert to_si("5 degC", "temperature_difference") == 5.0
    assert to_si("5 degC", "temperature") == pytest.approx(278.15, abs=1e-12)
    with pytest.raises(UnitError, match=r"'5 degC' is not a pressure"):
        to_si("5 degC", "pressure")


def test_flow_checks_keep_their_order_once_a_unit_is_known():
    assert to_flow("3.6 t/h").value == pytest.approx(1.0, rel=1e-15)  # 1 t = 1000 kg exactly
    with pytest.raises(UnitError, match=r"'-3.6 t/h' is a negative flow"):
        to_flow("-3.6 t/h")
    for _ in range(2):  # first read and cached read give the same error
        with pytest.raises(UnitError, match=r"'-1 kg' is a negative flow"):
            to_flow("-1 kg")
        with pytest.raises(UnitError, match=r"'1 kg' is not a flow"):
            to_flow("1 kg")
    assert to_flow("3600 Nm3/h").value == pytest.approx(1.0, rel=1e-15)
    assert to_flow("3600 Nm3/h").basis == "normal_volume"


# -- workbook -------------------------------------------------------------------------------------
def test_formula_cells_carry_their_cached_value_as_written(tmp_path):
    """Every formula cell of the Steps sheet is written with its value (no later pass over the
    file fills it in)."""
    import zipfile

    from conftest import SAMPLE

    import audit
    from audit.report.workbook import write_workbook

    path = tmp_path / "book.xlsx"
    write_workbook(audit.run(SAMPLE / "quillon-bay-seeded.yaml"), path)
    with zipfile.ZipFile(path) as archive:
        xml = archive.read("xl/worksheets/sheet3.xml").decode()
    formulas = re.findall(r"<f>[^<]*</f>(<v>[^<]*</v>)?", xml)
    assert formulas and all(value.startswith("<v>") and value != "<v></v>" for value in formulas)
