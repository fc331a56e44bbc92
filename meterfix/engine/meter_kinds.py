"""The month run's meter kinds: orifice plates, Coriolis meters, volume meters with a calibration,
and the ultrasonic speed-of-sound check. Each turns the log's primary measurement into the interval
quantities the pipeline totals; the equations are meterfix.meters'.

Orifice (ISO 5167-2:2003): qm from the interval's mean differential pressure, with rho1, kappa and
mu at the upstream tap (the logged pressure plus dp when the static tap is downstream), d and D at
the line temperature; interval mass = qm x duration; volume at line = mass / rho1; base volume =
mass / rho_b. Coriolis (AGA Report No. 11 practice): base volume = mass / rho_b. Both take rho from
the Z method with its own gas constant and molar masses (meterfix.meters.density). Volume meters with
an error curve or a meter factor: V / (1 + e(Q)/100) before the PTZ correction.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..errors import InputError, SettingsError
from ..meters import coriolis as C
from ..meters import error_curve as E
from ..meters import orifice_iso5167 as O
from ..meters import speed_of_sound as S
from ..meters.density import gas_state
from ..meters.viscosity import viscosity_lee_gonzalez_eakin_1966
from .flow_meter import FlowMeter, bore_and_pipe_at
from .flow_meter import CORIOLIS_METER, ORIFICE_METER, VOLUME_METER


@dataclass
class KindResult:
    """What a meter kind gives the pipeline (SI; arrays one value per interval).

    volume_line [m3]: the volume at line conditions the PTZ step corrects (orifice, Coriolis:
    mass / rho_line; calibrated volume meters: the volume after the meter error); mass [kg] or
    None (measured mass: orifice and Coriolis); density_base [kg/m3] or None (the Z method's, for
    base volume = mass / density_base); columns: further interval columns; flags: bool arrays;
    record: the summary's ``flow_meter`` section; findings: text findings; density_source: text.
    """

    volume_line: np.ndarray
    mass: np.ndarray | None = None
    density_base: np.ndarray | None = None
    columns: dict = field(default_factory=dict)
    flags: dict = field(default_factory=dict)
    record: dict = field(default_factory=dict)
    findings: list = field(default_factory=list)
    density_source: str = ""


def _per_analysis(which, in_force, fn):
    """Run fn(k, sel, analysis) for every analysis in force somewhere."""
    for k, a in enumerate(in_force):
        sel = which == k
        if sel.any():
            fn(k, sel, a)


def _base_density(which, in_force, settings, method: str, n: int):
    """The Z method's real-gas density at base conditions for each interval [kg/m3], and its source text."""
    out = np.full(n, np.nan)
    src = [""]

    def one(k, sel, a):
        st = gas_state(settings.base_pressure, settings.base_temperature, a.gas, method, molar_mass=a.molar_mass)
        out[sel] = float(np.asarray(st.density).reshape(-1)[0])
        src[0] = st.source
    _per_analysis(which, in_force, one)
    return out, src[0]


def _mass_column(frame: pd.DataFrame, duration):
    """Interval mass [kg] from a ``mass`` column, else ``mass_flow`` [kg/s] x duration."""
    if "mass" in frame.columns and frame["mass"].notna().any():
        return frame["mass"].to_numpy(float), "mass per interval (log)"
    if "mass_flow" in frame.columns and frame["mass_flow"].notna().any():
        return C.mass_from_flow_rate(frame["mass_flow"].to_numpy(float), duration), "mass flow rate x duration (log)"
    raise InputError("a Coriolis meter's log needs a mass per interval or a mass flow rate column",
                     column="mass", hint="name it e.g. 'Mass [kg]' or 'Mass flow [kg/h]', or map it with "
                                         "--column 'HEADER=mass [kg]'")


def coriolis_kind(frame, p, tl, duration, which, in_force, settings, method: str) -> KindResult:
    """Coriolis: base volume = mass / rho_b; the line volume mass / rho_line (for the interval table).

    A negative interval mass is flagged ``negative_mass`` and left out of the totals (counted without
    a result) unless the meter is declared bidirectional."""
    n = len(frame)
    mass, how = _mass_column(frame, duration)
    rho_b, src = _base_density(which, in_force, settings, method, n)
    rho_l = np.full(n, np.nan)

    def one(k, sel, a):
        rho_l[sel] = gas_state(p[sel], tl[sel], a.gas, method, molar_mass=a.molar_mass).density
    _per_analysis(which, in_force, one)
    with np.errstate(invalid="ignore", divide="ignore"):
        vl = mass / rho_l
    neg = np.isfinite(mass) & (mass < 0)
    if not settings.bidirectional:
        mass = np.where(neg, np.nan, mass)  # reverse flow left out (counted without result), as for volumes
    rec = {"kind": CORIOLIS_METER, "practice": "AGA Report No. 11: base volume = mass / base density",
           "mass_from": how, "density": src}
    return KindResult(vl, mass, rho_b, {"density_line": rho_l}, {"negative_mass": neg}, rec, [], src)


