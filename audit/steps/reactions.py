"""Reactions written by stoichiometry: parsing, element balances, extents, reaction properties and
fuel heating values, all on the formation basis of :mod:`audit.formation`.

A reaction is written as a balance file would: ``"CH4 + 2 O2 -> CO2 + 2 H2O"``, coefficients as
integers, decimals or fractions (``"H2 + 1/2 O2 -> H2O(l)"``), each species by its formula (or
CoolProp name) with an optional phase, ``(g)`` (the default: ideal gas) or ``(l)`` (the real liquid).
The reaction must balance every element.

Reaction properties at (T, P) take every reactant and product pure at T and P in its written phase
[1, ch. 13]: ΔH_rxn = Σ ν_i h_i(T, P), ΔS_rxn = Σ ν_i s_i(T, P), ΔG_rxn = ΔH_rxn − T ΔS_rxn [J/mol of
extent], ν_i > 0 for products. Gases are ideal, so at 298.15 K and 1 bar these are the standard
reaction properties from ΔfH° and S°.

Heating values are the enthalpy of complete combustion at 25 °C and 1 bar [1, §13.2.3], with the
carbon burnt to CO2, the hydrogen to H2O (liquid for the higher, vapour for the lower heating value)
and nitrogen released as N2; CO2, H2O, N2, O2 and Ar in a fuel are inert.

The Faraday constant F = N_A e [2] (exact since the 2019 revision of the SI) is
:data:`audit.constants.FARADAY`.

References
----------
.. [1] M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, *Fundamentals of Engineering
   Thermodynamics*, 8th ed., Wiley, 2014, ch. 13 (reacting mixtures and combustion).
.. [2] E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values of the
   fundamental physical constants: 2018", Rev. Mod. Phys. 93 (2021) 025010.
"""

from __future__ import annotations

import math
import re
from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction

from audit.constants import (
    FARADAY,  # noqa: F401  (read here by older code and tests)
    P_STANDARD,
    T_STANDARD,
)
from audit.errors import StateError
from audit.formation import ATOMIC_WEIGHTS, SPECIES, lookup, species
from audit.properties.engine import PropertyEngine
from audit.results import StreamResult
from audit.wording import to_bar, to_celsius

_ARROWS = ("->", "→", "=>")
_TERM = re.compile(
    r"^\s*(?:(\d+(?:\.\d+)?(?:/\d+)?|\.\d+|½)\s*)?([A-Za-z][A-Za-z0-9]*)\s*(?:\((g|l)\))?\s*$",
    re.ASCII,
)
MAX_COEFFICIENT = 1000.0
"""Largest stoichiometric coefficient read (common practice: the combustion of the heaviest fuels
in a balance needs a few tens of O2 per molecule)."""
_INERT_IN_FUEL = {"CO2", "H2O", "N2", "O2", "Ar"}


@dataclass(frozen=True)
class Term:
    """One species of a reaction: its coefficient (positive), formula and phase (``g``/``l``)."""

    coefficient: float
    formula: str
    phase: str

    @property
    def label(self) -> str:
        return self.formula + ("(l)" if self.phase == "l" else "")


@dataclass(frozen=True)
class Reaction:
    """A reaction as written: reactants → products."""

    equation: str
    reactants: tuple[Term, ...]
    products: tuple[Term, ...]

    def signed_terms(self) -> list[tuple[float, Term]]:
        """(ν, term) with ν < 0 for reactants and ν > 0 for products."""
        return [(-t.coefficient, t) for t in self.reactants] + [
            (t.coefficient, t) for t in self.products
        ]

    def nu(self) -> dict[str, float]:
        """Net stoichiometric coefficient per formula [-] (products positive)."""
        net: dict[str, float] = defaultdict(float)
        for nu, term in self.signed_terms():
            net[term.formula] += nu
        return dict(net)


