"""Propagation of uncertainty through a function of several inputs (GUM and its Supplement 1).

Linear propagation (:func:`propagate`): the standard uncertainty of each output follows from the
law of propagation of uncertainty for uncorrelated inputs [1, §5.1.2]:

    u_c²(y) = Σ_i (c_i u(x_i))²,   c_i = ∂y/∂x_i,

each c_i u(x_i) estimated by a central difference [1, §5.1.3, note 2]:

    c_i u(x_i) ≈ [y(x + u_i e_i) − y(x − u_i e_i)] / 2.

A side that cannot be evaluated (a perturbed state inside the saturation band, say) is replaced by
a one-sided difference, then by a step of u_i/10.

Monte Carlo (:func:`monte_carlo`), after GUM Supplement 1 [2, §7]: every input drawn at once from a
normal distribution N(x_i, u_i²) with a fixed seed, the function evaluated per draw, and the
sample standard deviation returned (its relative standard error is about 1/√(2(M − 1)) for M
trials).

References
----------
.. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
   measurement* (GUM).
.. [2] JCGM 101:2008, *Evaluation of measurement data — Supplement 1 to the GUM — Propagation of
   distributions using a Monte Carlo method*.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from audit.errors import InputError

MONTE_CARLO_SEED = 1012008
"""Seed of the Monte Carlo draws (fixed: two runs give the same numbers)."""


@dataclass
class Propagation:
    """Result of :func:`propagate`: nominal outputs y0, the contributions c_i u_i per input and
    output (None for an input that could not be evaluated) and the combined standard
    uncertainties u_c of the outputs."""

    y0: list[float]
    contributions: list[list[float] | None]
    u_c: list[float]
    evaluations: int


def propagate(
    f: Callable[[list[float]], list[float]], x0: Sequence[float], u: Sequence[float]
) -> Propagation:
    """Law of propagation of uncertainty for uncorrelated inputs, GUM (JCGM 100:2008) eq. (10),
    with sensitivity coefficients from central differences of step u_i [1, §5.1.3, note 2].

    Parameters
    ----------
    f : the outputs as a function of the inputs [SI]; may raise :class:`InputError` (a state the
        property engine refuses) or return non-finite values where it cannot be evaluated
    x0 : the nominal inputs [SI]
    u : their standard uncertainties [SI]

    Returns
    -------
    :class:`Propagation`; u_c [SI of each output] = sqrt(Σ_i (c_i u_i)²), exact for a linear f.
    """
    x0 = [float(v) for v in x0]
    y0 = list(f(x0))
    evaluations = 1
    contributions: list[list[float] | None] = []
    for i, ui in enumerate(u):
        if ui <= 0:
            contributions.append([0.0] * len(y0))
            continue
        found = None
        for step in (ui, ui / 10.0):
            plus, minus = _shifted(f, x0, i, step), _shifted(f, x0, i, -step)
            evaluations += 2
            if plus is not None and minus is not None:
                found = [(p - m) / (2.0 * step) * ui for p, m in zip(plus, minus, strict=True)]
            elif plus is not None:
                found = [(p - y) / step * ui for p, y in zip(plus, y0, strict=True)]
            elif minus is not None:
                found = [(y - m) / step * ui for m, y in zip(minus, y0, strict=True)]
            if found is not None:
                break
        contributions.append(found)
    u_c = [math.sqrt(sum(c[j] ** 2 for c in contributions if c is not None)) for j in range(len(y0))]
    return Propagation(y0, contributions, u_c, evaluations)


def _shifted(
    f: Callable[[list[float]], list[float]], x0: list[float], i: int, step: float
) -> list[float] | None:
    x = list(x0)
    x[i] += step
    try:
        y = list(f(x))
    except InputError:
        return None
    return y if all(math.isfinite(v) for v in y) else None


def monte_carlo(
    f: Callable[[list[float]], list[float]],
    x0: Sequence[float],
    u: Sequence[float],
    trials: int,
    seed: int | Sequence[int] = MONTE_CARLO_SEED,
) -> tuple[list[float], int]:
    """Monte Carlo propagation, GUM Supplement 1 (JCGM 101:2008) §7: ``trials`` draws of all
    inputs at once from N(x0_i, u_i²) [SI], with a fixed ``seed``.

    Returns the sample standard deviation of each output [SI] and the number of draws that could
    not be evaluated (left out).
    """
    import numpy as np  # loaded only when needed: it costs a start-up

    rng = np.random.default_rng(seed)
    draws = np.asarray(x0, dtype=float) + rng.standard_normal((trials, len(x0))) * np.asarray(
        u, dtype=float
    )
    outputs = []
    failed = 0
    for x in draws:
        try:
            y = list(f([float(v) for v in x]))
        except InputError:
            failed += 1
            continue
        if all(math.isfinite(v) for v in y):
            outputs.append(y)
        else:
            failed += 1
    if len(outputs) < 2:
        return [math.nan] * len(list(f(list(x0)))), failed
    return [float(v) for v in np.std(np.asarray(outputs), axis=0, ddof=1)], failed