def orifice_kind(frame, p, tl, duration, which, in_force, settings, method: str, fm: FlowMeter) -> KindResult:
    """Orifice plate by ISO 5167-2:2003 from the interval mean differential pressure."""
    n = len(frame)
    has_root = "pressure_differential_root" in frame.columns and frame["pressure_differential_root"].notna().any()
    if "pressure_differential" not in frame.columns and not has_root:
        raise InputError("an orifice meter's log needs a differential pressure column", column="pressure_differential",
                         hint="name it e.g. 'Differential pressure [mbar]', or map it with "
                              "--column 'HEADER=pressure_differential [mbar]'")
    dp_mean = frame["pressure_differential"].to_numpy(float) if "pressure_differential" in frame.columns else None
    if has_root:
        # qm is proportional to sqrt(dp): the interval's mean flow is that of (mean sqrt(dp))^2
        root = frame["pressure_differential_root"].to_numpy(float)
        dp = np.where(np.isfinite(root), np.sign(root) * root * root, np.nan if dp_mean is None else dp_mean)
    else:
        dp = dp_mean
    p1 = p + np.where(np.isfinite(dp), dp, 0.0) if fm.static_tap == "downstream" else p
    d_bore, d_pipe = bore_and_pipe_at(fm, tl)
    rho1 = np.full(n, np.nan)
    kappa = np.full(n, np.nan)
    mu = np.full(n, np.nan)
    src = [""]

    def one(k, sel, a):
        st = gas_state(p1[sel], tl[sel], a.gas, method, molar_mass=a.molar_mass,
                       speed_of_sound=fm.isentropic_exponent is None)
        rho1[sel] = st.density
        src[0] = st.source
        if fm.isentropic_exponent is None:
            if st.isentropic_exponent is None:
                raise SettingsError(f"the Z method {method} gives no speed of sound, so no isentropic exponent",
                                    hint="set isentropic_exponent in [flow_meter] (e.g. 1.3), or use "
                                         "method = aga8-detail or gerg-2008")
            kappa[sel] = st.isentropic_exponent
        mu[sel] = fm.viscosity if fm.viscosity is not None else viscosity_lee_gonzalez_eakin_1966(
            tl[sel], st.density, a.molar_mass)
    _per_analysis(which, in_force, one)
    if fm.isentropic_exponent is not None:
        kappa[:] = fm.isentropic_exponent
    flow = O.mass_flow_iso5167_2_2003(dp, rho1, p1, d_pipe, d_bore, mu, kappa, fm.taps)
    with np.errstate(invalid="ignore"):
        mass = flow.mass_flow * duration
        vl = mass / rho1
    lim = O.orifice_row_limits(flow, dp, p1, fm.taps)
    rho_b, _ = _base_density(which, in_force, settings, method, n)
    cols = {"pressure_differential": dp, "pressure_upstream": p1, "density_line": rho1,
            "discharge_coefficient": flow.discharge_coefficient, "expansibility": flow.expansibility,
            "reynolds_pipe": flow.reynolds_pipe, "isentropic_exponent": kappa, "viscosity": mu}
    rec = {"kind": ORIFICE_METER, "standard": fm.standard, "taps": fm.taps, "static_tap": fm.static_tap,
           "pipe_diameter_m": fm.pipe_diameter, "bore_diameter_m": fm.bore_diameter,
           "diameters_at_K": fm.diameters_at, "pipe_expansion_per_K": fm.pipe_expansion,
           "bore_expansion_per_K": fm.bore_expansion, "beta": fm.bore_diameter / fm.pipe_diameter,
           "discharge_coefficient": "Reader-Harris/Gallagher, ISO 5167-2:2003 5.3.2.1, Re_D iterated",
           "expansibility": "ISO 5167-2:2003 5.3.2.2",
           "isentropic_exponent": ("stated" if fm.isentropic_exponent is not None
                                   else "w^2 rho / p of the Z method's equation of state"),
           "viscosity": ("stated" if fm.viscosity is not None else "Lee, Gonzalez and Eakin (1966)"),
           "density": src[0], "differential_pressure_averaging": (
               _root_averaging(dp_mean, dp, flow, duration) if has_root else _averaging(frame, dp, flow, duration))}
    findings = []
    av = rec["differential_pressure_averaging"]
    if av.get("root_mean_column") is None and av.get("month_mean_error_pct") is not None:
        findings.append(
            f"the log holds interval means of the differential pressure, not of its square root: "
            f"sqrt(mean dp) >= mean sqrt(dp), so each interval's flow is overstated by the dp "
            f"fluctuation within it (not known from the log); computing the month from the month's mean dp "
            f"would have been {av['month_mean_error_pct']:+.3f} % off the interval-by-interval figure")
    return KindResult(vl, mass, rho_b, cols, lim, rec, findings, src[0])


