"""The misconfigurations the corrector check tries: models of ln(V_corrector / V_ours), bounds, fits.

Each cause models y = ln(V_corrector / V_ours) per interval (see meterfix.checks.corrector for the
table). Every parameter is bounded to values a corrector could really hold; a fit that ends on a
bound is not a plausible explanation. The bounds and why:

================================  ==========================  ================================================
parameter                         bounds                      why
================================  ==========================  ================================================
atmospheric pressure used         40-110 kPa absolute         sea level to about 7000 m, the site settings' range
  (offset, absolute logs)         -70 to +70 kPa              two values of that range apart at most
base pressure used                95-105 kPa                  bases in use are 100-101.56 kPa (common practice)
                                                              with room for a typing error of a few percent
base temperature used             268.15-303.15 K (-5..30 C)  bases in use are 0, 15, 15.56 (60 F), 20, 25 C
fixed line temperature used       243.15-333.15 K (-30..60 C) the climatic range of volume conversion devices
                                                              (EN 12405-1 classes, from memory)
fixed Z at line conditions used   0.60-1.10                   natural gas at metering conditions (Z charts,
                                                              common practice)
fixed line pressure used (type T) 0.5-2 x the logged range    a type T device's set pressure is the regulated
                                                              line pressure (EN 12405-1 device types)
================================  ==========================  ================================================

Conversion device types of EN 12405-1 (from memory): a type T device converts for temperature only,
with a fixed pressure (and a fixed compressibility ratio); a type PT device converts for pressure and
temperature with a fixed Z ratio (or none, Z = 1); a type PTZ device computes Z from p and T. The
causes ``fixed-pressure`` (type T), ``ideal-gas`` and ``fixed-z`` (type PT) are what a device of
that type gives when it stands where a PTZ device is needed; ``DEVICE_TYPE`` names the type.
"""

from __future__ import annotations

import numpy as np
from .lsq import least_squares_bounded

#: common base conditions (common practice: 14.73, 14.65, 14.696 and 14.7 psia; 101.325 and 100 kPa;
#: 0, 15, 60 degF, 20 and 25 degC), used to rank and to credit causes that give a constant ratio
COMMON_BASE_PRESSURES = (101325.0, 101559.775, 101007.8, 100000.0, 101352.93, 101325.353)
COMMON_BASE_TEMPERATURES = (273.15, 288.15, 288.705556, 293.15, 298.15)
#: an implied base condition within this relative distance of a common one counts as that one
COMMON_BASE_TOLERANCE = 2e-4

BOUND_ATM = (40e3, 110e3)
BOUND_ATM_OFFSET = (-70e3, 70e3)
BOUND_BASE_PRESSURE = (95e3, 105e3)
BOUND_BASE_TEMPERATURE = (268.15, 303.15)
BOUND_FIXED_TEMPERATURE = (243.15, 333.15)
BOUND_FIXED_Z = (0.60, 1.10)

Z_CAUSES = ("ideal-gas", "fpv-not-squared", "fixed-z")
OTHER_CAUSES = ("base-pressure", "base-temperature", "atmospheric-pressure", "gauge-as-absolute", "fixed-temperature")
#: causes that stand alone (no pairs): a type T device's fixed pressure absorbs Z, base and atmospheric causes
ALONE_CAUSES = ("fixed-pressure",)
#: the EN 12405-1 conversion device type each cause's output is that of (a misconfigured PTZ device otherwise)
DEVICE_TYPE = {"fixed-pressure": "T", "ideal-gas": "PT", "fixed-z": "PT"}

#: plain words for each cause (outputs may use them)
CAUSE_TEXT = {
    "ideal-gas": "corrector set to ideal gas (Z = 1)", "fpv-not-squared": "Fpv applied instead of Fpv² = Zb/Zf",
    "fixed-z": "a fixed Zb/Zf instead of one computed from p and T", "base-pressure": "another base pressure",
    "base-temperature": "another base temperature", "atmospheric-pressure": "another atmospheric pressure",
    "gauge-as-absolute": "gauge pressure read as absolute (no atmospheric pressure added)",
    "fixed-temperature": "a fixed gas temperature",
    "fixed-pressure": "a fixed line pressure (the output of a type T conversion device, EN 12405-1)",
}


