"""Measurement uncertainty: the declarations, the propagation (GUM, JCGM 100:2008, §5.1), the Monte
Carlo cross-check (JCGM 101:2008) and the verdicts of the law findings.

Independent references: the exact variance of a linear function (GUM eq. (10) with constant
sensitivity coefficients), IAPWS-95 enthalpies from the ``iapws`` library (agreeing with CoolProp's
HEOS to about 1e-11, reference-values.md row 11), and the sampling error of a Monte Carlo standard
deviation, 1/√(2(M − 1)) relative for M normal draws (JCGM 101:2008, §7.2 and the usual result for
the standard error of a sample standard deviation).
"""

from __future__ import annotations

import json
import math

import pytest
from conftest import SAMPLE, assert_close, audit_text

import audit
from audit.commands.main import main
from audit.errors import InputError
from audit.findings import CONSISTENT, MARGINAL, VIOLATED
from audit.model.uncertainty import coverage_divisor, parse_spread
from audit.report.console import findings_summary
from audit.report.machine import to_dict
from audit.review.propagation import propagate
from audit.review.verdicts import verdict

iapws = pytest.importorskip("iapws")

SITE = 1.013  # bar, the site pressure of the headers below

MEASURED = """
balance:
  name: test balance
  site_pressure: 1.013 bar
  uncertainty: {uncertainty}
"""

HEATER = """
streams:
  A: {{fluid: Water, T: 105 degC, P: 41.5 barg, flow: 10.8 t/h{stream_extra}}}
  B: {{fluid: Water, T: 400 degC, P: 40 barg, flow: 10.8 t/h{stream_extra}}}
steps:
  - {{id: B1, kind: heater, inlet: A, outlet: B, duty: {duty}{step_extra}}}
"""


def _heater(
    tmp_path, uncertainty: str, duty: str = "8.5 MW", stream_extra: str = "", step_extra: str = ""
):
    return audit_text(
        tmp_path,
        HEATER.format(duty=duty, stream_extra=stream_extra, step_extra=step_extra),
        header=MEASURED.format(uncertainty=uncertainty),
    )


def _h_iapws95(T_C: float, P_bar: float) -> float:
    """Specific enthalpy [J/kg] from IAPWS-95 (iapws library), T [°C], P [bar abs]."""
    return iapws.IAPWS95(T=T_C + 273.15, P=P_bar / 10.0).h * 1e3


def _only(result, step: str, name: str):
    found = [f for f in result.findings if f.step == step and f.name == name]
    assert len(found) == 1, [(f.step, f.name) for f in result.findings]
    return found[0]


# -- the law of propagation -----------------------------------------------------------------------
def test_propagate_reproduces_exact_variance_of_linear_function_gum_eq10():
    # y1 = 3 x1 − 2 x2 + 0.5 x3, y2 = x2 − 7 x3: u²(y) = Σ c_i² u_i² exactly (GUM eq. (10)).
    a = [(3.0, -2.0, 0.5), (0.0, 1.0, -7.0)]
    x0, u = [10.0, 4.0, -2.0], [0.1, 0.25, 0.02]

    def f(x):
        return [sum(c * v for c, v in zip(row, x, strict=True)) for row in a]

    result = propagate(f, x0, u)
    for row, u_c in zip(a, result.u_c, strict=True):
        exact = math.sqrt(sum((c * ui) ** 2 for c, ui in zip(row, u, strict=True)))
        # central differences are exact for a linear function: only rounding remains
        assert_close(u_c, exact, rtol=1e-12, what="u_c of a linear function")
    assert result.contributions[1] == pytest.approx([-0.5, 0.25], rel=1e-12)


def test_propagate_one_sided_when_a_side_cannot_be_evaluated():
    # y = x² refused below x = 1 (as a state outside its range would be): the difference is
    # one-sided, f(1.1) − f(1) = 0.21 for u = 0.1 (not the central 2·x·u = 0.2).
    def f(x):
        if x[0] < 1.0:
            raise InputError("outside the range")
        return [x[0] ** 2]

    result = propagate(f, [1.0], [0.1])
    assert result.u_c[0] == pytest.approx(0.21, rel=1e-12)


