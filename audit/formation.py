"""Published formation data: the two constants per species that put a fluid on the formation basis.

On the formation basis (see ``properties.py``) a species at 298.15 K and 1 bar in its ideal-gas state
has h equal to its standard enthalpy of formation ΔfH° and s equal to its third-law standard entropy
S°. For water the constants are those of the ideal gas, H2O(g); the liquid's values (ΔfH° = −285.83
kJ/mol, S° = 69.95 J/(mol K), CODATA 1989) then follow from the equation of state, and the tests check
that they do.

Each entry names its source. CODATA Key Values are used where CODATA has the species, NIST-JANAF
otherwise, never a mixture of the two for one species.

References
----------
.. [1] J. D. Cox, D. D. Wagman, V. A. Medvedev, *CODATA Key Values for Thermodynamics*, Hemisphere,
   New York, 1989.
.. [2] M. W. Chase, Jr., *NIST-JANAF Thermochemical Tables*, 4th ed., J. Phys. Chem. Ref. Data,
   Monograph 9, 1998.

To add a species: append a :class:`Species` with its CoolProp fluid name, its elements, ΔfH° [J/mol]
and S° [J/(mol K)] of the ideal gas at 298.15 K and 1 bar, and the source, then add a test that
checks one published value through the property layer. To use it in gas mixtures, also give the
temperature range over which CoolProp's ideal-gas part was verified against NIST-JANAF
(``audit.properties.mixtures.VERIFIED_RANGE``, with the test in ``tests/test_mixtures.py``).

The module also holds the standard atomic weights of the elements used (element balances) and the
named compositions a stream may give instead of mole fractions (``composition: air``).

.. [3] T. Prohaska et al., "Standard atomic weights of the elements 2021 (IUPAC Technical
   Report)", Pure Appl. Chem. 94 (2022) 573–600 (abridged, conventional values).
.. [4] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for the density of moist air
   (CIPM-2007)", Metrologia 45 (2008) 149–155, Table 1 (dry-air mole fractions).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Species:
    """Formation constants of one species, ideal gas at 298.15 K and 1 bar."""

    fluid: str  # CoolProp name
    formula: str
    elements: dict[str, int]
    enthalpy_of_formation: float  # ΔfH° [J/mol]
    standard_entropy: float  # S° [J/(mol K)]
    source: str


CODATA_1989 = "CODATA Key Values for Thermodynamics (Cox, Wagman & Medvedev, 1989)"
JANAF_1998 = "NIST-JANAF Thermochemical Tables, 4th ed. (Chase, 1998)"

SPECIES: dict[str, Species] = {
    s.fluid: s
    for s in [
        # H2O(g): ΔfH° = −241.826 ± 0.040 kJ/mol, S° = 188.835 ± 0.010 J/(mol K) [1]
        Species("Water", "H2O", {"H": 2, "O": 1}, -241_826.0, 188.835, CODATA_1989),
        # H2(g): reference element, S° = 130.680 ± 0.003 J/(mol K) [1]
        Species("Hydrogen", "H2", {"H": 2}, 0.0, 130.680, CODATA_1989),
        # O2(g): reference element, S° = 205.152 ± 0.005 J/(mol K) [1]
        Species("Oxygen", "O2", {"O": 2}, 0.0, 205.152, CODATA_1989),
        # N2(g): reference element, S° = 191.609 ± 0.004 J/(mol K) [1]
        Species("Nitrogen", "N2", {"N": 2}, 0.0, 191.609, CODATA_1989),
        # Ar(g): reference element, S° = 154.846 ± 0.003 J/(mol K) [1]
        Species("Argon", "Ar", {"Ar": 1}, 0.0, 154.846, CODATA_1989),
        # CO2(g): ΔfH° = −393.51 ± 0.13 kJ/mol, S° = 213.785 ± 0.010 J/(mol K) [1]
        Species("CarbonDioxide", "CO2", {"C": 1, "O": 2}, -393_510.0, 213.785, CODATA_1989),
        # CO(g): ΔfH° = −110.53 ± 0.17 kJ/mol, S° = 197.660 ± 0.004 J/(mol K) [1]
        Species("CarbonMonoxide", "CO", {"C": 1, "O": 1}, -110_530.0, 197.660, CODATA_1989),
        # CH4(g): not among the CODATA key values; ΔfH° = −74.873 kJ/mol, S° = 186.251 [2]
        Species("Methane", "CH4", {"C": 1, "H": 4}, -74_873.0, 186.251, JANAF_1998),
        # NH3(g): ΔfH° = −45.898 kJ/mol, S° = 192.774 J/(mol K) [2]
        Species("Ammonia", "NH3", {"N": 1, "H": 3}, -45_898.0, 192.774, JANAF_1998),
    ]
}


def species(fluid: str) -> Species | None:
    """The formation data of a CoolProp fluid name, or None when it has none here."""
    return SPECIES.get(fluid)


BY_FORMULA: dict[str, Species] = {s.formula: s for s in SPECIES.values()}


def lookup(name: str) -> Species | None:
    """The formation data of a species by formula (``"CO2"``) or CoolProp name
    (``"CarbonDioxide"``, any case), or None."""
    if name in BY_FORMULA:
        return BY_FORMULA[name]
    lowered = name.lower()
    for fluid, data in SPECIES.items():
        if fluid.lower() == lowered:
            return data
    return None


# Standard atomic weights [kg/mol], abridged conventional values of IUPAC/CIAAW 2021 [3].
ATOMIC_WEIGHTS: dict[str, float] = {
    "H": 1.008e-3,
    "C": 12.011e-3,
    "N": 14.007e-3,
    "O": 15.999e-3,
    "Ar": 39.95e-3,
}

# Dry air, mole fractions: CIPM-2007 [4] gives N2 0.780848, O2 0.209390, Ar 0.009332 and CO2 0.0004
# (values quoted from memory of the paper's Table 1); the minor gases (about 30 µmol/mol, mostly Ne
# and He, both inert here) are counted with N2 so that the fractions sum to 1.
DRY_AIR: dict[str, float] = {"N2": 0.780878, "O2": 0.209390, "Ar": 0.009332, "CO2": 0.000400}

NAMED_COMPOSITIONS: dict[str, dict[str, float]] = {"air": DRY_AIR}
"""Compositions a stream may name (``composition: air``), mole fractions by formula."""
