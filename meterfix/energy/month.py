"""The heating value of one analysis for the month run, by ISO 6976 (edition named), and US practice.

:func:`analysis_energy` gives the gross real-gas volumetric heating value at the contract base
(the metering reference) with the standard's own compression factor and the source text naming
the edition. Where the standard does not tabulate what the contract asks for, the step that is
not the standard's is named in the source text:

* metering temperature not tabulated (0, 15, 15.55 = 60 degF, 20 degC) or metering pressure outside
  90–110 kPa: the standard's molar value with Z at the base from the run's Z method;
* combustion temperature not tabulated (0, 15, 15.55, 20, 25 degC): the earlier sums of
  :mod:`meterfix.energy.kirchhoff` (AGA8 25 degC values, Kirchhoff's law), as before.

US practice (:func:`us_heating_value`): gross heating value in Btu/scf at 14.73 psia and 60 degF
from the standard's 15.55 degC (60 degF) values, on a dry basis and water-saturated (the gas
saturated with water vapour at 60 degF and 14.73 psia, the water counted with the standard's own
convention: its tabulated gross value is the enthalpy of vaporisation of water, i.e. the vapour
condenses). The basis is stated with each figure.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import BTU_IT, FOOT, PSI
from ..errors import SettingsError
from . import iso6976 as I

#: US base: 14.73 psia and 60 degF (common practice in US gas contracts)
US_PRESSURE = 14.73 * PSI
US_TEMPERATURE = (60.0 - 32.0) / 1.8 + 273.15
BTU_PER_SCF = BTU_IT / FOOT**3  # J/m3 per Btu/ft3


@dataclass(frozen=True)
class AnalysisEnergy:
    """Energy figures of one analysis at the contract base.

    Attributes
    ----------
    gross_volumetric : float [J/m3]  gross real-gas volumetric heating value at the base
    source : str                     how it was computed (edition named)
    edition : str                    "ISO 6976:2016", "ISO 6976:1995", or the fallback's name
    properties : Iso6976Result or None   every ISO 6976 property (None when not tabulated)
    relative_density, wobbe_index : float   real gas at the base (NaN when not by the standard)
    """

    gross_volumetric: float
    source: str
    edition: str
    properties: object = None
    relative_density: float = np.nan
    wobbe_index: float = np.nan


def detail_vector(gas, edition: str = "2016"):
    """Mole fractions over the standard's component list, and their standard uncertainties (or None).

    A composition read from an analysis keeps the components as reported (``gas.detail``); one
    built from the 21 Z components is used as it is (their names are the standard's).
    """
    detail = gas.detail or {n: float(v) for n, v in gas.as_dict().items()}
    x = I.vector(detail, edition)
    s = x.sum()
    if s > 0:
        x = x / s
    u = gas.detail_uncertainty
    uv = I.vector(u, "2016") / s if u else None
    return x, uv, gas.correlation


def analysis_energy(gas, *, temperature_combustion: float, temperature_metering: float, pressure_metering: float,
                    edition: str = "2016", z_metering: float | None = None) -> AnalysisEnergy:
    """Gross real-gas volumetric heating value of a Composition at the contract base.

    Parameters
    ----------
    gas : Composition
    temperature_combustion : float [K]
    temperature_metering, pressure_metering : float [K], [Pa]   the contract base
    edition : {"2016", "1995"}
    z_metering : float [-], optional   the run's Z at the base (used only where the standard's
        summation factors are not tabulated for the base)
    """
    T = I.tables(edition)
    try:
        k1, _ = I.column_of(edition, temperature_combustion=temperature_combustion)
    except SettingsError:
        if edition != "2016":
            raise
        from .kirchhoff import heating_value

        r = heating_value(gas, temperature_combustion=temperature_combustion, temperature_metering=temperature_metering,
                          pressure_metering=pressure_metering, z_metering=z_metering)
        return AnalysisEnergy(r.gross_volumetric_real, f"from the analysis ({r.edition}; the combustion "
                              f"temperature {temperature_combustion - 273.15:g} degC is not tabulated in ISO 6976:2016)",
                              r.edition)
    x, u, r = detail_vector(gas, edition)
    ref = _ref_text(temperature_combustion, temperature_metering, pressure_metering)
    try:
        res = I.properties(x, temperature_combustion=temperature_combustion, temperature_metering=temperature_metering,
                           pressure_metering=pressure_metering, edition=edition,
                           u_x=u if edition == "2016" else None, correlation=r)
    except SettingsError as exc:
        if z_metering is None or "combustion" in exc.message:
            raise
        # the base is not one the standard tabulates: the standard's molar value, the run's Z
        from ..constants import R

        hm = float(x @ T.Hg[:, k1]) * 1e3
        hv = hm * pressure_metering / (z_metering * R * temperature_metering)
        return AnalysisEnergy(hv, f"from the analysis: {T.edition} molar value at {temperature_combustion - 273.15:g} "
                              f"degC combustion; the base ({ref}) is not tabulated by the standard, so Z at the base "
                              "is the run's Z method", T.edition)
    v = res.values
    return AnalysisEnergy(v["gross_heating_value_volumetric"], f"from the analysis ({T.edition}, {ref})", T.edition,
                          res, v["relative_density"], v["wobbe_index_gross"])


def _ref_text(t1, t2, p2) -> str:
    return f"combustion {t1 - 273.15:g} degC, metering {t2 - 273.15:.4g} degC and {p2 / 1000:.6g} kPa"


def water_vapour_pressure(temperature: float) -> float:
    """Saturation pressure of water [Pa] at a temperature [K] (IAPWS 1992 auxiliary equation of Wagner &
    Pruss, J. Phys. Chem. Ref. Data 22 (1993) 783; valid 273.16 K to the critical point)."""
    tc, pc = 647.096, 22.064e6
    tau = 1.0 - temperature / tc
    a = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
    e = (1.0, 1.5, 3.0, 3.5, 4.0, 7.5)
    return pc * float(np.exp(tc / temperature * sum(ai * tau**ei for ai, ei in zip(a, e))))


def us_heating_value(gas, edition: str = "2016") -> dict:
    """Gross heating value in Btu/scf at 14.73 psia and 60 degF, dry and water-saturated.

    Returns
    -------
    dict  ``dry_Btu_per_scf``, ``water_saturated_Btu_per_scf``, ``water_mole_fraction_saturated``,
          ``basis`` (text)
    """
    x, _, _ = detail_vector(gas, edition)
    if edition == "1995":
        return {"basis": "not available: ISO 6976:1995 has no 60 degF (15.55 degC) values"}
    kw = dict(temperature_combustion=US_TEMPERATURE, temperature_metering=US_TEMPERATURE,
              pressure_metering=US_PRESSURE, edition=edition)
    dry = I.properties(x, **kw)["gross_heating_value_volumetric"]
    T = I.tables(edition)
    xw = water_vapour_pressure(US_TEMPERATURE) / US_PRESSURE
    if x[T.index["water"]] == 0:
        wet = x * (1.0 - xw)
        wet[T.index["water"]] = xw
        sat = I.properties(wet, **kw)["gross_heating_value_volumetric"]
    else:
        sat = np.nan  # the analysis states its own water: it is not saturated a second time
    return {"dry_Btu_per_scf": dry / BTU_PER_SCF, "water_saturated_Btu_per_scf": sat / BTU_PER_SCF,
            "water_mole_fraction_saturated": xw,
            "basis": f"gross, real gas, 14.73 psia and 60 degF, combustion 60 degF ({T.edition} 15.55 degC values); "
                     "dry: as analysed; water-saturated: saturated with water vapour at 60 degF and 14.73 psia "
                     "(IAPWS vapour pressure), water counted by the standard's convention"}
