"""Physical constants used across meterfix.

The molar gas constant is exact in the 2019 SI (CODATA 2018), R = N_A * k.
US customary forms are derived from it with the exact NIST SP 811 conversion factors.
Individual equations of state keep their own published R (see meterfix.z.aga8_detail and
meterfix.z.gerg2008), because their reference values were computed with those.
"""

from __future__ import annotations

#: Avogadro constant [1/mol], exact (2019 SI)
AVOGADRO = 6.02214076e23
#: Boltzmann constant [J/K], exact (2019 SI)
BOLTZMANN = 1.380649e-23
#: Molar gas constant [J/(mol K)], exact (2019 SI): N_A * k
R = AVOGADRO * BOLTZMANN  # 8.31446261815324

# exact conversion factors (NIST SP 811, appendix B)
PSI = 4.4482216152605 / 0.0254**2  # [Pa] per lbf/in2
FOOT = 0.3048  # [m]
POUND = 0.45359237  # [kg]
RANKINE = 5.0 / 9.0  # [K] per degR
BTU_IT = 1055.05585262  # [J]
LBF = 4.4482216152605  # [N]

#: R in psia ft3 / (lbmol degR)
R_PSIA_FT3_PER_LBMOL_R = R * (POUND * 1000.0) * RANKINE / (PSI * FOOT**3)
#: R in ft lbf / (lbmol degR)
R_FT_LBF_PER_LBMOL_R = R * (POUND * 1000.0) * RANKINE / (LBF * FOOT)
#: R in Btu_IT / (lbmol degR)
R_BTU_PER_LBMOL_R = R * (POUND * 1000.0) * RANKINE / BTU_IT

#: Standard acceleration of gravity [m/s2] (CGPM 1901)
G_N = 9.80665
#: Standard atmosphere [Pa]
ATM = 101325.0
#: Absolute zero on the Celsius scale [K]
T0 = 273.15


def specific_gas_constant(molar_mass):
    """Specific gas constant R/M.

    Parameters
    ----------
    molar_mass : float or ndarray [kg/mol]

    Returns
    -------
    float or ndarray [J/(kg K)]
    """
    return R / molar_mass
