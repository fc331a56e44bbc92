"""Orifice plates by ISO 5167-1:2003 and ISO 5167-2:2003: pure, vectorised model functions.

Mass flow rate (ISO 5167-1:2003, 5.1; ISO 5167-2:2003, 4)

    qm = C / sqrt(1 - beta^4) · epsilon · (pi / 4) · d^2 · sqrt(2 · dp · rho1)

with C the Reader-Harris/Gallagher discharge coefficient (ISO 5167-2:2003, 5.3.2.1, formula 4),
epsilon the expansibility factor (5.3.2.2, formula 5), beta = d / D with d and D at the flowing
temperature, rho1 the density at the upstream tap. C depends on the pipe Reynolds number
Re_D = 4 qm / (pi mu D), so qm and C are solved together (a fixed-point iteration, which converges
because dC/dRe_D is small).

Limits of use (ISO 5167-2:2003, 5.3.1; from memory of the text): d >= 12.5 mm,
50 mm <= D <= 1000 mm, 0.1 <= beta <= 0.75; corner and D and D/2 taps Re_D >= 5000 for
beta <= 0.56 and Re_D >= 16000 beta^2 above; flange taps Re_D >= 5000 and Re_D >= 170 beta^2 D
(D in mm); the expansibility equation only for p2/p1 >= 0.75.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

STANDARD = "ISO 5167-2:2003"

#: tap arrangements of ISO 5167-2:2003, 5.2 (our spelling: d-d2 is "D and D/2")
TAPS = ("corner", "flange", "d-d2")

#: geometric limits of ISO 5167-2:2003, 5.3.1 (from memory of the text) [m] and [-]
BORE_MIN = 0.0125
PIPE_MIN = 0.050
PIPE_MAX = 1.000
BETA_MIN = 0.10
BETA_MAX = 0.75
#: the expansibility equation holds for p2/p1 >= 0.75 (ISO 5167-2:2003, 5.3.2.2)
PRESSURE_RATIO_MIN = 0.75


def _tap_lengths(taps: str, diameter_pipe):
    """L1 and L'2 of ISO 5167-2:2003, 5.3.2.1 [-] for a tap arrangement."""
    if taps == "corner":
        return 0.0, 0.0
    if taps == "flange":
        lf = 0.0254 / np.asarray(diameter_pipe, float)
        return lf, lf
    if taps == "d-d2":
        return 1.0, 0.47
    raise ValueError(f"taps must be one of {', '.join(TAPS)}, not {taps!r}")


def discharge_coefficient_rhg_iso5167_2_2003(beta, diameter_pipe, reynolds_pipe, taps: str = "flange"):
    """Reader-Harris/Gallagher discharge coefficient C of ISO 5167-2:2003, 5.3.2.1 (formula 4).

    C = 0.5961 + 0.0261 b^2 - 0.216 b^8 + 0.000521 (1e6 b / Re_D)^0.7
        + (0.0188 + 0.0063 A) b^3.5 (1e6 / Re_D)^0.3
        + (0.043 + 0.080 e^(-10 L1) - 0.123 e^(-7 L1)) (1 - 0.11 A) b^4 / (1 - b^4)
        - 0.031 (M'2 - 0.8 M'2^1.1) b^1.3
        [+ 0.011 (0.75 - b)(2.8 - D / 25.4 mm) where D < 71.12 mm]
    with A = (19000 b / Re_D)^0.8 and M'2 = 2 L'2 / (1 - b).

    Parameters
    ----------
    beta : float or ndarray [-]            diameter ratio d / D at the flowing temperature
    diameter_pipe : float or ndarray [m]   pipe internal diameter D at the flowing temperature
    reynolds_pipe : float or ndarray [-]   pipe Reynolds number Re_D
    taps : str                             'corner', 'flange' or 'd-d2' (D and D/2)

    Returns
    -------
    ndarray [-]
    """
    b = np.asarray(beta, float)
    dd = np.asarray(diameter_pipe, float)
    re = np.asarray(reynolds_pipe, float)
    l1, l2 = _tap_lengths(taps, dd)
    a = (19000.0 * b / re) ** 0.8
    m2 = 2.0 * np.asarray(l2, float) / (1.0 - b)
    b4 = b ** 4
    c = (0.5961 + 0.0261 * b ** 2 - 0.216 * b ** 8 + 0.000521 * (1e6 * b / re) ** 0.7
         + (0.0188 + 0.0063 * a) * b ** 3.5 * (1e6 / re) ** 0.3
         + (0.043 + 0.080 * np.exp(-10.0 * np.asarray(l1, float)) - 0.123 * np.exp(-7.0 * np.asarray(l1, float)))
         * (1.0 - 0.11 * a) * b4 / (1.0 - b4)
         - 0.031 * (m2 - 0.8 * m2 ** 1.1) * b ** 1.3)
    small = dd < 0.07112
    return np.where(small, c + 0.011 * (0.75 - b) * (2.8 - dd / 0.0254), c)


