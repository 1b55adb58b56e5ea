"""Finding the temperature at which a property that rises with temperature takes a given value
(a gas mixture from (P, h) or (P, s)).

References
----------
.. [1] M. Dowell, P. Jarratt, "A modified regula falsi method for computing the root of an
   equation", BIT 11 (1971) 168–174 (the Illinois algorithm).
"""

from __future__ import annotations

from collections.abc import Callable


def rising_root(
    residual: Callable[[float], float],
    low: float,
    high: float,
    f_low: float,
    f_high: float,
    target: float,
) -> float:
    """The root of ``residual`` (property minus ``target``, rising with T) between ``low`` and
    ``high`` [K], bracketing values ``f_low`` ≤ 0 ≤ ``f_high``, by regula falsi with the Illinois
    modification [1]: stops when the bracket is narrower than 1e-9 T or |residual| is below
    1e-10 max(1, |target|), or after 100 steps."""
    side = 0
    T = low
    for _ in range(100):
        T = (low * f_high - high * f_low) / (f_high - f_low)
        f = residual(T)
        if f == 0.0 or high - low < 1e-9 * T:
            break
        if f > 0.0:
            high, f_high = T, f
            if side == -1:
                f_low /= 2.0
            side = -1
        else:
            low, f_low = T, f
            if side == 1:
                f_high /= 2.0
            side = 1
        if abs(f) < 1e-10 * max(1.0, abs(target)):
            break
    return T