def device_type(name: str) -> str:
    """The EN 12405-1 device type a cause (or combination 'a+b') behaves as: 'T', 'PT' or 'PTZ'."""
    kinds = {DEVICE_TYPE.get(c, "PTZ") for c in name.split("+")}
    return "T" if "T" in kinds else ("PT" if "PT" in kinds else "PTZ")


def cause_text(name: str) -> str:
    """'ideal-gas+atmospheric-pressure' → plain words."""
    return " and ".join(CAUSE_TEXT.get(c, c) for c in name.split("+"))


class Cause:
    """One cause: model (linearised in ln Z), exact model, parameter count, start, bounds, report."""

    def __init__(self, name, nparam, f, theta0=None, scale=1.0, report=None, exact=None, bounds=None):
        self.name, self.nparam, self.f, self.scale, self.report = name, nparam, f, scale, report
        self.theta0 = theta0
        #: the model with Z evaluated at the believed state (f is its linearisation in ln Z)
        self.exact = exact
        #: (low, high) of the parameter, None without parameter
        self.bounds = bounds


def causes(ctx, zweight=1.0):
    """The causes; ``zweight`` is how much of Z the corrector applies (1, ½ for Fpv, 0 for Z = 1)."""
    L, beta, gamma, pf, lnT = ctx["L"], ctx["beta"], ctx["gamma"], ctx["pf"], ctx["lnT"]
    pb, tb, zb = ctx["pressure_base"], ctx["temperature_base"], ctx["z_base_mean"]
    atm = ctx["atm_mean"]
    atm_j = ctx["atm"]
    known = np.isfinite(atm_j)
    atm_filled = np.where(known, atm_j, atm if np.isfinite(atm) else 0.0)
    gauge = pf - atm_filled

    def p_used(th):
        # a fixed atmospheric pressure th[0] where we know the one we used; else an offset th[0]
        return gauge + th[0] if ctx["atm_known"] else pf + th[0]

    def atm_f(th):
        return (1.0 - zweight * beta) * np.log(np.maximum(p_used(th) / pf, 1e-9))

    def atm_exact(th):
        pu = np.maximum(p_used(th), 1.0)
        if zweight == 0.0:
            return np.log(pu / pf)
        return np.log(pu / pf) + zweight * (ctx["lnZ"] - np.log(ctx["z_at"](pu, ctx["T"])))

    def atm_report(th):
        if ctx["atm_known"]:
            return {"pressure_atm_used_Pa": float(th[0]), "atmospheric_pressure_offset_Pa": float(th[0] - atm)}
        return {"atmospheric_pressure_offset_Pa": float(th[0])}

    # gauge read as absolute: the corrector takes the gauge reading as the absolute pressure
    def g_used(th):
        return np.maximum(pf - (atm_filled if ctx["atm_known"] else th[0]), 1.0)

    gz = {}

    def g_exact(th):
        pu = g_used(th)
        if zweight == 0.0:
            return np.log(pu / pf)
        key = (zweight, None if ctx["atm_known"] else float(th[0]))
        if key not in gz:
            gz.clear()
            gz[key] = np.log(ctx["z_at"](pu, ctx["T"]))
        return np.log(pu / pf) + zweight * (ctx["lnZ"] - gz[key])

    def g_report(th):
        a = float(np.average(atm_filled, weights=ctx["w"])) if ctx["atm_known"] else float(th[0])
        return {"pressure_used": "gauge reading taken as absolute", "pressure_atm_left_out_Pa": a}

    def ft_exact(th):
        if zweight == 0.0:
            return lnT - th[0]
        return lnT - th[0] + zweight * (ctx["lnZ"] - np.log(ctx["z_at"](pf, np.full_like(pf, np.exp(th[0])))))

    lb = lambda lo, hi: (np.log(pb / hi), np.log(pb / lo))  # noqa: E731  θ = ln(pb/pb')
    gauge_known = ctx["atm_known"]
    out = {
        "ideal-gas": Cause("ideal-gas", 0, lambda th: L, report=lambda th: {"z_line_used": 1.0, "z_base_used": 1.0}),
        "fpv-not-squared": Cause("fpv-not-squared", 0, lambda th: 0.5 * L,
                                 report=lambda th: {"factor_applied": "Fpv = sqrt(Zb/Zf) instead of Zb/Zf"}),
        "fixed-z": Cause("fixed-z", 1, lambda th: L + th[0], [0.0], 0.01,
                         report=lambda th: {"factor_z_used": float(np.exp(th[0])),
                                            "z_line_used": float(zb / np.exp(th[0]))},
                         bounds=(np.log(zb / BOUND_FIXED_Z[1]), np.log(zb / BOUND_FIXED_Z[0]))),
        "base-pressure": Cause("base-pressure", 1, lambda th: np.full_like(L, th[0]), [0.0], 0.01,
                               report=lambda th: {"pressure_base_used_Pa": base_used(ctx, th[0], "p")},
                               bounds=lb(*BOUND_BASE_PRESSURE)),
        "base-temperature": Cause("base-temperature", 1, lambda th: np.full_like(L, th[0]), [0.0], 0.01,
                                  report=lambda th: {"temperature_base_used_K": base_used(ctx, th[0], "t")},
                                  bounds=(np.log(BOUND_BASE_TEMPERATURE[0] / tb), np.log(BOUND_BASE_TEMPERATURE[1] / tb))),
        "atmospheric-pressure": Cause("atmospheric-pressure", 1, atm_f, [atm if ctx["atm_known"] else 0.0], 1000.0,
                                      report=atm_report, exact=atm_exact,
                                      bounds=BOUND_ATM if ctx["atm_known"] else BOUND_ATM_OFFSET),
        "gauge-as-absolute": Cause("gauge-as-absolute", 0 if gauge_known else 1,
                                   (lambda th: g_exact(th)) if gauge_known else
                                   (lambda th: (1.0 - zweight * beta) * np.log(g_used(th) / pf)),
                                   None if gauge_known else [101325.0], 1000.0, report=g_report,
                                   exact=None if gauge_known else g_exact,
                                   bounds=None if gauge_known else BOUND_ATM),
        # type T: V (p_fixed/pb)(Tb/T) K with a fixed K (Z ratio or 1): y = ln(p_fixed K) - ln pf + ln(Zf/Zb)
        "fixed-pressure": Cause("fixed-pressure", 1, lambda th: th[0] - np.log(pf) + L,
                                [float(np.average(np.log(pf), weights=ctx["w"]))], 0.01,
                                report=lambda th: {"pressure_line_used_Pa": float(np.exp(th[0])), "device_type": "T"},
                                bounds=(float(np.log(0.5 * np.min(pf))), float(np.log(2.0 * np.max(pf))))),
        "fixed-temperature": Cause("fixed-temperature", 1, lambda th: (1.0 + zweight * gamma) * (lnT - th[0]),
                                   [float(np.average(lnT, weights=ctx["w"]))], 0.01,
                                   report=lambda th: {"temperature_line_used_K": float(np.exp(th[0]))},
                                   exact=ft_exact, bounds=tuple(np.log(BOUND_FIXED_TEMPERATURE))),
    }
    return out


