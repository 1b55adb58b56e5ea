"""Synthetic, physically consistent balances for the benchmarks.

A balance of N streams is made of many small loops and trains with varied states:

* steam cycles (Water): feed pump, boiler (heater), turbine, condenser (cooler), 4 streams; one
  cycle in four condenses against cooling water in a two-stream heat exchanger instead (6 streams);
* gas compression trains (Nitrogen, Air, CarbonDioxide, Hydrogen, Methane): compressor,
  intercooler, compressor, aftercooler, 5 streams with normal volumetric flows;
* vapour-compression refrigeration loops (Ammonia, R134a, R290, R32): evaporator (heater),
  compressor, condenser (cooler), expansion valve, 4 streams;
* steam letdown chains (one or two throttle valves, 2 or 3 streams) fill the last few streams so
  the balance has exactly N.

Every claim (shaft power, duty, isentropic efficiency, heat-exchanger duty and cooling-water flow)
is computed with CoolProp (HEOS) from the states as they are WRITTEN: each value is formatted with
realistic digits, read back with :func:`audit.units.to_si` exactly as the audit reads it, and the
state re-evaluated from it, so the balance audits clean within the default tolerances (the claims
are rounded to six or seven significant digits, far inside the 1 % energy tolerance).

Synthetic data for timing only: not a design, and no safety or code-compliance statement.

Usage::

    python benchmarks/generate.py --streams 10000 --seed 1 -o /tmp/balance-10000.yaml
"""

from __future__ import annotations

import argparse
import random
import sys
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import CoolProp.CoolProp as CP

from audit import units

SITE_PRESSURE = "1.01325 bar"
SITE_PRESSURE_PA = 101_325.0

GASES = ("Nitrogen", "Air", "CarbonDioxide", "Hydrogen", "Methane")
REFRIGERANTS = ("Ammonia", "R134a", "R290", "R32")


class Retry(Exception):
    """The random draw gave a loop that would not be clean (e.g. a wet exhaust): draw again."""


@dataclass(frozen=True)
class Point:
    """A state as the audit will see it: T [K], P [Pa], h [J/kg], s [J/(kg K)], quality [-]
    (None outside the two-phase region), mass flow [kg/s]."""

    T: float
    P: float
    h: float
    s: float
    quality: float | None
    m: float = 0.0


class Fluids:
    """One CoolProp HEOS state per fluid; flashes as plain functions returning :class:`Point`."""

    def __init__(self) -> None:
        self._states: dict[str, CP.AbstractState] = {}

    def _state(self, fluid: str) -> CP.AbstractState:
        if fluid not in self._states:
            self._states[fluid] = CP.AbstractState("HEOS", fluid)
        return self._states[fluid]

    def _read(self, state: CP.AbstractState) -> Point:
        if not state.Tmin() + 1.0 < state.T() < state.Tmax() - 1.0:
            raise Retry(f"{state.T()} K is outside the range of the equation of state")
        quality = state.Q()
        return Point(
            state.T(),
            state.p(),
            state.hmass(),
            state.smass(),
            quality if 0.0 <= quality <= 1.0 else None,
        )

    def tp(self, fluid: str, T: float, P: float) -> Point:
        """A (P, T) state with the phase imposed from T_sat(P) below the critical point, as the
        audit's engine does (a free (P, T) flash can return a metastable phase)."""
        state = self._state(fluid)
        phase = CP.iphase_not_imposed
        if P < state.p_critical() and T < state.T_critical():
            state.update(CP.PQ_INPUTS, P, 0.0)
            if abs(T - state.T()) < 1.0:
                raise Retry(f"{fluid} at {T} K, {P} Pa is within 1 K of saturation")
            phase = CP.iphase_liquid if T < state.T() else CP.iphase_gas
        state.specify_phase(phase)
        try:
            state.update(CP.PT_INPUTS, P, T)
        finally:
            state.unspecify_phase()
        return self._read(state)

    def pq(self, fluid: str, P: float, quality: float) -> Point:
        state = self._state(fluid)
        state.update(CP.PQ_INPUTS, P, quality)
        return self._read(state)

    def ph(self, fluid: str, P: float, h: float) -> Point:
        state = self._state(fluid)
        state.update(CP.HmassP_INPUTS, h, P)
        return self._read(state)

    def ps(self, fluid: str, P: float, s: float) -> Point:
        state = self._state(fluid)
        state.update(CP.PSmass_INPUTS, P, s)
        return self._read(state)

    def t_sat(self, fluid: str, P: float) -> float:
        state = self._state(fluid)
        state.update(CP.PQ_INPUTS, P, 0.0)
        return state.T()

    def p_sat(self, fluid: str, T: float) -> float:
        state = self._state(fluid)
        state.update(CP.QT_INPUTS, 0.0, T)
        return state.p()

    def normal_density(self, fluid: str, reference: tuple[float, float]) -> float:
        state = self._state(fluid)
        state.update(CP.PT_INPUTS, reference[1], reference[0])
        return state.rhomass()


