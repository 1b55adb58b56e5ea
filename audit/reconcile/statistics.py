"""Statistical quality of a reconciliation: the global test, the normalised corrections with a
multiple-comparison critical value, the equivalent sets and the detectability of each reading.

* Global test [1, §7.2; 2, §7]: γ = vᵀ Σ⁻¹ v is χ²-distributed with ν = r degrees of freedom
  (the redundancy) when the readings carry no gross error; the test fails when
  γ > χ²_{ν}(confidence).
* Normalised correction of reading i [1, §7.3 (measurement test)]: z_i = |v_i| / √Cov(v)_ii,
  standard normal without a gross error. A per-reading 95 % value (1.96) tested on n readings at
  once flags about 1 − 0.95ⁿ of clean data sets; the critical value used here is Šidák's
  [3]: each reading at α' = 1 − (1 − α)^{1/n}, two-sided, z_crit = Φ⁻¹(1 − α'/2), with n the
  number of redundant readings and α = 1 − confidence, so that the chance of any false flag stays α.
* Equivalent sets [1, §8.3]: readings whose normalised corrections are perfectly correlated
  (|corr| ≥ :data:`EQUIVALENT`) always get identical z_i; no test can tell them apart, so they are
  reported as one set.
* Local redundancy ρ_i = Cov(v)_ii / Σ_ii ∈ [0, 1] [2, §7.3]: 0 for a reading no balance can
  check (just determined), 1 for one fully determined by the others.
* Detectability: a bias b on reading i shifts γ to a non-central χ²(ν, λ) with
  λ = b² q_i, q_i = (L⁻¹ e_i)ᵀ Q (L⁻¹ e_i) (= ρ_i / u_i² for uncorrelated readings); the smallest
  bias the global test detects with probability :data:`POWER` solves
  P[χ²(ν, λ) > χ²_{ν}(confidence)] = POWER. A reading with ρ_i < :data:`CHECKABLE` is reported as
  not checkable, never as confirmed.

References
----------
.. [1] S. Narasimhan, C. Jordache, *Data Reconciliation and Gross Error Detection*, Gulf, 2000.
.. [2] VDI 2048 Part 1:2017, *Control and quality improvement of process data and their
   uncertainties by means of correction calculation for operation and acceptance tests*.
.. [3] Z. Šidák, "Rectangular confidence regions for the means of multivariate normal
   distributions", J. Amer. Statist. Assoc. 62 (1967) 626–633.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

EQUIVALENT = 0.999
"""|Correlation| of two normalised corrections from which the readings form one set [-]."""
CLOSE = 0.95
"""|Correlation| from which two readings are reported as hard to tell apart [-]."""
CHECKABLE = 0.01
"""Local redundancy below which a reading is reported as not checkable [-]."""
POWER = 0.9
"""Probability of detection for the detectable bias [-]."""


@dataclass
class ReadingStatistics:
    """Per measured reading (same order as the estimate's measured variables)."""

    normalised: np.ndarray  # |v_i| / sqrt(Cov(v)_ii); NaN when not redundant
    redundancy: np.ndarray  # local redundancy rho_i
    detectable_bias: np.ndarray  # [SI]; inf when not checkable
    sets: list[list[int]]  # equivalent sets (indices into the measured readings)
    set_of: list[int]  # index of each reading's set
    correlation: np.ndarray  # of the normalised corrections


def global_critical(dof: int, confidence: float) -> float:
    """χ²_{ν}(confidence), the global test's critical value [-] (NaN for ν = 0)."""
    return float(special.chdtri(dof, 1.0 - confidence)) if dof > 0 else math.nan


def sidak_critical(n_tests: int, confidence: float) -> float:
    """Šidák's two-sided critical value of n simultaneous standard-normal tests [-]:
    Φ⁻¹(1 − α'/2) with α' = 1 − confidence^{1/n} [3]."""
    if n_tests <= 0:
        return math.nan
    alpha_each = 1.0 - confidence ** (1.0 / n_tests)
    return float(-special.ndtri(alpha_each / 2.0))


def global_power(dof: int, confidence: float, noncentrality: float) -> float:
    """P[χ²(ν, λ) > χ²_{ν}(confidence)], the global test's power for a shift λ [-]."""
    if dof <= 0:
        return math.nan
    return float(1.0 - special.chndtr(global_critical(dof, confidence), dof, noncentrality))


def detectable_noncentrality(dof: int, confidence: float, power: float = POWER) -> float:
    """The λ at which the global test detects with probability ``power`` [-]."""
    if dof <= 0:
        return math.inf
    # the non-centrality at which the non-central χ² CDF at the critical value is 1 − power
    return float(special.chndtrinc(global_critical(dof, confidence), dof, 1.0 - power))


def reading_statistics(
    corrections: np.ndarray,
    cov_corrections: np.ndarray,
    chol: np.ndarray,
    q: np.ndarray,
    dof: int,
    confidence: float,
) -> ReadingStatistics:
    """Normalised corrections, local redundancies, detectable biases and equivalent sets of the
    measured readings from a reconciliation's corrections v [SI] and their covariance [SI²], the
    Cholesky factor L of Σ and the projector Q of the scaled corrections."""
    n = corrections.size
    variance = np.diag(cov_corrections).copy() if n else np.zeros(0)
    sigma_ii = np.einsum("ij,ij->i", chol, chol) if n else np.zeros(0)
    rho = np.clip(variance / np.where(sigma_ii > 0, sigma_ii, 1.0), 0.0, 1.0)
    redundant = rho >= 1e-12
    sd = np.sqrt(np.where(redundant, variance, 1.0))
    normalised = np.where(redundant, np.abs(corrections) / sd, np.nan)
    lam = detectable_noncentrality(dof, confidence)
    linv = np.linalg.inv(chol) if n else np.zeros((0, 0))
    q_i = np.einsum("ji,jk,ki->i", linv, q, linv) if n else np.zeros(0)
    with np.errstate(divide="ignore"):
        detectable = np.where(rho >= CHECKABLE, np.sqrt(lam / np.where(q_i > 0, q_i, np.inf)), np.inf)
    corr = cov_corrections / np.outer(sd, sd) if n else np.zeros((0, 0))
    set_of = [-1] * n
    sets: list[list[int]] = []
    for i in range(n):
        if set_of[i] >= 0 or not redundant[i]:
            continue
        members = [
            j for j in range(n) if redundant[j] and set_of[j] < 0 and abs(corr[i, j]) >= EQUIVALENT
        ]
        for j in members:
            set_of[j] = len(sets)
        sets.append(members)
    return ReadingStatistics(normalised, rho, detectable, sets, set_of, corr)