def base_used(ctx, theta, which):
    """The base pressure [Pa] or temperature [K] the corrector used, from the constant log ratio θ.

    The corrector evaluates Zb at its own base: e^θ = (pb/pb')·(Zb'/Zb) or (Tb'/Tb)·(Zb'/Zb);
    solved by fixed-point iteration with the main analysis' Z."""
    pb, tb, zb = ctx["pressure_base"], ctx["temperature_base"], ctx["z_base_main"]
    x = pb * np.exp(-theta) if which == "p" else tb * np.exp(theta)
    if not np.isfinite(x) or not ((1e3 < x < 1e7) if which == "p" else (100.0 < x < 1000.0)):
        return float(x)
    for _ in range(3):
        zx = ctx["z_base_at"](x if which == "p" else pb, tb if which == "p" else x)
        x = pb * zx / zb * np.exp(-theta) if which == "p" else tb * zb / zx * np.exp(theta)
    return float(x)


def combinations(real_gas=True):
    """Single causes and the pairs that can occur together (collinear pairs left out)."""
    combos = [(c,) for c in Z_CAUSES + OTHER_CAUSES]
    for z in Z_CAUSES:
        for o in OTHER_CAUSES:
            if z == "fixed-z" and (o.startswith("base-") or o == "fixed-temperature"):
                continue  # collinear: a constant Zb/Zf absorbs a constant ratio
            combos.append((z, o))
    for i, a in enumerate(OTHER_CAUSES):
        for b in OTHER_CAUSES[i + 1:]:
            if a.startswith("base-") and (b.startswith("base-") or b == "fixed-temperature"):
                continue  # collinear constants
            if {a, b} == {"atmospheric-pressure", "gauge-as-absolute"}:
                continue  # two statements about the same pressure
            combos.append((a, b))
    combos += [(c,) for c in ALONE_CAUSES]
    if not real_gas:
        combos = [c for c in combos if not any(x in Z_CAUSES for x in c)]
    return combos


