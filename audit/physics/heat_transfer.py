"""Heat-exchanger temperature differences.

References
----------
.. [1] F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, *Fundamentals of Heat and Mass
   Transfer*, 6th ed., Wiley, 2007, ch. 11 (sections 11.3 and 11.4).
"""

from __future__ import annotations

import math


def log_mean_temperature_difference(dT1: float, dT2: float) -> float | None:
    """Logarithmic mean temperature difference (LMTD) of a two-stream exchanger.

    Method: the mean of the hot-minus-cold difference along a parallel-flow or counter-flow
    exchanger with constant specific heats and overall coefficient [1, eqs. 11.15 and 11.18]::

        ΔT_lm = (ΔT1 − ΔT2) / ln(ΔT1 / ΔT2)

    with ΔT1, ΔT2 the differences at the two terminals (counter-flow: ΔT1 = T_h,in − T_c,out,
    ΔT2 = T_h,out − T_c,in; parallel flow: ΔT1 = T_h,in − T_c,in, ΔT2 = T_h,out − T_c,out). When the
    two are equal the limit is ΔT1.

    Parameters
    ----------
    dT1 : hot-minus-cold temperature difference at one terminal [K]
    dT2 : hot-minus-cold temperature difference at the other terminal [K]

    Returns
    -------
    ΔT_lm : logarithmic mean temperature difference [K], or None when either difference is not
        positive (the mean is undefined: the terminals cross or touch)

    References
    ----------
    .. [1] Incropera, DeWitt, Bergman, Lavine, *Fundamentals of Heat and Mass Transfer*, 6th ed.,
       Wiley, 2007, section 11.3, eqs. 11.15 and 11.18.
    """
    if dT1 <= 0.0 or dT2 <= 0.0:
        return None
    if math.isclose(dT1, dT2, rel_tol=1e-9):
        return 0.5 * (dT1 + dT2)
    return (dT1 - dT2) / math.log(dT1 / dT2)
