"""Ultrasonic meters' speed of sound against the equation of state (AGA Report No. 10 / ISO 17089-1 practice).

An ultrasonic meter measures the speed of sound of the gas on every path; the equation of state
(AGA8 DETAIL or GERG-2008) gives it from the analysis at line pressure and temperature. A deviation
beyond a threshold (0.2 % by default, common practice) points at a wrong analysis, a wrong
temperature or pressure, or a meter fault.
"""

from __future__ import annotations

import numpy as np


def speed_of_sound_deviation_pct(measured, computed):
    """100 (w_measured / w_computed - 1) [%].

    Parameters
    ----------
    measured : float or ndarray [m/s]
    computed : float or ndarray [m/s]
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        return 100.0 * (np.asarray(measured, float) / np.asarray(computed, float) - 1.0)


def beyond_threshold(deviation_pct, threshold_pct: float = 0.2):
    """True where |deviation| > threshold (NaN deviations are not flagged).

    Parameters
    ----------
    deviation_pct : ndarray [%]
    threshold_pct : float [%]
    """
    d = np.asarray(deviation_pct, float)
    with np.errstate(invalid="ignore"):
        return np.isfinite(d) & (np.abs(d) > threshold_pct)


def contiguous_periods(mask):
    """(start, stop) positions of the runs of True in a boolean array (stop exclusive).

    Parameters
    ----------
    mask : ndarray of bool [-]
    """
    m = np.asarray(mask, bool).astype(np.int8)
    edges = np.diff(np.concatenate([[0], m, [0]]))
    return list(zip(np.flatnonzero(edges == 1).tolist(), np.flatnonzero(edges == -1).tolist()))