def test_heater_residual_variance_is_exact_for_duty_and_flow_iapws95(tmp_path):
    # r = Q − ṁ (h_B − h_A) is linear in the claimed duty and the flow. The duty's 2 % and the
    # inlet flow's 1 % give u²(r) = (0.02 Q)² + (0.01 ṁ (h_B − h_A))²; the outlet's flow follows
    # the inlet's by conservation of mass (one flow, fully correlated: GUM §5.2), so it adds
    # nothing. h from IAPWS-95 (iapws), independent of CoolProp.
    result = _heater(
        tmp_path,
        "{basis: design, flow: 1 %, duty: 2 %}",
        stream_extra=(", uncertainty: measured"),
        step_extra=", uncertainty: measured",
    )
    finding = _only(result, "B1", "energy-imbalance")
    m = 10.8 / 3.6
    dh = _h_iapws95(400.0, 40.0 + SITE) - _h_iapws95(105.0, 41.5 + SITE)
    exact = math.sqrt((0.02 * 8.5e6) ** 2 + (0.01 * m * dh) ** 2)
    # CoolProp HEOS and iapws IAPWS-95 agree to ~1e-11 in h; the differences are exact
    assert_close(finding.uncertainty, 2.0 * exact, "kW", rtol=1e-8, what="U of the residual")
    assert finding.coverage_factor == 2.0
    shares = {c.input: c.share for c in finding.contributors}
    assert set(shares) == {"step B1 duty", "stream A flow"}
    assert sum(shares.values()) == pytest.approx(1.0, rel=1e-12)


def test_expanded_k2_declaration_is_halved_to_a_standard_uncertainty(tmp_path):
    # A spread declared with coverage expanded-k2 is U = 2u (GUM §6.2): 4 % expanded = 2 % standard.
    standard = _heater(tmp_path, "{basis: design}", step_extra=", uncertainty: {duty: 2 %}")
    expanded = _heater(
        tmp_path, "{basis: design}", step_extra=", uncertainty: {duty: 4 %, coverage: expanded-k2}"
    )
    a = _only(standard, "B1", "energy-imbalance").uncertainty
    b = _only(expanded, "B1", "energy-imbalance").uncertainty
    assert_close(a, 2 * 0.02 * 8.5e6, "kW", rtol=1e-12)
    assert_close(b, a, "kW", rtol=1e-12)


def test_design_basis_counts_only_what_is_declared(tmp_path):
    result = _heater(
        tmp_path,
        "{basis: design, temperature: 0.5 K, flow: 1 %, duty: 2 %}",
        step_extra=", uncertainty: {duty: 1 %}",
    )
    finding = _only(result, "B1", "energy-imbalance")
    assert [c.input for c in finding.contributors] == ["step B1 duty"]
    assert_close(finding.uncertainty, 2 * 0.01 * 8.5e6, "kW", rtol=1e-12)


def test_exact_stream_and_step_take_no_default(tmp_path):
    result = _heater(
        tmp_path,
        "{temperature: 0.5 K, flow: 1 %, duty: 2 %}",
        stream_extra=", uncertainty: exact",
        step_extra=", uncertainty: exact",
    )
    finding = _only(result, "B1", "energy-imbalance")
    assert finding.uncertainty == 0.0 and finding.contributors == ()
    assert finding.verdict == VIOLATED


def test_design_balance_without_declarations_has_no_verdict(tmp_path):
    result = audit_text(tmp_path, HEATER.format(duty="8.5 MW", stream_extra="", step_extra=""))
    finding = _only(result, "B1", "energy-imbalance")
    assert finding.verdict is None and finding.uncertainty is None
    assert finding.severity == "error"


# -- Monte Carlo -----------------------------------------------------------------------------------
VALVE = """
streams:
  A: {fluid: Water, T: 186.8 degC, P: 3.5 barg, flow: 1 kg/s}
  B: {fluid: Water, T: 175.0 degC, P: 1.0 barg, flow: 1 kg/s}
steps:
  - {id: V1, kind: valve, inlet: A, outlet: B}
"""


def test_monte_carlo_agrees_with_linear_propagation_on_a_steam_valve(tmp_path):
    # Superheated steam through a valve that does not close (B is 10 K too cold): the residual
    # ṁ (h_A − h_B) through CoolProp, with T ± 0.5 K, P ± 0.25 %, flow ± 1 %. M = 1000 normal
    # draws estimate the standard deviation with a relative standard error of 1/√(2·999) =
    # 2.2 %; the linear result must lie within three of them (the function is nearly linear over
    # ± 2u, so the non-linearity is far below that).
    header = MEASURED.format(uncertainty="{temperature: 0.5 K, pressure: 0.25 %, flow: 1 %}")
    result = audit.run(_write(tmp_path, header + VALVE), monte_carlo=1000)
    finding = _only(result, "V1", "valve-not-isenthalpic")
    sampling = 1.0 / math.sqrt(2.0 * 999)
    assert finding.monte_carlo_uncertainty == pytest.approx(finding.uncertainty, rel=3.0 * sampling)
    assert "1000 draws per step" in result.provenance["uncertainty, Monte Carlo"]
    again = audit.run(_write(tmp_path, header + VALVE), monte_carlo=1000)
    # a fixed seed: the same draws, the same number
    assert _only(again, "V1", "valve-not-isenthalpic").monte_carlo_uncertainty == (
        finding.monte_carlo_uncertainty
    )


