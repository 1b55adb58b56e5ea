"""What a heat exchanger's evaluation keeps beside its balance: the T–Q profile of both sides and
the exchanger's rating values (duty, terminal and minimum approaches, LMTD, arrangement).

Plain records, all values SI, held on :class:`audit.results.StepResult` as ``profile`` and
``exchanger`` (None for the other kinds). The reports draw and tabulate them; they are not written
to the JSON or CSV outputs.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(slots=True)
class ExchangerProfile:
    """Both sides' temperatures along the exchanger, at points of cumulative duty counted from the
    cold inlet: ``duty`` [W], ``hot_T`` and ``cold_T`` [K] (same length, duty ascending);
    ``pinch_index`` is the point of the smallest hot-minus-cold difference."""

    duty: list[float]
    hot_T: list[float]
    cold_T: list[float]
    pinch_index: int

    @property
    def approach(self) -> list[float]:
        """Hot-minus-cold temperature difference at each point [K]."""
        return [h - c for h, c in zip(self.hot_T, self.cold_T, strict=True)]


@dataclass(slots=True)
class ExchangerValues:
    """A heat exchanger's rating values.

    ``duty``: heat the cold side receives [W]; ``arrangement``: ``counter-current`` or
    ``co-current``; ``ends``: the names of the two terminals (``hot end``/``cold end``, or
    ``inlet end``/``outlet end``) and ``end_approach`` their hot-minus-cold differences [K];
    ``min_approach`` [K] and where it occurs, as cumulative duty from the cold inlet
    ``min_approach_duty`` [W] and as a fraction of the duty ``min_approach_fraction`` [-] (None when
    the profiles could not be evaluated); ``lmtd``: logarithmic mean temperature difference of the
    terminals [K] (None when a terminal difference is not positive).
    """

    duty: float
    arrangement: str
    ends: tuple[str, str]
    end_approach: tuple[float, float]
    lmtd: float | None
    min_approach: float | None = None
    min_approach_duty: float | None = None
    min_approach_fraction: float | None = None