# -- writing values the way the audit reads them ------------------------------------------------
def _num(value: float, sig: int) -> str:
    text = f"{value:.{sig}g}"
    return text if "e" not in text else f"{value:.{max(sig - 3, 1)}f}"


def temperature(T: float, decimals: int = 2) -> tuple[str, float]:
    """A temperature [K] written in degC; returns (text, the value the audit reads [K])."""
    text = f"{T - 273.15:.{decimals}f} degC"
    return text, units.to_si(text, "temperature")


def pressure(P: float, unit: str = "bar", sig: int = 5) -> tuple[str, float]:
    """A pressure [Pa] written in ``unit`` (bar, barg or kPa); returns (text, value read [Pa])."""
    if unit == "barg":
        text = f"{(P - SITE_PRESSURE_PA) / 1e5:.3f} barg"
    elif unit == "kPa":
        text = f"{_num(P / 1e3, sig)} kPa"
    else:
        text = f"{_num(P / 1e5, sig)} bar"
    return text, units.to_si(text, "pressure", site_pressure=SITE_PRESSURE_PA)


def power(W: float, sig: int = 7) -> str:
    """A power [W] written in kW or MW."""
    return f"{_num(W / 1e6, sig)} MW" if abs(W) >= 1e6 else f"{_num(W / 1e3, sig)} kW"


@dataclass
class Builder:
    """Collects the stream and step lines of a balance and evaluates every written state."""

    fluids: Fluids = field(default_factory=Fluids)
    streams: list[str] = field(default_factory=list)
    steps: list[str] = field(default_factory=list)
    kinds: Counter = field(default_factory=Counter)

    def stream(
        self,
        sid: str,
        fluid: str,
        flow: str,
        *,
        T: float | None = None,
        P: float | None = None,
        quality: float | None = None,
        h: float | None = None,
        p_unit: str = "bar",
        phase: str | None = None,
    ) -> tuple[str, Point]:
        """Write a stream from (T, P), (P, quality) or (P, h); return its line and its state as
        the audit will evaluate it."""
        p_text, P_read = pressure(P, p_unit)  # type: ignore[arg-type]
        if T is not None:
            t_text, T_read = temperature(T)
            point = self.fluids.tp(fluid, T_read, P_read)
            pair = f"T: {t_text}, P: {p_text}"
        elif quality is not None:
            q = round(quality, 5)
            point = self.fluids.pq(fluid, P_read, q)
            pair = f"P: {p_text}, quality: {q}"
        else:
            h_text = f"{h / 1e3:.4f} kJ/kg"  # type: ignore[operator]
            point = self.fluids.ph(fluid, P_read, units.to_si(h_text, "specific_enthalpy"))
            pair = f"P: {p_text}, h: {h_text}"
        read = units.to_flow(flow)
        if read.basis == "mass":
            m = read.value
        elif read.basis == "normal_volume":
            m = read.value * self.fluids.normal_density(fluid, read.reference)  # type: ignore
        else:  # pragma: no cover - the generator writes mass and normal flows only
            raise ValueError(read.basis)
        extra = f", phase: {phase}" if phase else ""
        line = f"  {sid}: {{fluid: {fluid}, {pair}, flow: {flow}{extra}}}"
        return line, Point(point.T, point.P, point.h, point.s, point.quality, m)

    def add(self, kind: str, streams: list[str], steps: list[str]) -> None:
        self.streams.extend(streams)
        self.steps.extend(steps)
        self.kinds[kind] += 1


