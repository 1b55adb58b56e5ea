"""The words of the findings workbook: the safety caution and the Method sheet (sign convention,
equations, published sources). Used by :mod:`audit.report.workbook`."""

from __future__ import annotations

CAUTION = (
    "Consistency check only: this workbook checks the thermodynamic consistency of the "
    "balance. It is not a safety review, a hazard study or a check of compliance with any "
    "design code (pressure equipment, hydrogen, ammonia, fired equipment); a balance that "
    "passes may still be unsafe. Defer to local codes and regulations and to licensed "
    "engineers for every design decision."
)

METHOD_TEXT: tuple[tuple[str, str], ...] = (
    (
        "Sign convention",
        "Q is heat INTO the step; W is work DELIVERED BY the step (shaft, electrical or other). "
        "A turbine's W is positive, a pump's or compressor's negative; a heater's Q is positive, a "
        "cooler's negative. The balance file itself is written without signs: each step kind says "
        "what its claims mean (a turbine's shaft_power is what it delivers, a pump's what it absorbs, "
        "a heater's duty what it receives).",
    ),
    (
        "Units",
        "SI inside the audit; here temperatures in °C (differences in K), absolute pressures in bar, "
        "flows in kg/s, rates in kW and kW/K, specific values in kJ/kg and kJ/(kg·K). Vessels (batch "
        "steps) are totals: kJ and kJ/K, marked 'total (kJ)' in the basis column and in every cell's "
        "number format. Efficiencies and relative margins are fractions shown as %.",
    ),
    (
        "Stream properties",
        "T, P, ρ, h, s, u, phase and quality from CoolProp's HEOS back end (IAPWS-95 for water); "
        "g = h − T·s, a = u − T·s, and the flow exergy ψ = (h − h0) − T0·(s − s0) relative to the same "
        "fluid at the dead state (T0, P0). Basis 'formation': h and s are shifted so that the ideal "
        "gas at 298.15 K and 1 bar has h = ΔfH° and s = S° (standard enthalpy of formation, third-law "
        "entropy). Basis 'fluid reference': CoolProp's own reference; the absolute g and a of such a "
        "stream depend on that reference (their differences are exact for isothermal steps).",
    ),
    (
        "Printed properties",
        "A stream fixes its state by one pair (state_from, or the first given of (P, quality), "
        "(T, quality), (P, h), (P, s), (T, P)); every other printed property (T, P, quality, h, s, u, "
        "v, ρ, T_sat) is checked against that state. Allowed: half a unit of its last written digit "
        "(GUM JCGM 100:2008 §F.2.2.1), the fixing pair's rounding carried through worst-case, and "
        "1e-8 relative (CoolProp against the published verification tables). Beyond that, within the "
        "difference between IAPWS-95 and IAPWS-IF97 for water: formulation-difference (warning); "
        "otherwise printed-property-mismatch (error). The Streams sheet shows printed beside "
        "computed: ✓ agrees, ≈ within the formulation difference, ✗ differs.",
    ),
    (
        "References and formulations",
        "Printed h and s are read on the fluid's own reference (CoolProp's default: IAPWS for "
        "water, IIR for most refrigerants) unless the balance declares another (reference: IIR, "
        "ASHRAE, NBP, IAPWS or an explicit h and s at a stated state); they are shifted by one "
        "constant in h and one in s at the edge. formulation: IF97 evaluates water on IAPWS-IF97 "
        "instead of IAPWS-95. When water's formulation is not declared, a step whose first law "
        "or work or entropy bound misses beyond the rounding of the written values on IAPWS-95 "
        "but closes on IAPWS-IF97 gets a formulation-difference warning (never an error, never "
        "silence). The equation of state of each fluid is listed below with its source.",
    ),
    (
        "First law (steady flow)",
        "residual = Σ Q_j − W − (Σ ṁ_e·e_e − Σ ṁ_i·e_i), e = h + V²/2 + g·z. In the Steps sheet the "
        "formula column computes Q − W − (enthalpy flow out − enthalpy flow in) − (kinetic+potential "
        "out − kinetic+potential in) from the cells of its row; the solver's own residual stands "
        "beside it. An energy-imbalance finding is raised when |residual| exceeds the rounding of "
        "the step's written values (half a unit in each last digit, carried worst case through the "
        "step) plus a property-method allowance of 4e-4 of its enthalpy flows from the dead state. "
        "A balance that writes energy_relative or energy_absolute is judged instead on the larger "
        "of energy_relative × the step's energy scale and the absolute floor, which never exceeds "
        "energy_floor_fraction × the step's own work or heat.",
    ),
    (
        "Closed vessel (batch)",
        "Q − W = m·(u2 − u1); S_gen = m·(s2 − s1) − Σ Q_j/T_j; W_rev = −(ΔU − T0·ΔS) + Σ Q_j·(1 − "
        "T0/T_j) (total work; the useful-work bound is this minus P0·ΔV). In the Steps sheet the "
        "enthalpy-flow columns of a vessel hold m·u1 and m·u2, so the same formula reads "
        "Q − W − (m·u2 − m·u1).",
    ),
    (
        "Entropy generation",
        "Ṡ_gen = Σ ṁ_e·s_e − Σ ṁ_i·s_i − Σ Q_j/T_j, which must be ≥ 0 (negative-entropy-generation "
        "otherwise). Heat from a source at infinite temperature carries no entropy.",
    ),
    (
        "Reversible work and exergy destroyed",
        "Ẇ_rev = −(ΔĖ − T0·ΔṠ) + Σ Q_j·(1 − T0/T_j), equal to Σ ṁ_i·ψ_i − Σ ṁ_e·ψ_e + Σ Q_j·(1 − "
        "T0/T_j) when each fluid is conserved. A claimed W above Ẇ_rev + tolerance is "
        "work-above-bound (for a consumer: input-below-minimum). Exergy destroyed Ẋ_d = T0·Ṡ_gen "
        "(Gouy–Stodola), and Ẇ_rev − W = Ẋ_d + residual. Second-law efficiency: W/Ẇ_rev for a work "
        "producer, Ẇ_rev/W for a consumer (as magnitudes); for a heat exchanger, the cold side's "
        "exergy gain over the hot side's exergy drop.",
    ),
    (
        "Bound basis",
        "Which potential governs the step, and the bound the work check uses (Ẇ_rev): 'exergy "
        "drop' in general (heat at its boundary temperatures); '−ΔG (isothermal flow)' when every "
        "stream and declared heat temperature lies within the isothermal band of one temperature "
        "T (undeclared heat is then exchanged at T): Ẇ_rev = −ΔG = −(ΔĖ − T·ΔṠ) of the streams at "
        "that one T, so Ẇ_rev − W = T·Ṡ_gen + residual; for vessels, '−ΔA (isothermal closed)': "
        "W_rev = −ΔA = −(ΔU − T·ΔS), useful work at most −ΔA − P0·ΔV (and, when also isobaric, "
        "work other than expansion work at most −ΔG = −ΔA − P·ΔV), else the closed-system exergy "
        "drop. Each bound has its own column: exergy drop, −ΔG and −ΔA at that temperature, the "
        "useful-work bound; the classical bound column repeats −ΔG or −ΔA when it governs.",
    ),
    (
        "Heat without a declared temperature",
        "The audit flags only what is certain: heat received with no declared source temperature is "
        "taken from an infinitely hot source, heat rejected with no declared sink temperature goes "
        "to T0 (or to the step's coldest stream when that is colder), the choices least likely to "
        "flag a violation. The Heat flows sheet and the notes say where this was done.",
    ),
    (
        "Isentropic efficiency",
        "Turbine: η_s = (h_in − h_out)/(h_in − h_out,s); compressor and pump: η_s = (h_out,s − h_in)/"
        "(h_out − h_in), with h_out,s at the inlet's entropy and the outlet's pressure.",
    ),
    (
        "Heat exchanger profiles",
        "Each side is divided into equal steps of its own enthalpy change (pressure linear between "
        "inlet and outlet) plus its saturation points; the smallest hot-minus-cold temperature "
        "difference at equal fractions of the duty is the minimum approach (internal-pinch when "
        "below zero).",
    ),
    (
        "Uncertainty (measured balances)",
        "When a balance declares the uncertainty of its readings, each law finding carries the "
        "expanded uncertainty U = k·u_c of its margin (law of propagation of uncertainty, coverage "
        "factor k = 2 unless declared) and a verdict: violated (margin − U > tolerance), marginal "
        "(beyond the tolerance but not by more than U; shown as a warning) or consistent "
        "(margin − U ≤ 0; shown as info).",
    ),
    (
        "Probable causes",
        "For a failing step, the usual slips (gauge read as absolute, °F for °C, t/h for kg/s, kW "
        "for MW, a sign, inlet and outlet swapped) are undone one at a time; those that make the "
        "step close are named in the Findings sheet.",
    ),
    (
        "Severity and verdict",
        "error: thermodynamics does not permit the claim, or the step does not close; warning: "
        "likely wrong or risky; info: for the record. The verdict fails when any finding is at or "
        "above the chosen threshold (--fail-on); a finding accepted by a reviewer is still listed but "
        "does not fail it.",
    ),
    ("Caution", CAUTION),
)