def parse_reaction(text: str) -> Reaction:
    """Read ``"CH4 + 2 O2 -> CO2 + 2 H2O"``; ValueError (a message for the user) when it cannot be
    read, names a species without formation data, or does not balance its elements."""
    if not isinstance(text, str) or not text.strip():
        raise ValueError("a reaction is written like 'CH4 + 2 O2 -> CO2 + 2 H2O'")
    arrows = [a for a in _ARROWS if a in text]
    parts = text.split(arrows[0]) if len(arrows) == 1 else []
    if len(parts) != 2:
        raise ValueError(
            f"the reaction '{text}' needs one arrow '->' between reactants and "
            "products, like 'CH4 + 2 O2 -> CO2 + 2 H2O'"
        )
    sides = [_side(part, text) for part in parts]
    reaction = Reaction(text.strip(), sides[0], sides[1])
    balance = element_change(reaction.nu())
    wrong = {e: v for e, v in balance.items() if abs(v) > 1e-9}
    if wrong:
        left = _elements((t.coefficient, t.formula) for t in reaction.reactants)
        right = _elements((t.coefficient, t.formula) for t in reaction.products)
        detail = "; ".join(
            f"{e} {left.get(e, 0):g} on the left, {right.get(e, 0):g} on the right"
            for e in sorted(wrong)
        )
        raise ValueError(f"the reaction '{text}' does not balance: {detail}")
    return reaction


def _side(part: str, text: str) -> tuple[Term, ...]:
    terms = []
    for piece in part.split("+"):
        match = _TERM.match(piece)
        if not match:
            raise ValueError(
                f"cannot read '{piece.strip()}' in the reaction '{text}'; write a "
                "coefficient and a formula, like '2 H2O' or '1/2 O2(g)'"
            )
        number, name, phase = match.groups()
        coefficient = _coefficient(number, name, text)
        data = lookup(name)
        if data is None:
            known = ", ".join(sorted(s.formula for s in SPECIES.values()))
            raise ValueError(
                f"no formation data for '{name}' in the reaction '{text}'; the "
                f"species known are {known} (DEVELOPERS.md says how to add one)"
            )
        terms.append(Term(coefficient, data.formula, phase or "g"))
    return tuple(terms)


def _coefficient(number: str | None, name: str, text: str) -> float:
    """The coefficient written before ``name``: positive, finite and at most
    :data:`MAX_COEFFICIENT`."""
    if number is None:
        return 1.0
    if number == "½":
        return 0.5
    try:
        coefficient = float(Fraction(number)) if len(number) <= 20 else math.inf
    except (ZeroDivisionError, OverflowError):
        coefficient = math.inf
    if coefficient <= 0.0:
        raise ValueError(f"the coefficient of {name} in '{text}' must be positive")
    if not coefficient <= MAX_COEFFICIENT:
        shown = number if len(number) <= 20 else f"{number[:20]}... ({len(number)} characters)"
        raise ValueError(
            f"the coefficient '{shown}' of {name} in '{text[:200]}' is not a number from 0 to "
            f"{MAX_COEFFICIENT:g}"
        )
    return coefficient


def _elements(amounts: Iterable[tuple[float, str]]) -> dict[str, float]:
    """Atoms per element [mol] of (amount [mol], formula) pairs."""
    total: dict[str, float] = defaultdict(float)
    for amount, formula in amounts:
        data = lookup(formula)
        assert data is not None
        for element, count in data.elements.items():
            total[element] += amount * count
    return dict(total)


def element_change(nu: Mapping[str, float]) -> dict[str, float]:
    """Σ ν_i a_ie per element e for species amounts ν_i by formula [mol]."""
    return _elements((v, f) for f, v in nu.items())


# -- streams ------------------------------------------------------------------------------------------
def species_flows(stream: StreamResult) -> dict[str, float]:
    """Molar flow of each species of a stream [mol/s] by formula; :class:`StateError` when the
    stream's fluid has no formation data (it cannot take part in a reaction)."""
    if stream.composition is not None:
        return {formula: x * stream.molar_flow for formula, x in stream.composition.items()}
    data = species(stream.fluid)
    if data is None:
        raise StateError(
            f"stream {stream.id} ({stream.fluid}) has no formation data, so it cannot take part "
            "in a reacting step; every stream of such a step must be a species of "
            "audit/formation.py or a mixture of them"
        )
    return {data.formula: stream.molar_flow}


def total_species(streams: Iterable[StreamResult]) -> dict[str, float]:
    """Σ of :func:`species_flows` over streams [mol/s]."""
    total: dict[str, float] = defaultdict(float)
    for stream in streams:
        for formula, n in species_flows(stream).items():
            total[formula] += n
    return dict(total)


