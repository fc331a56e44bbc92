"""AGA8 GROSS coefficient tables (published figures, kept as data).

Source of every figure below: AGA Report No. 8 Part 1, third edition (2017), GROSS
characterization method (the virial equation Z = 1 + B rho + C rho^2 of a three-component
mixture: an equivalent hydrocarbon, nitrogen and carbon dioxide; the SGERG-88 form also given in
ISO 12213-3:2006), as printed in the standard's public reference code (NIST, repository
usnistgov/AGA8, ``AGA8CODE/C/Gross.cpp``, routines ``SetupGross``, ``Bmix``, ``GrossMethod1``,
``GrossMethod2`` and ``GrossInputs``), from which the figures were read.

Units are those of the report: B in L/mol (dm3/mol), C in (L/mol)^2, T in K, molar heating value
H in kJ/mol at 25 degC, molar masses in g/mol.

Index convention of the virial coefficients: 1 equivalent hydrocarbon (CH), 2 nitrogen,
3 carbon dioxide.
"""

from __future__ import annotations

from .aga8_detail_coefficients import MOLAR_MASS_G_PER_MOL, R_DETAIL

#: Molar gas constant of the GROSS method [J/(mol K)] (AGA8 Part 1; the same as DETAIL)
R_GROSS = R_DETAIL
#: molar masses [g/mol]: the same figures as the DETAIL characterization (AGA8 Part 1)
MOLAR_MASS_GROSS_G_PER_MOL = MOLAR_MASS_G_PER_MOL

# ---------------------------------------------------------------------------------------------
# Second and third virial coefficients of nitrogen and CO2 and their cross terms, each a
# quadratic in T: X(T) = x0 + x1 T + x2 T^2  (AGA8 Part 1, GROSS parameter table)
# ---------------------------------------------------------------------------------------------
#: B_ij of the pairs among nitrogen (2) and CO2 (3) [L/mol]: (x0, x1, x2)
B_N2_CO2 = {
    (2, 2): (-0.1446, 0.00074091, -0.00000091195),
    (2, 3): (-0.339693, 0.00161176, -0.00000204429),
    (3, 3): (-0.86834, 0.0040376, -0.0000051657),
}
#: C_ijk of the triples among nitrogen (2) and CO2 (3) [(L/mol)^2]: (x0, x1, x2)
C_N2_CO2 = {
    (2, 2, 2): (0.0078498, -0.000039895, 0.000000061187),
    (2, 2, 3): (0.00552066, -0.0000168609, 0.0000000157169),
    (2, 3, 3): (0.00358783, 0.00000806674, -0.0000000325798),
    (3, 3, 3): (0.0020513, 0.000034888, -0.000000083703),
}
#: equivalent hydrocarbon: B_CH(T, H) = sum_m b_m(T) H^m, b_m(T) = rows[m] . (1, T, T^2);
#: rows m = 0, 1, 2 of (x0, x1, x2)
B_CH = (
    (-0.425468, 0.002865, -0.00000462073),
    (0.000877118, -0.00000556281, 0.0000000088151),
    (-0.000000824747, 0.00000000431436, -6.08319e-12),
)
#: C_CH(T, H) = sum_m c_m(T) H^m, same layout as B_CH
C_CH = (
    (-0.302488, 0.00195861, -0.00000316302),
    (0.000646422, -0.00000422876, 0.00000000688157),
    (-0.000000332805, 0.0000000022316, -3.67713e-12),
)

# ---------------------------------------------------------------------------------------------
# Cross terms of the equivalent hydrocarbon (AGA8 Part 1, GROSS mixing rules)
# ---------------------------------------------------------------------------------------------
#: B_CH-N2 = (BETA0 + BETA1 (BETA_T - T)^2) (B_CH + B_N2) / 2
CROSS_B_CH_N2 = (0.72, 0.00001875, 320.0)
#: B_CH-CO2 = CROSS_B_CH_CO2 sqrt(B_CH B_CO2)
CROSS_B_CH_CO2 = -0.865
#: C_CH-CH-N2 and C_CH-N2-N2 factor: (GAMMA0 + GAMMA1 (T - GAMMA_T))
CROSS_C_CH_N2 = (0.92, 0.0013, 270.0)
#: C_CH-CH-CO2 and C_CH-CO2-CO2 factor
CROSS_C_CH_CO2 = 0.92
#: C_CH-N2-CO2 factor
CROSS_C_CH_N2_CO2 = 1.1

# ---------------------------------------------------------------------------------------------
# Characterization constants (AGA8 Part 1, GROSS methods 1 and 2)
# ---------------------------------------------------------------------------------------------
#: molar mass of the equivalent hydrocarbon from its molar heating value: M_CH = G1 + G2 H_CH
#: [g/mol], H_CH in kJ/mol at 25 degC
G1 = -2.709328
G2 = 0.021062199
#: second virial coefficient of air (the relative-density reference fluid):
#: B_air(T) = AIR_B[0] + AIR_B[1] T + AIR_B[2] T^2 [L/mol]
AIR_B = (-0.12527, 0.000591, -0.000000662)
#: molar mass of air [g/mol]
MOLAR_MASS_AIR = 28.9625
#: temperature coefficient of the molar heating value about 25 degC:
#: H(25 degC) = H(Th) (1 + HV_T_COEFF (Th - 298.15 K))
HV_T_COEFF = 0.0001027
HV_T_REFERENCE = 298.15

#: ideal molar gross heating values at 25 degC [kJ/mol] of the 21 components used by the GROSS
#: method from composition (reference code, from AGA Report No. 5 (2009); usnistgov/AGA8 Gross.cpp)
GROSS_MOLAR_HV_25C_KJ = (
    890.63, 0.0, 0.0, 1560.69, 2219.17, 2868.2, 2877.4, 3528.83, 3535.77, 4194.95, 4853.43, 5511.8,
    6171.15, 6829.77, 285.83, 0.0, 282.98, 44.016, 562.01, 0.0, 0.0,
)


def table_checksum() -> str:
    """SHA-256 over every figure of these tables, in a fixed text form (for a regression test)."""
    import hashlib

    parts = [repr(R_GROSS), repr(MOLAR_MASS_GROSS_G_PER_MOL), repr(sorted(B_N2_CO2.items())),
             repr(sorted(C_N2_CO2.items())), repr(B_CH), repr(C_CH), repr(CROSS_B_CH_N2), repr(CROSS_B_CH_CO2),
             repr(CROSS_C_CH_N2), repr(CROSS_C_CH_CO2), repr(CROSS_C_CH_N2_CO2), repr((G1, G2)), repr(AIR_B),
             repr(MOLAR_MASS_AIR), repr((HV_T_COEFF, HV_T_REFERENCE)), repr(GROSS_MOLAR_HV_25C_KJ)]
    return hashlib.sha256("\n".join(parts).encode()).hexdigest()