# -- the loops ------------------------------------------------------------------------------------
def steam_cycle(b: Builder, rng: random.Random, tag: str, exchanger: bool) -> None:
    """Feed pump, boiler, turbine and condenser (a cooler, or a heat exchanger against cooling
    water)."""
    f = b.fluids
    P_cond = rng.uniform(7e3, 30e3)
    P_exhaust = P_cond * 1.02
    P_boiler = rng.uniform(20e5, 80e5)
    flow = f"{rng.uniform(2.0, 60.0):.2f} t/h"
    T1 = f.t_sat("Water", pressure(P_cond, "kPa")[1]) - rng.uniform(3.0, 8.0)
    l1, s1 = b.stream(f"{tag}a", "Water", flow, T=T1, P=P_cond, p_unit="kPa", phase="liquid")
    P2 = P_boiler * 1.03
    eta_pump = rng.uniform(0.65, 0.85)
    P2_read = pressure(P2, "barg")[1]
    h2 = s1.h + (f.ps("Water", P2_read, s1.s).h - s1.h) / eta_pump
    l2, s2 = b.stream(f"{tag}b", "Water", flow, T=f.ph("Water", P2_read, h2).T, P=P2, p_unit="barg")
    l3, s3 = b.stream(
        f"{tag}c",
        "Water",
        flow,
        T=rng.uniform(420.0, 540.0) + 273.15,
        P=P_boiler,
        p_unit="barg",
        phase="vapour",
    )
    eta_turbine = rng.uniform(0.75, 0.9)
    P4_read = pressure(P_exhaust, "kPa")[1]
    h4 = s3.h - eta_turbine * (s3.h - f.ps("Water", P4_read, s3.s).h)
    exhaust = f.ph("Water", P4_read, h4)
    if exhaust.quality is not None:
        if exhaust.quality < 0.9:
            raise Retry("exhaust wetter than 10 %")
        l4, s4 = b.stream(f"{tag}d", "Water", flow, P=P_exhaust, quality=exhaust.quality, p_unit="kPa")
    else:
        l4, s4 = b.stream(f"{tag}d", "Water", flow, T=exhaust.T, P=P_exhaust, p_unit="kPa")
    m = s1.m
    h2s = f.ps("Water", s2.P, s1.s).h
    h4s = f.ps("Water", s4.P, s3.s).h
    steps = [
        f"  - {{id: {tag}.P, kind: pump, inlet: {tag}a, outlet: {tag}b, "
        f"shaft_power: {power(m * (s2.h - s1.h))}, "
        f"isentropic_efficiency: {(h2s - s1.h) / (s2.h - s1.h):.3f}}}",
        f"  - {{id: {tag}.B, kind: heater, inlet: {tag}b, outlet: {tag}c, "
        f"duty: {power(m * (s3.h - s2.h))}, "
        f"source_temperature: {rng.uniform(1000.0, 1300.0):.0f} degC}}",
        f"  - {{id: {tag}.T, kind: turbine, inlet: {tag}c, outlet: {tag}d, "
        f"shaft_power: {power(m * (s3.h - s4.h))}, "
        f"isentropic_efficiency: {(s3.h - s4.h) / (s3.h - h4s):.3f}}}",
    ]
    lines = [l1, l2, l3, l4]
    duty = m * (s4.h - s1.h)
    if not exchanger:
        sink = temperature(s1.T - rng.uniform(8.0, 15.0), 1)[0]
        steps.append(
            f"  - {{id: {tag}.C, kind: cooler, inlet: {tag}d, outlet: {tag}a, "
            f"duty: {power(duty)}, sink_temperature: {sink}}}"
        )
        b.add("steam cycle", lines, steps)
        return
    T_in = rng.uniform(291.0, 297.0)
    T_out = min(T_in + rng.uniform(6.0, 10.0), s1.T - 2.0)
    if T_out - T_in < 3.0:
        raise Retry("cooling water range too small")
    P_cw = rng.uniform(3e5, 4e5)
    w_in = f.tp("Water", temperature(T_in)[1], pressure(P_cw)[1])
    w_out = f.tp("Water", temperature(T_out)[1], pressure(P_cw - 0.3e5)[1])
    cw_flow = f"{_num(duty / (w_out.h - w_in.h) * 3.6, 7)} t/h"
    l5, _ = b.stream(f"{tag}e", "Water", cw_flow, T=T_in, P=P_cw)
    l6, _ = b.stream(f"{tag}f", "Water", cw_flow, T=T_out, P=P_cw - 0.3e5)
    steps.append(
        f"  - {{id: {tag}.C, kind: heat_exchanger, hot: {{inlet: {tag}d, outlet: {tag}a}}, "
        f"cold: {{inlet: {tag}e, outlet: {tag}f}}, duty: {power(duty)}}}"
    )
    b.add("steam cycle with exchanger", lines + [l5, l6], steps)