def element_flows(flows: Mapping[str, float]) -> dict[str, float]:
    """Atom flow per element [mol/s] from species flows [mol/s]."""
    return _elements((n, f) for f, n in flows.items())


def element_mass(element: str, moles: float) -> float:
    """Mass [kg] of ``moles`` [mol] of atoms of ``element`` (IUPAC/CIAAW 2021 weights)."""
    return moles * ATOMIC_WEIGHTS[element]


# -- extents --------------------------------------------------------------------------------------------
def fit_extents(
    reactions: Sequence[Reaction], change: Mapping[str, float], claimed: Sequence[float | None]
) -> tuple[list[float], dict[str, float]]:
    """Extents ξ_k [mol/s] of the reactions and the species change they leave unexplained.

    ``change`` is outlet minus inlet flow per species [mol/s]. Claimed extents are taken as given;
    the others are the least-squares solution of Σ_k ν_ik ξ_k = Δn_i over all species. Returns the
    extents and the residual Δn_i − Σ_k ν_ik ξ_k per species [mol/s].

    One free extent (a step's usual single reaction) is the orthogonal projection
    ξ = Σ_i ν_i b_i / Σ_i ν_i² of the unexplained change b on its column ν [1, §5.3], summed
    exactly (``math.fsum``); several are solved by ``numpy.linalg.lstsq`` (SVD, the minimum-norm
    solution when the reactions are dependent), loaded only then.

    References
    ----------
    .. [1] G. H. Golub, C. F. Van Loan, *Matrix Computations*, 4th ed., Johns Hopkins University
       Press, 2013, §5.3 (the full-rank least-squares problem).
    """
    formulas = sorted(set(change) | {f for r in reactions for f in r.nu()})
    nus = [r.nu() for r in reactions]
    nu = [[n.get(f, 0.0) for n in nus] for f in formulas]
    target = [change.get(f, 0.0) for f in formulas]
    extents = [0.0 if c is None else float(c) for c in claimed]
    free = [k for k, c in enumerate(claimed) if c is None]
    if len(free) == 1:
        (k,) = free
        fixed = [t - _dot(row, extents) for t, row in zip(target, nu, strict=True)]
        norm = math.fsum(row[k] * row[k] for row in nu)
        extents[k] = (
            math.fsum(row[k] * b for row, b in zip(nu, fixed, strict=True)) / norm if norm else 0.0
        )
    elif free:
        extents = _fitted(nu, target, extents, free)
    residual = [t - _dot(row, extents) for t, row in zip(target, nu, strict=True)]
    return extents, dict(zip(formulas, residual, strict=True))


def _dot(row: Sequence[float], extents: Sequence[float]) -> float:
    """Σ_k ν_k ξ_k [mol/s] of one species."""
    return sum(n * x for n, x in zip(row, extents, strict=True))


def _fitted(
    nu: list[list[float]], target: list[float], extents: list[float], free: list[int]
) -> list[float]:
    """The extents with the ``free`` ones fitted by least squares (several free: SVD)."""
    import numpy as np  # loaded only when needed: it costs a start-up

    matrix = np.array(nu)
    fixed = np.array(target) - matrix @ np.array(extents)
    solution, *_ = np.linalg.lstsq(matrix[:, free], fixed, rcond=None)
    out = list(extents)
    for k, value in zip(free, solution, strict=True):
        out[k] = float(value)
    return out


# -- reaction properties ------------------------------------------------------------------------
@dataclass(frozen=True)
class ReactionProperties:
    """ΔH_rxn [J/mol], ΔS_rxn [J/(mol K)], ΔG_rxn [J/mol] per mol of extent at T [K], P [Pa]."""

    T: float
    P: float
    dH: float
    dS: float
    dG: float
    pressures: Mapping[str, float] | None = None
    fugacity: Mapping[str, float] | None = None


def reaction_properties(
    engine: PropertyEngine, reaction: Reaction, T: float, P: float
) -> ReactionProperties:
    """Reaction properties with every species pure at T [K] and P [Pa] in its written phase
    (ideal gas, or the real liquid for ``(l)``), on the formation basis; see the module docstring.

    Raises :class:`StateError` where a species cannot be evaluated at (T, P).
    """
    dH = dS = 0.0
    for nu, term in reaction.signed_terms():
        try:
            h, s = engine.species_molar(term.formula, term.phase, T, P)
        except StateError as exc:
            raise StateError(
                f"the reaction '{reaction.equation}' at {to_celsius(T):.6g} °C and {to_bar(P):.6g} "
                f"bar: {exc.problem.message}"
            ) from None
        dH += nu * h
        dS += nu * s
    return ReactionProperties(T=T, P=P, dH=dH, dS=dS, dG=dH - T * dS)


