"""The smallest approach of two temperature profiles, found adaptively.

:func:`approach_minimum` evaluates the approach ΔT(x) of a heat exchanger at its breakpoints (the
ends and the points where a side changes phase, where the profiles bend) and refines between
them only where the approach can still dip below the smallest value found: a segment's midpoint
gives the deviation e from the straight line through its ends (a stretch between breakpoints wider
than :data:`MAX_WIDTH` is first cut into equal pieces); a parabola through the three points
is no lower than min(ΔT) + min(e, 0) on the segment, and halving the segment divides e by four.
Segments are halved lowest bound first until no bound lies more than :data:`TOLERANCE` below the
smallest ΔT found. Used by :mod:`audit.steps.kinds.heat_exchanger`.
"""

from __future__ import annotations

import heapq
import math
from collections.abc import Callable, Sequence

TOLERANCE = 0.05
"""How far below the smallest evaluated approach the true minimum may lie [K]."""

MIN_WIDTH = 1.0 / 4096
"""Narrowest segment refined (a fraction of the duty)."""

MAX_WIDTH = 0.25
"""Widest first segment: a longer stretch between breakpoints is cut into equal pieces, so that
every part of the profile is looked at with at least 1/8 of the duty between points (an S-shaped
approach, with a dip beside a hump, shows no curvature over a long segment)."""


def approach_minimum(approach: Callable[[float], float], breaks: Sequence[float]) -> list[float]:
    """The fractions x at which ``approach`` [K] was evaluated, in order: every one of ``breaks``
    (sorted fractions of duty from 0 to 1, the ends included), each segment's midpoint, and the
    midpoints of the halvings that were needed (see the module docstring). The smallest of the
    evaluated approaches is within :data:`TOLERANCE` of the segment minimum of a locally
    parabolic approach."""
    values = {x: approach(x) for x in breaks}
    heap: list[tuple[float, float, float]] = []

    def add(a: float, b: float) -> None:
        m = 0.5 * (a + b)
        values[m] = approach(m)
        deviation = values[m] - 0.5 * (values[a] + values[b])
        bound = min(values[a], values[b], values[m]) + min(deviation, 0.0)
        heapq.heappush(heap, (bound, a, b))

    for a, b in zip(breaks, breaks[1:], strict=False):
        pieces = max(1, math.ceil((b - a) / MAX_WIDTH - 1e-9))
        cuts = [a + (b - a) * k / pieces for k in range(pieces)] + [b]
        for k in range(1, pieces):
            values[cuts[k]] = approach(cuts[k])
        for lo, hi in zip(cuts, cuts[1:], strict=False):
            add(lo, hi)
    best = min(values.values())
    while heap and heap[0][0] < best - TOLERANCE:
        _, a, b = heapq.heappop(heap)
        if b - a <= MIN_WIDTH:
            continue
        m = 0.5 * (a + b)
        add(a, m)
        add(m, b)
        best = min(best, values[0.5 * (a + m)], values[0.5 * (m + b)])
    return sorted(values)