def gas_train(b: Builder, rng: random.Random, tag: str) -> None:
    """Two compressor stages with an intercooler and an aftercooler."""
    f = b.fluids
    fluid = rng.choice(GASES)
    P0 = rng.uniform(1e5, 2e5) if fluid == "CarbonDioxide" else rng.uniform(1e5, 5e5)
    flow = f"{rng.uniform(1000.0, 20000.0):.1f} Nm3/h"
    lines, points = [], []
    line, point = b.stream(f"{tag}a", fluid, flow, T=rng.uniform(288.0, 308.0), P=P0)
    lines.append(line)
    points.append(point)
    letters = "bcde"
    for stage in range(2):
        inlet = points[-1]
        P_out = inlet.P * rng.uniform(2.0, 3.5)
        P_read = pressure(P_out)[1]
        eta = rng.uniform(0.72, 0.85)
        h_out = inlet.h + (f.ps(fluid, P_read, inlet.s).h - inlet.h) / eta
        line, point = b.stream(
            f"{tag}{letters[2 * stage]}", fluid, flow, T=f.ph(fluid, P_read, h_out).T, P=P_out
        )
        lines.append(line)
        points.append(point)
        line, point = b.stream(
            f"{tag}{letters[2 * stage + 1]}", fluid, flow, T=rng.uniform(303.0, 318.0), P=point.P * 0.985
        )
        lines.append(line)
        points.append(point)
    steps = []
    names = ["a", *letters]
    for stage in range(2):
        i, o, c = points[2 * stage], points[2 * stage + 1], points[2 * stage + 2]
        a, b_, c_ = names[2 * stage], names[2 * stage + 1], names[2 * stage + 2]
        h_s = f.ps(fluid, o.P, i.s).h
        sink = temperature(c.T - rng.uniform(5.0, 12.0), 1)[0]
        steps += [
            f"  - {{id: {tag}.C{stage + 1}, kind: compressor, inlet: {tag}{a}, "
            f"outlet: {tag}{b_}, shaft_power: {power(i.m * (o.h - i.h))}, "
            f"isentropic_efficiency: {(h_s - i.h) / (o.h - i.h):.3f}}}",
            f"  - {{id: {tag}.K{stage + 1}, kind: cooler, inlet: {tag}{b_}, outlet: {tag}{c_}, "
            f"duty: {power(o.m * (o.h - c.h))}, sink_temperature: {sink}}}",
        ]
    b.add(f"gas train ({fluid})", lines, steps)


def refrigeration_loop(b: Builder, rng: random.Random, tag: str) -> None:
    """Evaporator, compressor, condenser and expansion valve of a vapour-compression loop."""
    f = b.fluids
    fluid = rng.choice(REFRIGERANTS)
    flow = f"{rng.uniform(0.2, 5.0):.4f} kg/s"
    P_evap = pressure(f.p_sat(fluid, rng.uniform(243.0, 273.0)))[1]
    P_cond = pressure(f.p_sat(fluid, rng.uniform(303.0, 318.0)))[1]
    P_liquid = P_cond * 0.99
    T_evap, T_cond = f.t_sat(fluid, P_evap), f.t_sat(fluid, pressure(P_liquid)[1])
    suction = T_evap + rng.uniform(4.0, 10.0)
    lb, sb = b.stream(f"{tag}b", fluid, flow, T=suction, P=P_evap, phase="vapour")
    eta = rng.uniform(0.6, 0.8)
    h_c = sb.h + (f.ps(fluid, P_cond, sb.s).h - sb.h) / eta
    lc, sc = b.stream(f"{tag}c", fluid, flow, T=f.ph(fluid, P_cond, h_c).T, P=P_cond)
    ld, sd = b.stream(
        f"{tag}d", fluid, flow, T=T_cond - rng.uniform(3.0, 6.0), P=P_liquid, phase="liquid"
    )
    throttled = f.ph(fluid, P_evap, sd.h)
    if throttled.quality is None:
        raise Retry("throttled state not two-phase")
    la, sa = b.stream(f"{tag}a", fluid, flow, P=P_evap, quality=throttled.quality)
    m = sa.m
    h_s = f.ps(fluid, sc.P, sb.s).h
    source = temperature(sb.T + rng.uniform(3.0, 10.0), 1)[0]
    sink = temperature(sd.T - rng.uniform(5.0, 10.0), 1)[0]
    steps = [
        f"  - {{id: {tag}.E, kind: heater, inlet: {tag}a, outlet: {tag}b, "
        f"duty: {power(m * (sb.h - sa.h))}, source_temperature: {source}}}",
        f"  - {{id: {tag}.C, kind: compressor, inlet: {tag}b, outlet: {tag}c, "
        f"shaft_power: {power(m * (sc.h - sb.h))}, "
        f"isentropic_efficiency: {(h_s - sb.h) / (sc.h - sb.h):.3f}}}",
        f"  - {{id: {tag}.K, kind: cooler, inlet: {tag}c, outlet: {tag}d, "
        f"duty: {power(m * (sc.h - sd.h))}, sink_temperature: {sink}}}",
        f"  - {{id: {tag}.V, kind: valve, inlet: {tag}d, outlet: {tag}a}}",
    ]
    b.add(f"refrigeration loop ({fluid})", [la, lb, lc, ld], steps)


