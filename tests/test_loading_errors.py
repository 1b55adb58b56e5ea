"""Bad input is refused with a message that names the file, the line and the field (or stream or
step), and the command line exits 2 without a traceback."""

from __future__ import annotations

import pytest
from conftest import write_balance

import audit
from audit.commands.main import main
from audit.errors import InputError

GOOD_STREAM = "  S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s}\n"


def balance(streams: str = GOOD_STREAM, header: str = "", steps: str = "steps: []\n") -> str:
    return "balance:\n  name: t\n  site_pressure: 1.013 bar\n" + header + "streams:\n" + streams + steps


def error_of(tmp_path, text: str) -> str:
    path = write_balance(tmp_path, text)
    with pytest.raises(InputError) as info:
        audit.run(path)
    return str(info.value)


def test_duplicate_key_names_both_lines(tmp_path):
    text = balance(streams=GOOD_STREAM + "  S1: {fluid: Water, T: 200 degC, P: 10 bar, flow: 1 kg/s}\n")
    message = error_of(tmp_path, text)
    assert "balance.yaml:6:3" in message
    assert "the key 'S1' is written twice in the same mapping, on line 5 and line 6" in message


def test_unknown_fluid(tmp_path):
    message = error_of(
        tmp_path, balance("  S1: {fluid: Unobtainium, T: 300 degC, P: 10 bar, flow: 1 kg/s}\n")
    )
    assert "balance.yaml:5:3: stream S1: unknown fluid 'Unobtainium'" in message


def test_two_phase_T_P_is_ambiguous(tmp_path):
    # Water at 10 bar saturates at 179.878 °C (IAPWS-95): 179.9 °C is inside the 0.1 K band.
    message = error_of(
        tmp_path, balance("  S1: {fluid: Water, T: 179.9 degC, P: 10 bar, flow: 1 kg/s}\n")
    )
    assert "balance.yaml:5:3: stream S1:" in message
    assert "lies within 0.1 K of the saturation temperature 179.878 °C of Water" in message
    assert "give a quality" in message


def test_missing_property(tmp_path):
    message = error_of(tmp_path, balance("  S1: {fluid: Water, T: 300 degC, flow: 1 kg/s}\n"))
    assert "balance.yaml:5:3: stream S1, field 'streams.S1':" in message
    assert "a state needs one of the pairs (T, P)" in message
    assert "this one gives: T" in message


def test_missing_flow(tmp_path):
    message = error_of(tmp_path, balance("  S1: {fluid: Water, T: 300 degC, P: 10 bar}\n"))
    assert "field 'streams.S1.flow': 'flow' is required here" in message


def test_bare_number(tmp_path):
    message = error_of(tmp_path, balance("  S1: {fluid: Water, T: 300 degC, P: 10, flow: 1 kg/s}\n"))
    assert "balance.yaml:5:35: stream S1, field 'streams.S1.P':" in message
    assert "a bare number (10) has no unit; write it with its unit, such as '40 bar'" in message


def test_gauge_without_site_pressure(tmp_path):
    text = "balance:\n  name: t\nstreams:\n  S1: {fluid: Water, T: 300 degC, P: 10 barg, flow: 1 kg/s}\n"
    message = error_of(tmp_path, text)
    assert "balance.yaml:4:35: stream S1, field 'streams.S1.P':" in message
    assert "'10 barg' is a gauge pressure, but the balance declares no site_pressure" in message


def test_wrong_dimension(tmp_path):
    message = error_of(tmp_path, balance("  S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kW}\n"))
    assert "field 'streams.S1.flow': '1 kW' is not a flow" in message


def test_alias_bomb(tmp_path):
    lines = ['a0: &a0 ["x", "x", "x", "x", "x", "x", "x", "x", "x", "x"]']
    for i in range(1, 9):
        refs = ", ".join([f"*a{i - 1}"] * 10)
        lines.append(f"a{i}: &a{i} [{refs}]")
    message = error_of(tmp_path, "\n".join(lines) + "\n")
    assert "refusing it as an alias bomb" in message
    assert "balance.yaml:" in message


def test_python_tag_is_refused(tmp_path):
    message = error_of(tmp_path, balance() + "extra: !!python/object/apply:os.system ['echo hi']\n")
    assert "the tag 'tag:yaml.org,2002:python/object/apply:os.system' is not allowed" in message
    assert "balance.yaml:7:" in message


def test_unknown_field_suggests(tmp_path):
    message = error_of(
        tmp_path, balance("  S1: {fluid: Water, T: 300 degC, P: 10 bar, flow: 1 kg/s, qualty: 1}\n")
    )
    assert "unknown field 'qualty'; did you mean 'quality'?" in message


def test_unknown_step_kind(tmp_path):
    message = error_of(tmp_path, balance(steps="steps:\n  - {id: X1, kind: teleporter}\n"))
    assert "step X1" in message
    assert "unknown step kind 'teleporter'; the known kinds are:" in message


def test_dangling_stream(tmp_path):
    steps = "steps:\n  - id: V1\n    kind: valve\n    inlet: S1\n    outlet: S9\n"
    message = error_of(tmp_path, balance(steps=steps))
    assert "balance.yaml:10:5: step V1: outlet 'S9' is not a stream of this balance" in message


def test_doubly_consumed_stream(tmp_path):
    streams = GOOD_STREAM + (
        "  S2: {fluid: Water, T: 290 degC, P: 5 bar, flow: 1 kg/s}\n"
        "  S3: {fluid: Water, T: 290 degC, P: 5 bar, flow: 1 kg/s}\n"
    )
    steps = (
        "steps:\n  - {id: V1, kind: valve, inlet: S1, outlet: S2}\n"
        "  - {id: V2, kind: valve, inlet: S1, outlet: S3}\n"
    )
    message = error_of(tmp_path, balance(streams=streams, steps=steps))
    assert "stream S1: is consumed by more than one step (V1, V2)" in message


def test_cli_exit_code_and_no_traceback(tmp_path, capsys):
    path = write_balance(tmp_path, balance("  S1: {fluid: Water, T: 300 degC, P: 10, flow: 1 kg/s}\n"))
    json_path = tmp_path / "out.json"
    code = main(["check", str(path), "--json", str(json_path)])
    captured = capsys.readouterr()
    assert code == 2
    assert "Traceback" not in captured.err
    assert captured.err.startswith("error: ")
    assert not json_path.exists()


def test_empty_file_and_folder(tmp_path):
    empty = write_balance(tmp_path, "", "empty.yaml")
    with pytest.raises(InputError, match=r"empty.yaml:1: the file is empty"):
        audit.run(empty)
    with pytest.raises(InputError, match=r"is a folder, not a balance file"):
        audit.run(tmp_path)


def test_negative_claims_are_refused(tmp_path):
    # Claims carry no signs: the field's name says the direction.
    streams = GOOD_STREAM + "  S2: {fluid: Water, T: 200 degC, P: 2 bar, flow: 1 kg/s}\n"
    steps = "steps:\n  - {id: T1, kind: turbine, inlet: S1, outlet: S2, heat_loss: -5 kW}\n"
    message = error_of(tmp_path, balance(streams=streams, steps=steps))
    assert "step T1, field 'steps[0].heat_loss': must not be negative" in message


@pytest.mark.parametrize("tag", ["!!int", "!!float", "!!bool"])
def test_typed_empty_value_is_an_input_error(tmp_path, tag):
    message = error_of(tmp_path, balance() + f"extra: {tag}\n")
    assert "balance.yaml:7:" in message
    assert "cannot be read" in message