def plausibility(report: dict) -> tuple[float, str]:
    """(ranking penalty, reason or '') for implied base conditions that no contract uses.

    A constant ratio is credited to a base condition only when the implied value is a common one
    (within COMMON_BASE_TOLERANCE); otherwise the cause is tried, not credited."""
    pen, why = 0.0, ""
    if "pressure_base_used_Pa" in report:
        x = report["pressure_base_used_Pa"]
        if min(abs(x - c) / c for c in COMMON_BASE_PRESSURES) >= COMMON_BASE_TOLERANCE:
            pen, why = 2.0, f"implied base pressure {x:.0f} Pa is no base condition in use"
    if "temperature_base_used_K" in report:
        x = report["temperature_base_used_K"]
        if min(abs(x - c) / c for c in COMMON_BASE_TEMPERATURES) >= COMMON_BASE_TOLERANCE:
            pen, why = pen + 2.0, (why + "; " if why else "") + f"implied base temperature {x:.2f} K is no base " \
                                                                 "condition in use"
    return pen, why


def fit(combo, cause_set, y, sw, *, exact=False, loss="linear", f_scale=1.0):
    """Fit one combination of causes, bounded; returns (theta, thetas, parts, model, at_bound, jac)."""
    parts = [cause_set[c] for c in combo]
    sizes = [p.nparam for p in parts]
    lo = np.array(sum(([p.bounds[0]] for p in parts if p.nparam), []), float)
    hi = np.array(sum(([p.bounds[1]] for p in parts if p.nparam), []), float)
    theta0 = np.array(sum((list(p.theta0) for p in parts if p.nparam), []), float)
    scales = np.array(sum(([p.scale] for p in parts if p.nparam), []), float)

    def split(theta):
        out, i = [], 0
        for s in sizes:
            out.append(theta[i:i + s])
            i += s
        return out

    def model(theta):
        return sum(p.f(th) for p, th in zip(parts, split(theta)))

    jac = None
    if len(theta0):
        span = hi - lo
        theta0 = np.clip(theta0, lo + 1e-6 * span, hi - 1e-6 * span)
        theta, jac = least_squares_bounded(lambda th: sw * (y - model(th)), theta0, (lo, hi), x_scale=scales,
                                           loss=loss, f_scale=f_scale)
    else:
        theta = np.zeros(0)
    if exact and any(p.exact is not None for p in parts) and len(theta):
        theta = _refine(parts, split, model, theta, scales, y, sw, lo, hi)
    f = exact_model(parts, split(theta)) if exact else model(theta)
    at_bound = bool(len(theta)) and bool(np.any(np.abs(theta - lo) <= 1e-6 * (hi - lo))
                                         or np.any(np.abs(hi - theta) <= 1e-6 * (hi - lo)))
    return theta, split(theta), parts, f, at_bound, jac


def exact_model(parts, thetas):
    return sum((p.exact if p.exact is not None else p.f)(th) for p, th in zip(parts, thetas))


def _refine(parts, split, model, theta, scales, y, sw, lo, hi, iterations=4):
    """Gauss-Newton on the exact model, with the Jacobian of its linearisation (cheap, close), kept in bounds."""
    theta = np.array(theta, float)
    for _ in range(iterations):
        r = y - exact_model(parts, split(theta))
        jac = np.empty((len(y), len(theta)))
        f0 = model(theta)
        for i in range(len(theta)):
            t2 = theta.copy()
            t2[i] += 1e-6 * scales[i]
            jac[:, i] = (model(t2) - f0) / (1e-6 * scales[i])
        step, *_ = np.linalg.lstsq(sw[:, None] * jac, sw * r, rcond=None)
        new = np.clip(theta + step, lo, hi)
        done = np.all(np.abs(new - theta) <= 1e-12 * np.maximum(np.abs(theta), scales))
        theta = new
        if done:
            break
    return theta