def reaction_properties_at_states(
    engine: PropertyEngine,
    reaction: Reaction,
    T: float,
    pressures: Mapping[str, float],
    default_P: float,
) -> ReactionProperties:
    """Reaction properties at T [K] with every species at its own pressure [Pa] (``pressures`` by
    label, ``H2O(l)`` for the liquid; ``default_P`` for one not given): each gas a real gas at its
    own (partial) pressure, its fugacity from the reference equation of state, the liquid at its
    own pressure [1, ch. 14]. This is ΔG = ΔG°(T) + R T Σ ν_i ln(f_i / p°) for the gases plus the
    liquid's own g, the Nernst equation with fugacities.

    Raises :class:`StateError` where a species cannot be evaluated at its state.
    """
    dH = dS = 0.0
    used: dict[str, float] = {}
    phis: dict[str, float] = {}
    for nu, term in reaction.signed_terms():
        P = pressures.get(term.label, default_P)
        try:
            h, s, phi = engine.species_real_molar(term.formula, term.phase, T, P)
        except StateError as exc:
            raise StateError(
                f"the reaction '{reaction.equation}' with {term.label} at {to_celsius(T):.6g} °C "
                f"and {to_bar(P):.6g} bar: {exc.problem.message}"
            ) from None
        dH += nu * h
        dS += nu * s
        used[term.label], phis[term.label] = P, phi
    return ReactionProperties(
        T=T, P=default_P, dH=dH, dS=dS, dG=dH - T * dS, pressures=used, fugacity=phis
    )


# -- heating values ---------------------------------------------------------------------------
@dataclass(frozen=True)
class HeatingValues:
    """Heating values of a fuel: higher and lower [J/mol of fuel], its molar mass [kg/mol] and
    the oxygen its complete combustion needs [mol O2 per mol of fuel]."""

    higher: float
    lower: float
    molar_mass: float
    oxygen_needed: float

    def per_kg(self, which: str) -> float:
        """``"higher"`` or ``"lower"`` heating value per kg of fuel [J/kg]."""
        return getattr(self, which) / self.molar_mass


def heating_values(engine: PropertyEngine, fractions: Mapping[str, float]) -> HeatingValues:
    """Higher and lower heating values of a fuel of mole ``fractions`` [-] by formula, from
    formation data at 25 °C and 1 bar (:func:`reaction_properties` of its complete combustion
    with liquid or vaporous water); see the module docstring [1, §13.2.3]."""
    total = math.fsum(fractions.values())
    fuel = {f: x / total for f, x in fractions.items() if x > 0.0}
    burning = {f: x for f, x in fuel.items() if f not in _INERT_IN_FUEL}
    atoms = element_flows(burning)
    other = sorted(set(atoms) - {"C", "H", "N", "O"})
    if other:
        raise StateError(f"cannot burn a fuel containing {', '.join(other)}")
    C, H, N, O = (atoms.get(e, 0.0) for e in ("C", "H", "N", "O"))
    oxygen = C + H / 4.0 - O / 2.0
    T, P = T_STANDARD, P_STANDARD
    fuel_h = math.fsum(x * engine.species_molar(f, "g", T, P)[0] for f, x in burning.items())
    h_O2 = engine.species_molar("O2", "g", T, P)[0]
    h_CO2 = engine.species_molar("CO2", "g", T, P)[0] if C else 0.0
    h_N2 = engine.species_molar("N2", "g", T, P)[0] if N else 0.0
    values = []
    for phase in ("l", "g"):
        h_H2O = engine.species_molar("H2O", phase, T, P)[0] if H else 0.0
        products = C * h_CO2 + H / 2.0 * h_H2O + N / 2.0 * h_N2
        values.append(fuel_h + oxygen * h_O2 - products)
    M = math.fsum(x * engine.species_molar_mass(f) for f, x in fuel.items())
    return HeatingValues(higher=values[0], lower=values[1], molar_mass=M, oxygen_needed=oxygen)