def _write(tmp_path, text: str):
    import textwrap

    path = tmp_path / "balance.yaml"
    path.write_text(textwrap.dedent(text).lstrip("\n"), encoding="utf-8")
    return path


# -- verdicts --------------------------------------------------------------------------------------
def test_verdict_bands():
    # the interval [m − U, m + U] against the tolerance t and zero (module docstring)
    assert verdict(10.0, 2.0, 5.0) == VIOLATED  # 8 > 5
    assert verdict(10.0, 5.0, 5.0) == MARGINAL  # 5 ≤ 5, > 0
    assert verdict(10.0, 9.0, 5.0) == MARGINAL  # 1 > 0
    assert verdict(10.0, 10.0, 5.0) == CONSISTENT
    assert verdict(10.0, 0.0, 0.0) == VIOLATED


def test_verdict_switches_as_declared_uncertainty_grows_past_the_margin(tmp_path):
    # Only the duty is uncertain, so U = 2 x Q for a relative spread x: the verdict is violated
    # while x < (m − t)/(2Q), marginal up to x < m/(2Q), consistent beyond.
    probe = _heater(tmp_path, "{basis: design}", step_extra=", uncertainty: {duty: 0.01 %}")
    finding = _only(probe, "B1", "energy-imbalance")
    m, t, Q = finding.margin, finding.tolerance, 8.5e6
    low, high = (m - t) / (2 * Q), m / (2 * Q)
    expected = []
    for x, verdict_, severity in (
        (0.5 * low, VIOLATED, "error"),
        (0.5 * (low + high), MARGINAL, "warning"),
        (1.5 * high, CONSISTENT, "info"),
    ):
        result = _heater(
            tmp_path, "{basis: design}", step_extra=f", uncertainty: {{duty: {100 * x:.6f} %}}"
        )
        found = _only(result, "B1", "energy-imbalance")
        assert (found.verdict, found.severity) == (verdict_, severity), x
        assert_close(found.uncertainty, 2 * x * Q, "kW", rtol=1e-5)  # x printed to 6 places
        expected.append(result)
    violated, marginal, consistent = expected
    assert violated.fails() and not marginal.fails() and marginal.fails(marginal=True)
    assert not consistent.fails(marginal=True)
    assert "marginal: beyond the tolerance, but not by more than the uncertainty" in (
        _only(marginal, "B1", "energy-imbalance").message
    )


def test_fail_on_marginal_sets_the_exit_code(tmp_path):
    probe = _heater(tmp_path, "{basis: design}", step_extra=", uncertainty: {duty: 0.01 %}")
    finding = _only(probe, "B1", "energy-imbalance")
    x = (finding.margin - 0.5 * finding.tolerance) / (2 * 8.5e6)  # in the marginal band
    _heater(tmp_path, "{basis: design}", step_extra=f", uncertainty: {{duty: {100 * x:.6f} %}}")
    path = str(tmp_path / "balance.yaml")
    assert main(["check", path, "-q"]) == 0
    assert main(["check", path, "-q", "--fail-on-marginal"]) == 1


# -- the measured sample revision ----------------------------------------------------------------
def test_measured_sample_says_which_violation_is_certain_and_which_marginal(capsys):
    result = audit.run(SAMPLE / "quillon-bay-measured.yaml")
    verdicts = {(f.step, f.name): f.verdict for f in result.findings}
    assert verdicts == {
        ("EV1", "valve-not-isenthalpic"): VIOLATED,
        ("EV1", "negative-entropy-generation"): VIOLATED,
        ("R1", "energy-imbalance"): VIOLATED,
        ("C1", "energy-imbalance"): VIOLATED,
        ("C1", "input-below-minimum"): VIOLATED,
        ("T1", "energy-imbalance"): MARGINAL,
        # 380 W beyond the rounding of its written values and the property allowance (182 W),
        # well inside the declared uncertainty (6.3 kW): shown, as info
        ("AC1", "energy-imbalance"): CONSISTENT,
    }
    for step in ("EV1", "R1"):
        for f in result.findings_for(step):
            assert any("S20's pressure '1.893 bar' is gauge" in c for c in f.probable_causes)
    for step in ("C1", "T1"):
        assert all(not f.probable_causes for f in result.findings_for(step))
    marginal = _only(result, "T1", "energy-imbalance")
    assert marginal.severity == "warning"
    assert marginal.contributors[0].input == "stream S03 flow"  # the meter to check first
    data = to_dict(result)
    shown = {(f["step"], f["name"]): f for f in data["findings"]}
    assert shown["T1", "energy-imbalance"]["verdict"] == "marginal"
    assert shown["EV1", "valve-not-isenthalpic"]["coverage_factor"] == 2.0
    assert shown["EV1", "valve-not-isenthalpic"]["contributors"][0]["input"] == "stream S23 T"
    json.dumps(data)  # serialisable as it stands
    text = findings_summary(result)
    assert "verdict: marginal" in text and "verdict: violated" in text
    assert "probable cause: closes if stream S20's pressure '1.893 bar' is gauge" in text
    assert "check first: stream S03 flow" in text
    assert main(["check", str(SAMPLE / "quillon-bay-measured.yaml"), "-q"]) == 1