def expansibility_iso5167_2_2003(beta, pressure_differential, pressure_upstream, isentropic_exponent):
    """Expansibility factor epsilon of ISO 5167-2:2003, 5.3.2.2 (formula 5).

    epsilon = 1 - (0.351 + 0.256 b^4 + 0.93 b^8) [1 - (p2 / p1)^(1 / kappa)],  p2 = p1 - dp

    Parameters
    ----------
    beta : float or ndarray [-]
    pressure_differential : float or ndarray [Pa]   dp = p1 - p2
    pressure_upstream : float or ndarray [Pa]       p1, absolute, at the upstream tap
    isentropic_exponent : float or ndarray [-]      kappa

    Returns
    -------
    ndarray [-]   (the standard states it for p2/p1 >= 0.75 only: see orifice_row_limits)
    """
    b4 = np.asarray(beta, float) ** 4
    p1 = np.asarray(pressure_upstream, float)
    tau = (p1 - np.asarray(pressure_differential, float)) / p1
    return 1.0 - (0.351 + 0.256 * b4 + 0.93 * b4 * b4) * (1.0 - tau ** (1.0 / np.asarray(isentropic_exponent, float)))


def diameter_at_temperature(diameter_reference, expansion_coefficient, temperature, temperature_reference):
    """A diameter at the flowing temperature, d = d_ref [1 + lambda (T - T_ref)] (ISO 5167-1:2003, 7.4.1).

    Parameters
    ----------
    diameter_reference : float [m]       measured at temperature_reference
    expansion_coefficient : float [1/K]  linear expansion coefficient of the material
    temperature : float or ndarray [K]   flowing temperature (the line temperature)
    temperature_reference : float [K]

    Returns
    -------
    ndarray [m]
    """
    return diameter_reference * (1.0 + expansion_coefficient * (np.asarray(temperature, float) - temperature_reference))


@dataclass
class OrificeFlow:
    """Per-row results of :func:`mass_flow_iso5167_2_2003` (arrays of one shape, SI).

    mass_flow [kg/s], discharge_coefficient [-], expansibility [-], reynolds_pipe [-], beta [-],
    diameter_pipe [m], diameter_bore [m] (at the flowing temperature), converged (bool).
    """

    mass_flow: np.ndarray
    discharge_coefficient: np.ndarray
    expansibility: np.ndarray
    reynolds_pipe: np.ndarray
    beta: np.ndarray
    diameter_pipe: np.ndarray
    diameter_bore: np.ndarray
    converged: np.ndarray