# The published sources of the methods and constants, from the docstrings of audit/laws.py,
# audit/formation.py, audit/properties.py, audit/mixtures.py, audit/reactions.py,
# audit/uncertainty.py, audit/steps/*.py and the constants of audit/results.py and audit/units.py
# (tests/test_workbook.py checks that every '.. [n]' reference of those docstrings is listed here).
SOURCES: tuple[tuple[str, str], ...] = (
    (
        "first law, entropy generation, reversible work; isentropic efficiency",
        "M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, Fundamentals of Engineering "
        "Thermodynamics, 8th ed., Wiley, 2014 (ch. 4, 6, 7; §6.12).",
    ),
    (
        "exergy destroyed = T0·S_gen (Gouy–Stodola)",
        "A. Bejan, Advanced Engineering Thermodynamics, 4th ed., Wiley, 2016, ch. 3.",
    ),
    (
        "flow exergy ψ",
        "A. Bejan, G. Tsatsaronis, M. Moran, Thermal Design and Optimization, Wiley, 1996, ch. 3.",
    ),
    (
        "water properties (IAPWS-95)",
        'W. Wagner, A. Pruß, "The IAPWS formulation 1995 for the thermodynamic properties of '
        'ordinary water substance for general and scientific use", J. Phys. Chem. Ref. Data 31 '
        "(2002) 387–535.",
    ),
    (
        "property library",
        'I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid thermophysical '
        'property evaluation and the open-source thermophysical property library CoolProp", Ind. '
        "Eng. Chem. Res. 53 (2014) 2498–2508.",
    ),
    (
        "formation data of H2O, H2, O2, N2, Ar, CO2, CO",
        "J. D. Cox, D. D. Wagman, V. A. Medvedev, CODATA Key Values for Thermodynamics, Hemisphere, "
        "New York, 1989.",
    ),
    (
        "formation data of CH4, NH3",
        "M. W. Chase, Jr., NIST-JANAF Thermochemical Tables, 4th ed., J. Phys. Chem. Ref. Data, "
        "Monograph 9, 1998.",
    ),
    (
        "heat-exchanger temperature profiles",
        "F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, Fundamentals of Heat and Mass "
        "Transfer, 6th ed., Wiley, 2007, ch. 11.",
    ),
    (
        "chillers and heat pumps: entropic mean temperature of a stream's heat",
        "T. J. Kotas, The Exergy Method of Thermal Plant Analysis, Butterworths, 1985, §3.4.",
    ),
    (
        "chillers and heat pumps: reversible COP between the two sides",
        "A. Bejan, Advanced Engineering Thermodynamics, 4th ed., Wiley, 2016, ch. 9.",
    ),
    (
        "cooling towers: the wet-bulb limit of evaporative cooling",
        'ASHRAE Handbook—HVAC Systems and Equipment, ch. 40 "Cooling towers", ASHRAE, 2016.',
    ),
    (
        "humid air: relative humidity, thermodynamic wet bulb",
        'ASHRAE Handbook—Fundamentals, ch. 1 "Psychrometrics", ASHRAE, 2017.',
    ),
    (
        "humid air: enhancement factor (CIPM-2007)",
        'A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for the density of moist air '
        '(CIPM-2007)", Metrologia 45 (2008) 149–155.',
    ),
    (
        "humid air: exergy including its chemical part against the dead state's humidity",
        'W. J. Wepfer, R. A. Gaggioli, E. F. Obert, "Proper evaluation of available energy for '
        'HVAC", ASHRAE Transactions 85 (1979) 214–230.',
    ),
    (
        "fuel cells and electrolysers: reversible and thermoneutral voltage, Faraday's law",
        "J. Larminie, A. Dicks, Fuel Cell Systems Explained, 2nd ed., Wiley, 2003, ch. 2.",
    ),
    (
        "reacting steps, combustion; ideal-gas mixtures",
        "M. J. Moran, H. N. Shapiro, D. D. Boettner, M. B. Bailey, Fundamentals of Engineering "
        "Thermodynamics, 8th ed., Wiley, 2014, ch. 12, 13–14.",
    ),
    (
        "gas mixtures at pressure (virial equation of mixtures)",
        "J. M. Prausnitz, R. N. Lichtenthaler, E. G. de Azevedo, Molecular Thermodynamics of "
        "Fluid-Phase Equilibria, 3rd ed., Prentice Hall, 1999, ch. 5.",
    ),
    (
        "Faraday constant and other fundamental constants",
        'E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values of the '
        'fundamental physical constants: 2018", Rev. Mod. Phys. 93 (2021) 025010.',
    ),
    (
        "uncertainty of the margins (law of propagation)",
        "JCGM 100:2008, Evaluation of measurement data — Guide to the expression of uncertainty in "
        "measurement (GUM).",
    ),
    (
        "Monte Carlo cross-check of the uncertainty",
        "JCGM 101:2008, Evaluation of measurement data — Supplement 1 to the GUM — Propagation of "
        "distributions using a Monte Carlo method.",
    ),
    ("test uncertainty of measured readings", "ASME PTC 19.1-2018, Test Uncertainty."),
    (
        "verdicts against tolerance and uncertainty (guard bands)",
        "JCGM 106:2012, Evaluation of measurement data — The role of measurement uncertainty in "
        "conformity assessment.",
    ),
    (
        "atomic weights (element balances, molar masses)",
        'T. Prohaska et al., "Standard atomic weights of the elements 2021 (IUPAC Technical '
        'Report)", Pure Appl. Chem. 94 (2022) 573–600 (abridged, conventional values).',
    ),
    (
        "composition of dry air (composition: air)",
        'A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for the density of moist air '
        '(CIPM-2007)", Metrologia 45 (2008) 149–155, Table 1.',
    ),
    (
        "molar gas constant R = 8.314 462 618 153 24 J/(mol·K)",
        "CODATA 2018 recommended values (exact since the 2019 SI).",
    ),
    ("standard-state pressure 1 bar", "IUPAC (since 1982)."),
    ("standard atmosphere 101 325 Pa", "CGPM 1954 (exact by definition)."),
    ("standard gravity 9.806 65 m/s²", "3rd CGPM, 1901 (exact by definition)."),
    ("standard cubic metre: 15 °C and 101.325 kPa", "ISO 13443."),
)