def _averaging(frame, dp, flow, duration) -> dict:
    """What averaging dp (instead of sqrt(dp)) does: the month from its mean dp against interval by interval."""
    out = {"root_mean_column": None}
    ok = np.isfinite(flow.mass_flow) & np.isfinite(dp) & (dp > 0) & np.isfinite(duration)
    if ok.sum() < 2:
        return out
    w = duration[ok]
    m_int = float(np.sum(flow.mass_flow[ok] * w))
    # qm ~ sqrt(dp) at fixed C, epsilon, rho: the month from sqrt(time-mean dp)
    k = flow.mass_flow[ok] / np.sqrt(dp[ok])
    m_mean = float(np.sum(k * w) / np.sum(w) * np.sqrt(np.sum(dp[ok] * w) / np.sum(w)) * np.sum(w))
    out["month_mean_error_pct"] = 100.0 * (m_mean / m_int - 1.0) if m_int else None
    return out


def _root_averaging(dp_mean, dp_eff, flow, duration) -> dict:
    """The log has the mean sqrt(dp): it is used, and with the mean dp also logged the error that averaging dp
    would have made is measured: 100 (sum sqrt(mean dp) / sum mean sqrt(dp) - 1) over the month's flow."""
    out = {"root_mean_column": "pressure_differential_root", "used": "interval mean of sqrt(dp)"}
    if dp_mean is None:
        return out
    ok = np.isfinite(flow.mass_flow) & np.isfinite(dp_mean) & (dp_mean > 0) & (dp_eff > 0)
    if ok.any():
        m = flow.mass_flow[ok] * duration[ok]
        out["mean_dp_error_pct"] = 100.0 * (float(np.sum(m * np.sqrt(dp_mean[ok] / dp_eff[ok]))) / float(np.sum(m)) - 1.0)
    return out


def calibrated_volume(frame, vl, duration, fm: FlowMeter) -> KindResult:
    """A volume meter's volume after its error curve or meter factor."""
    if fm.meter_factor is not None:
        err = np.full(len(vl), E.error_of_meter_factor(fm.meter_factor))
        outside = np.zeros(len(vl), bool)
        how = f"meter factor {fm.meter_factor:g}"
    else:
        q_curve, e_curve = fm.curve
        with np.errstate(invalid="ignore", divide="ignore"):
            q = vl / duration
        err, outside = E.meter_error_linear(q, q_curve, e_curve)
        how = "error curve, linear in the flow rate at line conditions, end values held outside it"
    corrected = E.volume_corrected_for_error(vl, err)
    ind, cor = float(np.nansum(vl)), float(np.nansum(corrected))
    effect = 100.0 * (cor / ind - 1.0) if ind else None
    rec = {"kind": VOLUME_METER, "calibration": how, "error_curve": fm.error_curve, "meter_factor": fm.meter_factor,
           "uncorrected_volume_indicated_m3": ind, "uncorrected_volume_after_meter_error_m3": cor,
           "meter_error_correction_pct": effect, "intervals_outside_curve": int(np.count_nonzero(outside))}
    return KindResult(corrected, None, None, {"volume_line_indicated": vl, "meter_error": err},
                      {"outside_error_curve": outside}, rec)


def speed_of_sound_check(frame, p, tl, which, in_force, method: str, threshold: float, index, duration):
    """Measured speed of sound against the Z method's at line P and T (None without the column).

    Returns (columns dict, summary dict) or (None, None).
    """
    if "speed_of_sound" not in frame.columns or not frame["speed_of_sound"].notna().any():
        return None, None
    w_m = frame["speed_of_sound"].to_numpy(float)
    w_c = np.full(len(w_m), np.nan)
    src = [""]

    def one(k, sel, a):
        st = gas_state(p[sel], tl[sel], a.gas, method, molar_mass=a.molar_mass, speed_of_sound=True)
        if st.speed_of_sound is None:
            raise SettingsError(f"the Z method {method} gives no speed of sound; the log's speed of sound cannot be checked",
                                hint="use method = aga8-detail or gerg-2008, or map the column to ignore "
                                     "(--column 'HEADER=ignore')")
        w_c[sel] = st.speed_of_sound
        src[0] = method
    _per_analysis(which, in_force, one)
    dev = S.speed_of_sound_deviation_pct(w_m, w_c)
    over = S.beyond_threshold(dev, threshold)
    fin = np.isfinite(dev)
    periods = []
    for a, b in S.contiguous_periods(over):
        start = index[a] - pd.Timedelta(seconds=float(np.nan_to_num(duration[a])))
        periods.append({"start": start.isoformat(), "end": index[b - 1].isoformat(), "intervals": int(b - a),
                        "mean_deviation_pct": float(np.mean(dev[a:b]))})
    largest = int(np.nanargmax(np.abs(np.where(fin, dev, np.nan)))) if fin.any() else None
    summary = {"method": src[0], "threshold_pct": threshold, "compared_intervals": int(fin.sum()),
               "flagged_intervals": int(over.sum()),
               "mean_deviation_pct": float(np.mean(dev[fin])) if fin.any() else None,
               "largest_deviation_pct": float(dev[largest]) if largest is not None else None,
               "largest_deviation_at": index[largest].isoformat() if largest is not None else None,
               "periods": periods,
               "practice": "AGA Report No. 10 / ISO 17089-1: the meter's speed of sound against the equation of "
                           "state's at line pressure and temperature"}
    cols = {"speed_of_sound": w_m, "speed_of_sound_computed": w_c, "speed_of_sound_deviation_pct": dev}
    return cols, (summary, over)