def letdown(b: Builder, rng: random.Random, tag: str, valves: int) -> None:
    """Superheated steam throttled through one or two valves (boundary streams at both ends)."""
    flow = f"{rng.uniform(1.0, 20.0):.2f} t/h"
    P = rng.uniform(10e5, 40e5)
    line, point = b.stream(f"{tag}a", "Water", flow, T=rng.uniform(523.0, 673.0), P=P, p_unit="barg")
    lines, steps = [line], []
    for k in range(valves):
        P = P * rng.uniform(0.3, 0.7)
        line, point = b.stream(f"{tag}{'bc'[k]}", "Water", flow, P=P, h=point.h, p_unit="barg")
        lines.append(line)
        steps.append(
            f"  - {{id: {tag}.V{k + 1}, kind: valve, inlet: {tag}{'abc'[k]}, outlet: {tag}{'bc'[k]}}}"
        )
    b.add(f"letdown ({valves} valve{'s' if valves > 1 else ''})", lines, steps)


LOOPS: list[tuple[float, int, Callable[[Builder, random.Random, str], None]]] = [
    # (share of loops, streams, builder)
    (0.30, 4, lambda b, r, t: steam_cycle(b, r, t, exchanger=False)),
    (0.10, 6, lambda b, r, t: steam_cycle(b, r, t, exchanger=True)),
    (0.30, 5, gas_train),
    (0.30, 4, refrigeration_loop),
]


def build(streams: int, seed: int = 0) -> Builder:
    """Loops and trains totalling exactly ``streams`` streams (at least 2)."""
    if streams < 2:
        raise ValueError("a generated balance has at least 2 streams")
    rng = random.Random(seed)
    b = Builder()
    weights = [share for share, _, _ in LOOPS]
    index = 0

    def attempt(make: Callable[[str], None]) -> None:
        nonlocal index
        for _ in range(100):
            saved = (len(b.streams), len(b.steps))
            try:
                make(f"L{index}")
            except Retry:
                del b.streams[saved[0] :], b.steps[saved[1] :]
                continue
            index += 1
            return
        raise RuntimeError("could not draw a clean loop in 100 tries")  # pragma: no cover

    while streams - len(b.streams) >= 8:
        _, _, make = rng.choices(LOOPS, weights)[0]
        attempt(lambda tag, make=make: make(b, rng, tag))
    left = streams - len(b.streams)
    while left:
        valves = 2 if left % 2 else 1  # 3 = 3, 2 = 2, 5 = 3 + 2, 7 = 3 + 2 + 2, ...
        attempt(lambda tag, valves=valves: letdown(b, rng, tag, valves))
        left -= valves + 1
    return b


def balance_text(builder: Builder, seed: int) -> str:
    n = len(builder.streams)
    header = [
        "# Synthetic balance for plant-audit's benchmarks (benchmarks/generate.py); timing data,",
        "# not a design. The audit checks thermodynamic consistency only; it is not a safety or",
        "# code-compliance review.",
        "balance:",
        f"  name: synthetic benchmark balance, {n} streams",
        f"  revision: seed {seed}",
        f"  site_pressure: {SITE_PRESSURE}",
        "  dead_state: {T: 25 degC, P: 101.325 kPa}",
        "streams:",
    ]
    return "\n".join(header + builder.streams + ["steps:"] + builder.steps) + "\n"


def generate(streams: int, seed: int = 0) -> str:
    """The YAML text of a clean synthetic balance of exactly ``streams`` streams."""
    return balance_text(build(streams, seed), seed)


def write(path: str | Path, streams: int, seed: int = 0) -> Counter:
    """Write a generated balance to ``path``; return the count of loops of each kind."""
    builder = build(streams, seed)
    Path(path).write_text(balance_text(builder, seed), encoding="utf-8")
    return builder.kinds


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--streams", type=int, default=1000, help="number of streams")
    parser.add_argument("--seed", type=int, default=1, help="random seed")
    parser.add_argument("-o", "--output", required=True, help="balance file to write")
    args = parser.parse_args(argv)
    kinds = write(args.output, args.streams, args.seed)
    for kind, count in sorted(kinds.items()):
        print(f"{count:8d}  {kind}")
    print(f"wrote {args.output} ({args.streams} streams)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
