"""Data reconciliation of a measured balance: the most likely plant state, and the reading that
is wrong (VDI 2048 Part 1; Narasimhan and Jordache, 2000; Kuehn and Davidson, 1961).

How the parts fit:

* :mod:`audit.reconcile.variables` builds the variables (the uncertain readings as
  :mod:`audit.review.uncertainty` reads them, and the unmeasured quantities) and the constraints
  (each step's mass and first-law balances) from a solved balance; it re-evaluates streams and
  steps through :mod:`audit.solve`;
* :mod:`audit.reconcile.correlations` checks the correlations the balance declares and builds
  the covariance of the readings;
* :mod:`audit.reconcile.solver` solves the weighted least-squares problem with the constraints
  satisfied (Gauss–Newton/SQP on the linearised constraints, projection of the unmeasured);
* :mod:`audit.reconcile.statistics` the global test, normalised corrections (Šidák's critical
  value), equivalent sets and detectability; :mod:`audit.reconcile.rounds` one solved round;
* :mod:`audit.reconcile.gross` serial elimination of gross errors (the readings hard to tell
  apart named with each, and the removal set that fits best kept);
* :mod:`audit.reconcile.after` phase checks and the audit of the reconciled balance;
* :mod:`audit.reconcile.assemble` builds the :class:`~audit.reconcile.records.Reconciliation`.

Reconciliation is a statistical estimate, not a calibration.

The package loads numpy and scipy only when :func:`reconcile` is first used: the reports import
:mod:`audit.reconcile.records` (plain records) without them.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any

from audit.reconcile.records import Reconciliation

if TYPE_CHECKING:
    from audit.reconcile.assemble import reconcile


def __getattr__(name: str) -> Any:
    if name == "reconcile":
        from audit.reconcile.assemble import reconcile

        return reconcile
    raise AttributeError(name)


def reconcile_file(
    path: str | Path, confidence: float = 0.95, unmeasured: tuple[str, ...] = ()
) -> Reconciliation:
    """Read, solve and reconcile the balance file at ``path`` (see :func:`reconcile`)."""
    from audit.reading import load_balance
    from audit.reconcile.assemble import reconcile
    from audit.solve import solve

    balance, document = load_balance(path)
    return reconcile(solve(balance, document), confidence, unmeasured)


__all__ = ["Reconciliation", "reconcile", "reconcile_file"]