def mass_flow_iso5167_2_2003(pressure_differential, density_upstream, pressure_upstream, diameter_pipe,
                             diameter_bore, viscosity, isentropic_exponent, taps: str = "flange",
                             *, tolerance: float = 1e-14, max_iterations: int = 60) -> OrificeFlow:
    """Mass flow rate through an orifice plate, ISO 5167-1:2003 formula (1) with ISO 5167-2:2003 C and epsilon.

    qm = C / sqrt(1 - b^4) · epsilon · (pi/4) d^2 · sqrt(2 dp rho1), C = C(Re_D), Re_D = 4 qm / (pi mu D)

    Parameters
    ----------
    pressure_differential : float or ndarray [Pa]   dp; rows with dp <= 0 get qm = 0
    density_upstream : float or ndarray [kg/m3]     rho1 at the upstream tap
    pressure_upstream : float or ndarray [Pa]       p1, absolute, at the upstream tap
    diameter_pipe : float or ndarray [m]            D at the flowing temperature
    diameter_bore : float or ndarray [m]            d at the flowing temperature
    viscosity : float or ndarray [Pa s]             dynamic viscosity at the upstream tap
    isentropic_exponent : float or ndarray [-]      kappa
    taps : str                                      'corner', 'flange' or 'd-d2'
    tolerance : float [-]                           relative change of C that ends the iteration
    max_iterations : int

    Returns
    -------
    OrificeFlow
        Rows that did not converge (or had non-finite inputs) have NaN mass flow.
    """
    dp, rho, p1, dd, d, mu, kappa = np.broadcast_arrays(*(np.asarray(v, float) for v in (
        pressure_differential, density_upstream, pressure_upstream, diameter_pipe, diameter_bore, viscosity,
        isentropic_exponent)))
    shape = dp.shape
    dp, rho, p1, dd, d, mu, kappa = (np.array(v, float).reshape(-1) for v in (dp, rho, p1, dd, d, mu, kappa))
    beta = d / dd
    eps = expansibility_iso5167_2_2003(beta, dp, p1, kappa)
    with np.errstate(invalid="ignore", divide="ignore"):
        # everything in qm except C
        k = 1.0 / np.sqrt(1.0 - beta ** 4) * eps * (np.pi / 4.0) * d * d * np.sqrt(2.0 * np.where(dp > 0, dp, np.nan) * rho)
        c = np.full(dp.shape, 0.6)
        converged = np.zeros(dp.shape, bool)
        active = np.isfinite(k) & (k > 0)
        re = np.full(dp.shape, np.nan)
        for _ in range(max_iterations):
            if not active.any():
                break
            re_a = 4.0 * c[active] * k[active] / (np.pi * mu[active] * dd[active])
            c_new = discharge_coefficient_rhg_iso5167_2_2003(beta[active], dd[active], re_a, taps)
            done = np.abs(c_new - c[active]) <= tolerance * np.abs(c_new)
            c[active] = c_new
            re[active] = re_a
            idx = np.flatnonzero(active)
            converged[idx[done]] = True
            active[idx[done]] = False
            active[idx[~np.isfinite(c_new)]] = False
        qm = np.where(converged, c * k, np.nan)
        re = 4.0 * qm / (np.pi * mu * dd)
    no_flow = np.isfinite(dp) & (dp <= 0) & np.isfinite(rho)
    qm = np.where(no_flow, 0.0, qm)
    c = np.where(converged, c, np.nan)
    return OrificeFlow(*(v.reshape(shape) for v in (qm, c, eps, re, beta, dd, d, converged | no_flow)))


def reynolds_limit_iso5167_2_2003(beta, diameter_pipe, taps: str = "flange"):
    """Smallest Re_D of ISO 5167-2:2003, 5.3.1 for the tap arrangement [-] (from memory of the text).

    Parameters
    ----------
    beta : float or ndarray [-]
    diameter_pipe : float or ndarray [m]
    taps : str
    """
    b = np.asarray(beta, float)
    if taps == "flange":
        return np.maximum(5000.0, 170.0 * b * b * np.asarray(diameter_pipe, float) * 1000.0)
    _tap_lengths(taps, diameter_pipe)  # validates the name
    return np.where(b <= 0.56, 5000.0, 16000.0 * b * b)


def orifice_row_limits(flow: OrificeFlow, pressure_differential, pressure_upstream, taps: str = "flange") -> dict:
    """Per-row flags of the limits of ISO 5167-2:2003, 5.3.1 and 5.3.2.2 (True = outside).

    Parameters
    ----------
    flow : OrificeFlow
    pressure_differential : ndarray [Pa]
    pressure_upstream : ndarray [Pa]
    taps : str

    Returns
    -------
    dict of bool ndarray: ``orifice_reynolds`` (Re_D below the limit, flowing rows only),
    ``orifice_pressure_ratio`` (p2/p1 < 0.75), ``orifice_beta`` (beta at the flowing temperature
    outside 0.1-0.75), ``negative_differential_pressure`` (dp < 0: no flow).
    """
    dp = np.asarray(pressure_differential, float)
    p1 = np.asarray(pressure_upstream, float)
    flowing = np.isfinite(dp) & (dp > 0)
    with np.errstate(invalid="ignore"):
        low_re = flowing & np.isfinite(flow.reynolds_pipe) & (
            flow.reynolds_pipe < reynolds_limit_iso5167_2_2003(flow.beta, flow.diameter_pipe, taps))
        ratio = flowing & ((p1 - dp) / p1 < PRESSURE_RATIO_MIN)
        beta = (flow.beta < BETA_MIN) | (flow.beta > BETA_MAX)
    return {"orifice_reynolds": low_re, "orifice_pressure_ratio": ratio, "orifice_beta": beta,
            "negative_differential_pressure": np.isfinite(dp) & (dp < 0)}


