"""Volume meters with a calibration: an error curve or one meter factor.

A calibration states the meter's error e(Q) = 100 (V_indicated - V_true) / V_true [%] at flow
rates Q at line conditions. The true volume of an interval is V_indicated / (1 + e/100), with e
interpolated linearly in the interval's flow rate Q = V / t (common practice for calibration
curves); outside the calibrated range the end values are held and the rows flagged. A meter factor
MF multiplies the indicated volume: V_true = MF · V_indicated (common practice).
"""

from __future__ import annotations

import numpy as np

from ..errors import SettingsError


def error_curve_checked(curve, *, setting: str = "error_curve"):
    """The flow rates [m3/s] and errors [%] of a curve given as [[Q m3/h, e %], ...], checked.

    Parameters
    ----------
    curve : sequence of pairs [flow rate m3/h at line conditions, error %]
    setting : str   the setting's name for the message

    Returns
    -------
    (ndarray [m3/s], ndarray [%])

    Raises
    ------
    SettingsError   fewer than one point, a point that is not two numbers, flow rates not
                    strictly increasing (unsorted or duplicated), a negative flow rate, an error
                    of -100 % or below
    """
    hint = f"give {setting} as [[flow rate m3/h, error %], ...] with strictly increasing flow rates, e.g. [[50, 1.2], [150, 0.4]]"
    try:
        arr = np.array(curve, dtype=float)
    except (TypeError, ValueError):
        raise SettingsError(f"{setting} is not a list of [flow rate, error] pairs", hint=hint) from None
    if arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 1:
        raise SettingsError(f"{setting} is not a list of [flow rate, error] pairs", hint=hint)
    if not np.isfinite(arr).all():
        raise SettingsError(f"{setting} holds a value that is not a finite number", hint=hint)
    q, e = arr[:, 0], arr[:, 1]
    if (q < 0).any():
        raise SettingsError(f"{setting} has a negative flow rate ({q[q < 0][0]:g} m3/h)", hint=hint)
    d = np.diff(q)
    if (d == 0).any():
        i = int(np.flatnonzero(d == 0)[0])
        raise SettingsError(f"{setting} has the flow rate {q[i]:g} m3/h twice (points {i + 1} and {i + 2})", hint=hint)
    if (d < 0).any():
        i = int(np.flatnonzero(d < 0)[0])
        raise SettingsError(f"{setting}'s flow rates are not in increasing order ({q[i]:g} then {q[i + 1]:g} m3/h, "
                            f"points {i + 1} and {i + 2})", hint=hint)
    if (e <= -100).any():
        raise SettingsError(f"{setting} has an error of -100 % or below", hint=hint)
    return q / 3600.0, e


def meter_error_linear(flow_rate, curve_flow_rate, curve_error):
    """Meter error at each flow rate, linear in Q between the calibration points, end values held.

    Parameters
    ----------
    flow_rate : float or ndarray [m3/s]        at line conditions
    curve_flow_rate : ndarray [m3/s]           strictly increasing
    curve_error : ndarray [%]

    Returns
    -------
    (ndarray [%], ndarray of bool)   the error, and True where Q lies outside the calibrated range
    (or is not finite: error NaN)
    """
    q = np.asarray(flow_rate, float)
    e = np.interp(q, curve_flow_rate, curve_error)
    e = np.where(np.isfinite(q), e, np.nan)
    with np.errstate(invalid="ignore"):
        outside = np.isfinite(q) & ((q < curve_flow_rate[0]) | (q > curve_flow_rate[-1]))
    return e, outside


def volume_corrected_for_error(volume, error_pct):
    """True volume from the indicated one, V / (1 + e/100) [m3].

    Parameters
    ----------
    volume : float or ndarray [m3]   indicated, at line conditions
    error_pct : float or ndarray [%]
    """
    return np.asarray(volume, float) / (1.0 + np.asarray(error_pct, float) / 100.0)


def error_of_meter_factor(meter_factor):
    """The error [%] equivalent to a meter factor, e = 100 (1/MF - 1), so that V / (1 + e/100) = MF · V.

    Parameters
    ----------
    meter_factor : float [-]
    """
    return 100.0 * (1.0 / meter_factor - 1.0)