# -- declarations and their messages ------------------------------------------------------------
@pytest.mark.parametrize(
    ("text", "kind", "message"),
    [
        (
            "1 %",
            "temperature",
            r"a temperature uncertainty is absolute, such as '0\.5 K'; '1 %' is "
            r"relative",
        ),
        ("-1 %", "flow", r"an uncertainty is at least zero; got '-1 %'"),
        (
            "1 %",
            "quality",
            r"a quality uncertainty is a plain number such as 0\.01 \(an absolute "
            r"fraction\), not '1 %'",
        ),
        ("inf", "quality", r"an uncertainty is a finite number; got 'inf'"),
        (
            "0.1 K",
            "pressure",
            r"a pressure uncertainty is written like '0\.25 %' or '0\.02 bar': "
            r"'0\.1 K' is not a pressure",
        ),
        (
            "5 W",
            "flow",
            r"a flow uncertainty is written like '1 %' or '0\.05 kg/s': '5 W' is not a "
            r"flow",
        ),
    ],
)
def test_spread_messages(text, kind, message):
    with pytest.raises(InputError, match=message):
        parse_spread(text, kind)


def test_spreads_in_si():
    assert parse_spread("0.02 barg", "pressure").value == pytest.approx(2000.0)  # a difference
    assert parse_spread("1 degF", "temperature").value == pytest.approx(5 / 9)
    assert parse_spread("2 %", "power").relative and parse_spread("2 %", "power").value == 0.02
    assert parse_spread("36 kg/h", "flow").value == pytest.approx(0.01)
    assert parse_spread("exact", "power").value == 0.0
    assert coverage_divisor("expanded-k2") == 2.0 and coverage_divisor("standard") == 1.0


@pytest.mark.parametrize(
    ("uncertainty", "step_extra", "stream_extra", "message"),
    [
        (
            "{coverage: expanded}",
            "",
            "",
            r"field 'balance\.uncertainty\.coverage': unknown coverage 'expanded'; write 'standard'",
        ),
        ("{temprature: 0.5 K}", "", "", r"unknown field 'temprature'; did you mean 'temperature'\?"),
        (
            "{basis: design}",
            ", uncertainty: {dutty: 1 %}",
            "",
            r"step B1.*the uncertainty names 'dutty', which is not a claim this step gives; its claims "
            r"are: duty",
        ),
        (
            "{basis: design}",
            ", uncertainty: {duty: 1 K}",
            "",
            r"a power uncertainty is written like '0\.5 %' or '5 kW': '1 K' is not a power",
        ),
        (
            "{basis: design}",
            "",
            ", uncertainty: {flow: 0.1 kmol/h}",
            r"stream A: the flow uncertainty '0\.1 kmol/h' is a molar flow, but the flow of stream A is "
            r"a mass flow; give it in % or in the same kind of flow",
        ),
    ],
)
def test_declaration_errors_name_the_place(tmp_path, uncertainty, step_extra, stream_extra, message):
    with pytest.raises(InputError, match=message):
        _heater(tmp_path, uncertainty, stream_extra=stream_extra, step_extra=step_extra)


def test_measured_without_defaults_is_an_error(tmp_path):
    body = HEATER.format(duty="8.5 MW", stream_extra=", uncertainty: measured", step_extra="")
    with pytest.raises(
        InputError,
        match=r"balance\.yaml:\d+:\d+: stream A: says 'measured', but "
        r"the balance declares no default uncertainties under 'balance: "
        r"uncertainty:'",
    ):
        audit_text(tmp_path, body)


def test_monte_carlo_option_needs_a_number_of_draws(capsys):
    with pytest.raises(SystemExit):
        main(["check", str(SAMPLE / "quillon-bay-measured.yaml"), "--monte-carlo", "-5"])
    assert "'-5' is not a number of draws (a whole number of at least 2)" in capsys.readouterr().err