def geometry_problem_iso5167_2_2003(diameter_pipe: float, diameter_bore: float) -> str | None:
    """Why a plate and pipe are outside ISO 5167-2:2003, 5.3.1 (None when inside).

    Parameters
    ----------
    diameter_pipe : float [m]   D at the reference temperature
    diameter_bore : float [m]   d at the reference temperature
    """
    if not (np.isfinite(diameter_pipe) and diameter_pipe > 0):
        return "the pipe diameter must be a positive length"
    if not (np.isfinite(diameter_bore) and diameter_bore > 0):
        return "the bore diameter must be a positive length"
    if diameter_bore >= diameter_pipe:
        return (f"the bore ({diameter_bore * 1000:g} mm) is not smaller than the pipe "
                f"({diameter_pipe * 1000:g} mm)")
    beta = diameter_bore / diameter_pipe
    if not BETA_MIN <= beta <= BETA_MAX:
        return f"beta = d/D = {beta:.4f} is outside {STANDARD}'s limits {BETA_MIN} <= beta <= {BETA_MAX} (5.3.1)"
    if not PIPE_MIN <= diameter_pipe <= PIPE_MAX:
        return (f"the pipe diameter {diameter_pipe * 1000:g} mm is outside {STANDARD}'s limits "
                f"{PIPE_MIN * 1000:g} mm <= D <= {PIPE_MAX * 1000:g} mm (5.3.1)")
    if diameter_bore < BORE_MIN:
        return f"the bore {diameter_bore * 1000:g} mm is below {STANDARD}'s limit d >= {BORE_MIN * 1000:g} mm (5.3.1)"
    return None


def discharge_coefficient_uncertainty_iso5167_2_2003(beta, diameter_pipe, reynolds_pipe):
    """Relative expanded uncertainty (95 %) of C, ISO 5167-2:2003, 5.3.3.1 [%] (from memory of the text).

    (0.7 - b) % for 0.1 <= b < 0.2, 0.5 % for 0.2 <= b <= 0.6, (1.667 b - 0.5) % for 0.6 < b <= 0.75;
    plus 0.9 (0.75 - b)(2.8 - D / 25.4 mm) % where D < 71.12 mm and 0.5 % where b > 0.5 and Re_D < 10000
    (added arithmetically).

    Parameters
    ----------
    beta : float or ndarray [-]
    diameter_pipe : float or ndarray [m]
    reynolds_pipe : float or ndarray [-]
    """
    b = np.asarray(beta, float)
    dd = np.asarray(diameter_pipe, float)
    u = np.where(b < 0.2, 0.7 - b, np.where(b <= 0.6, 0.5, 1.667 * b - 0.5))
    u = u + np.where(dd < 0.07112, 0.9 * (0.75 - b) * (2.8 - dd / 0.0254), 0.0)
    return u + np.where((b > 0.5) & (np.asarray(reynolds_pipe, float) < 10000.0), 0.5, 0.0)


def expansibility_uncertainty_iso5167_2_2003(pressure_differential, pressure_upstream, isentropic_exponent):
    """Relative expanded uncertainty (95 %) of epsilon, 3.5 dp / (kappa p1) %, ISO 5167-2:2003, 5.3.3.2 [%].

    Parameters
    ----------
    pressure_differential : float or ndarray [Pa]
    pressure_upstream : float or ndarray [Pa]
    isentropic_exponent : float or ndarray [-]
    """
    return 3.5 * np.asarray(pressure_differential, float) / (
        np.asarray(isentropic_exponent, float) * np.asarray(pressure_upstream, float))
