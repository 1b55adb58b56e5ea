"""Weighted least squares with the constraints satisfied exactly: the reconciled values.

Problem [1, ch. 3 and 5; 2, §6]: measured values x_m with covariance Σ, unmeasured values z,
constraints f(x, z) = 0 (m equations). Find

    min (x − x_m)ᵀ Σ⁻¹ (x − x_m)   subject to   f(x, z) = 0.

Method (sequential quadratic programming on the linearised constraints, Gauss–Newton form
[1, §5.2]): at an iterate (x_k, z_k) with Jacobians A = ∂f/∂x and B = ∂f/∂z,

1. scale: each constraint by its standard deviation from the readings s_j = ‖(A L)_j‖ with
   Σ = L Lᵀ (Cholesky), the measured variables as y = L⁻¹ (x − x_m), the unmeasured by their size;
2. eliminate the unmeasured with a projection P whose rows span the left null space of B (Crowe,
   Garcia Campos and Hrymak [3]): P B = 0, so P A y' = P (A y_k − f_k) holds whatever z is;
3. the reduced constraints G = P A (rows reduced to their rank r by a singular value decomposition,
   rank tolerance :data:`RANK_TOLERANCE`) give the minimum-norm correction y' = G⁺ e, i.e.
   x̂ = x_m − Σ Gᵀ (G Σ Gᵀ)⁻¹ (G x_m − d) (Kuehn and Davidson [4]);
4. the unmeasured from B Δz = −f_k − A Δx (least squares, minimum norm); an unmeasured quantity
   that lies in the null space of B is *unobservable*: it is reported, never estimated;
5. repeat from the new point until the largest step |Δy| and the largest scaled residual
   |f_j| / s_j are both below :data:`TOLERANCE`, at most :data:`MAX_ITERATIONS` times. A point
   where a state cannot be evaluated halves the step (up to :data:`MAX_HALVINGS` times).

At the solution, in the scaled variables, the corrections y have covariance Q = G⁺ G (the
projector on the row space of G) and the estimate I − Q [1, §7.2]; in SI, Cov(v) = L Q Lᵀ and
Cov(x̂) = Σ − Cov(v). The redundancy (degrees of freedom of the global test) is r = rank G.

References
----------
.. [1] S. Narasimhan, C. Jordache, *Data Reconciliation and Gross Error Detection: An Intelligent
   Use of Process Data*, Gulf Publishing, 2000.
.. [2] VDI 2048 Part 1:2017, *Control and quality improvement of process data and their
   uncertainties by means of correction calculation for operation and acceptance tests*.
.. [3] C. M. Crowe, Y. A. Garcia Campos, A. Hrymak, "Reconciliation of process flow rates by
   matrix projection. Part I: linear case", AIChE Journal 29 (1983) 881–888.
.. [4] D. R. Kuehn, H. Davidson, "Computer control II. Mathematics of control", Chemical
   Engineering Progress 57 (1961) 44–47.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

TOLERANCE = 1e-6
"""Convergence: largest step in standard uncertainties and largest residual in standard deviations
of the constraint [-]."""
MAX_ITERATIONS = 50
MAX_HALVINGS = 12
RANK_TOLERANCE = 1e-9
"""Singular values below this fraction of the largest are taken as zero [-]."""


class NotEvaluable(Exception):
    """Raised by a residual function at a point where a state cannot be evaluated."""


@dataclass
class Estimate:
    """The solution of one reconciliation. Values in the units of the variables (SI)."""

    x: np.ndarray  # every variable at the solution (measured then unmeasured order as given)
    measured: np.ndarray  # indices of the measured variables
    unmeasured: np.ndarray  # indices of the unmeasured ones
    corrections: np.ndarray  # x̂ − x_m of the measured variables
    cov_corrections: np.ndarray  # Cov(v) = L Q Lᵀ
    cov_estimate: np.ndarray  # Cov(x̂) = Σ − Cov(v)
    q: np.ndarray  # Q in the scaled variables (projector)
    chol: np.ndarray  # L, Σ = L Lᵀ
    cov_unmeasured: np.ndarray  # Cov(ẑ) (NaN rows for unobservable ones)
    observable: np.ndarray  # bool per unmeasured variable
    redundancy: int
    objective: float  # vᵀ Σ⁻¹ v
    iterations: int
    converged: bool
    largest_residual: float  # max |f_j| / s_j at the solution [-]
    message: str = ""


def reconcile_values(
    residual: Callable[[np.ndarray], np.ndarray],
    jacobian: Callable[[np.ndarray], np.ndarray],
    x_start: Sequence[float],
    readings: Sequence[float],
    sigma: np.ndarray,
    measured: Sequence[int],
    row_floor: Sequence[float] | np.ndarray | None = None,
) -> Estimate:
    """Reconcile: weighted least squares with exact constraints (see the module docstring).

    Parameters
    ----------
    residual : f(x) [units of each constraint]; may raise :class:`NotEvaluable`
    jacobian : ∂f/∂x at x, an (m, n) array
    x_start : every variable's start value (the readings for the measured ones) [SI]
    readings : the readings of the ``measured`` variables, in that order [SI]
    sigma : their covariance Σ [SI²], positive definite
    measured : indices of the measured variables among the n
    row_floor : per constraint, the sensitivity below which its linearised row is round-off and
        taken as zero [units of the constraint per standard uncertainty] (default: none)
    """
    x = np.asarray(x_start, dtype=float).copy()
    n = x.size
    meas = np.asarray(measured, dtype=int)
    unmeas = np.array([i for i in range(n) if i not in set(meas.tolist())], dtype=int)
    xm = np.asarray(readings, dtype=float)
    L = np.linalg.cholesky(np.asarray(sigma, dtype=float)) if meas.size else np.zeros((0, 0))
    floor = np.zeros(0) if row_floor is None else np.asarray(row_floor, dtype=float)
    f = residual(x)
    converged, message, iterations = False, "", 0
    for iterations in range(1, MAX_ITERATIONS + 1):  # noqa: B007 - reported after the loop
        lin = _linearise(jacobian(x), f, x, xm, L, meas, unmeas, floor)
        dx = lin.step
        step_size = float(np.max(np.abs(lin.dy), initial=0.0))
        for _ in range(MAX_HALVINGS + 1):
            try:
                f_new = residual(x + dx)
                if np.all(np.isfinite(f_new)):
                    break
            except NotEvaluable:
                pass
            dx = dx / 2.0
        else:
            message = (
                "the solver reached a point where a state cannot be evaluated (it "
                "halved its step 12 times); the readings may be on the wrong side of the "
                "saturation line or out of range"
            )
            break
        x = x + dx
        f = f_new
        scaled = float(np.max(np.abs(f / lin.scale), initial=0.0))
        if step_size <= TOLERANCE and scaled <= TOLERANCE:
            converged = True
            break
    else:
        message = (
            f"the solver did not converge in {MAX_ITERATIONS} iterations (tolerance "
            f"{TOLERANCE:g} in standard uncertainties)"
        )
    lin = _linearise(jacobian(x), f, x, xm, L, meas, unmeas, floor)
    y = np.linalg.solve(L, x[meas] - xm) if meas.size else np.zeros(0)
    q = lin.pinv_g @ lin.g if lin.g.size else np.zeros((meas.size, meas.size))
    cov_v = L @ q @ L.T
    cov_u = lin.b_pinv @ lin.a @ (np.eye(meas.size) - q) @ lin.a.T @ lin.b_pinv.T
    cov_u = cov_u * np.outer(lin.z_scale, lin.z_scale)
    cov_u[~lin.observable, :] = np.nan
    cov_u[:, ~lin.observable] = np.nan
    return Estimate(
        x=x,
        measured=meas,
        unmeasured=unmeas,
        corrections=x[meas] - xm,
        cov_corrections=cov_v,
        cov_estimate=L @ L.T - cov_v,
        q=q,
        chol=L,
        cov_unmeasured=cov_u,
        observable=lin.observable,
        redundancy=lin.rank,
        objective=float(y @ y),
        iterations=iterations,
        converged=converged,
        largest_residual=float(np.max(np.abs(f / lin.scale), initial=0.0)),
        message=message,
    )


def _null_space(M: np.ndarray) -> np.ndarray:
    """An orthonormal basis of the null space of ``M`` (columns), from its singular value
    decomposition (numpy's LAPACK), singular values below :data:`RANK_TOLERANCE` of the largest
    taken as zero."""
    _, s, vh = np.linalg.svd(M, full_matrices=True)
    rank = int(np.sum(s > RANK_TOLERANCE * s[0])) if s.size and s[0] > 0 else 0
    return vh[rank:, :].T


@dataclass
class _Linear:
    a: np.ndarray  # scaled A L
    g: np.ndarray  # reduced constraints (rank rows)
    pinv_g: np.ndarray
    b_pinv: np.ndarray
    scale: np.ndarray
    z_scale: np.ndarray
    observable: np.ndarray
    rank: int
    dy: np.ndarray
    step: np.ndarray


def _linearise(
    J: np.ndarray,
    f: np.ndarray,
    x: np.ndarray,
    xm: np.ndarray,
    L: np.ndarray,
    meas: np.ndarray,
    unmeas: np.ndarray,
    floor: np.ndarray,
) -> _Linear:
    A = J[:, meas] @ L if meas.size else np.zeros((J.shape[0], 0))
    z_scale = np.maximum(np.abs(x[unmeas]), 1e-12) if unmeas.size else np.zeros(0)
    B = J[:, unmeas] * z_scale if unmeas.size else np.zeros((J.shape[0], 0))
    if floor.size:
        # a row whose sensitivity is round-off (an energy balance of streams in one state,
        # whose readings enter only through their common enthalpy) carries no information:
        # scaled by its own norm it would become a full constraint of noise
        noise = np.hypot(np.linalg.norm(A, axis=1), np.linalg.norm(B, axis=1)) <= floor
        A, B, f = A.copy(), B.copy(), f.copy()
        A[noise], B[noise], f[noise] = 0.0, 0.0, 0.0
    scale = np.linalg.norm(A, axis=1)
    b_norm = np.linalg.norm(B, axis=1)
    scale = np.where(scale > 0, scale, np.where(b_norm > 0, b_norm, 1.0))
    A, B, fs = A / scale[:, None], B / scale[:, None], f / scale
    y = np.linalg.solve(L, x[meas] - xm) if meas.size else np.zeros(0)
    if unmeas.size:
        P = _null_space(B.T).T
        null_b = _null_space(B)
        observable = (
            np.linalg.norm(null_b, axis=1) < 1e-6 if null_b.size else np.ones(unmeas.size, dtype=bool)
        )
    else:
        P = np.eye(A.shape[0])
        observable = np.zeros(0, dtype=bool)
    G0 = P @ A
    e0 = P @ (A @ y - fs)
    if G0.size:
        U, s, _ = np.linalg.svd(G0, full_matrices=False)
        keep = s > RANK_TOLERANCE * (s[0] if s.size and s[0] > 0 else 1.0)
        T = U[:, keep].T
    else:
        T = np.zeros((0, G0.shape[0]))
    G, e = T @ G0, T @ e0
    pinv_g = np.linalg.pinv(G) if G.size else np.zeros((meas.size, 0))
    y_new = pinv_g @ e if G.size else np.zeros(meas.size)
    dy = y_new - y
    step = np.zeros_like(x)
    if meas.size:
        step[meas] = L @ dy
    b_pinv = np.linalg.pinv(B, rcond=RANK_TOLERANCE) if unmeas.size else np.zeros((0, A.shape[0]))
    if unmeas.size:
        # the minimum-norm step: it closes every balance, also those holding unobservable
        # quantities (whose values the balances do not fix: they are reported as unobservable,
        # with no value, and never enter the statistics)
        dw = b_pinv @ (-fs - A @ dy)
        step[unmeas] = dw * z_scale
    return _Linear(
        a=A,
        g=G,
        pinv_g=pinv_g,
        b_pinv=b_pinv,
        scale=scale,
        z_scale=z_scale,
        observable=observable,
        rank=int(G.shape[0]),
        dy=dy,
        step=step,
    )
