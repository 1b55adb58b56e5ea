"""Reaction extents fitted to a step's change in composition (:func:`audit.steps.reactions.fit_extents`).

One free extent is the orthogonal projection of the unexplained change on the reaction's column
(Golub and Van Loan, *Matrix Computations*, 4th ed., §5.3); several are solved by
``numpy.linalg.lstsq``. Reference: numpy's least-squares solution (``numpy.linalg.lstsq``, a named
library), which the projection must reproduce to the last bits, and exact cases built here.
"""

from __future__ import annotations

import random

import numpy as np
import pytest

from audit.steps.reactions import fit_extents, parse_reaction

COMBUSTION = parse_reaction("CH4 + 2 O2 -> CO2 + 2 H2O")
SHIFT = parse_reaction("CO + H2O -> CO2 + H2")
SPLITTING = parse_reaction("2 H2O(l) -> 2 H2 + O2")


def _numpy(reactions, change, claimed):
    """The same fit written with numpy only (the reference)."""
    formulas = sorted(set(change) | {f for r in reactions for f in r.nu()})
    nu = np.array([[r.nu().get(f, 0.0) for r in reactions] for f in formulas])
    target = np.array([change.get(f, 0.0) for f in formulas])
    extents = [0.0 if c is None else float(c) for c in claimed]
    free = [k for k, c in enumerate(claimed) if c is None]
    fixed = target - nu @ np.array(extents)
    solution, *_ = np.linalg.lstsq(nu[:, free], fixed, rcond=None)
    for k, value in zip(free, solution, strict=True):
        extents[k] = float(value)
    residual = target - nu @ np.array(extents)
    return extents, dict(zip(formulas, residual.tolist(), strict=True))


def test_an_exact_single_reaction_is_its_extent_with_no_residual():
    # 3 mol/s of methane burnt: every species change is 3 times its coefficient
    change = {"CH4": -3.0, "O2": -6.0, "CO2": 3.0, "H2O": 6.0}
    extents, residual = fit_extents([COMBUSTION], change, [None])
    assert extents == [3.0]
    assert residual == {"CH4": 0.0, "CO2": 0.0, "H2O": 0.0, "O2": 0.0}


def test_a_species_no_reaction_explains_is_left_as_residual():
    change = {"H2O": -2.0, "H2": 2.0, "O2": 1.0, "N2": 0.25}
    extents, residual = fit_extents([SPLITTING], change, [None])
    assert extents == [1.0]
    assert residual["N2"] == 0.25 and residual["H2"] == 0.0


@pytest.mark.parametrize("seed", range(40))
def test_one_free_extent_agrees_with_numpy_lstsq(seed):
    rng = random.Random(seed)
    reactions = [COMBUSTION, SHIFT][: rng.choice((1, 2))]
    claimed = [None] if len(reactions) == 1 else rng.choice(([None, 0.7], [1.3, None]))
    change = {
        f: rng.uniform(-5.0, 5.0)
        for f in ("CH4", "O2", "CO2", "H2O", "CO", "H2", "N2")[: rng.randint(3, 7)]
    }
    extents, residual = fit_extents(reactions, change, claimed)
    want, want_residual = _numpy(reactions, change, claimed)
    assert extents == pytest.approx(want, rel=1e-13, abs=1e-13)
    assert residual.keys() == want_residual.keys()
    for f, value in residual.items():
        assert value == pytest.approx(want_residual[f], rel=1e-13, abs=1e-13)


def test_several_free_extents_are_numpy_lstsq():
    change = {"CH4": -1.0, "O2": -2.0, "CO": -0.5, "CO2": 1.5, "H2O": 1.5, "H2": 0.5}
    extents, residual = fit_extents([COMBUSTION, SHIFT], change, [None, None])
    want, want_residual = _numpy([COMBUSTION, SHIFT], change, [None, None])
    assert extents == want and residual == want_residual
    assert extents == pytest.approx([1.0, 0.5])


def test_a_fully_claimed_step_fits_nothing():
    change = {"CH4": -2.0, "O2": -4.0, "CO2": 2.0, "H2O": 4.0}
    extents, residual = fit_extents([COMBUSTION], change, [1.5])
    assert extents == [1.5]
    assert residual == {"CH4": -0.5, "CO2": 0.5, "H2O": 1.0, "O2": -1.0}
