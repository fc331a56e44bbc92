"""AGA8 DETAIL coefficient tables (published figures, kept as data).

Source of every figure below: AGA Report No. 8 Part 1, third edition (2017), DETAIL
characterization equation of state (the 1992/1994 equation of Starling & Savidge, unchanged in
the 2017 edition; also ISO 20765-1:2005 and ISO 12213-2:2006), as printed in the standard's public
reference code (NIST, repository usnistgov/AGA8, ``AGA8CODE/C/Detail.cpp``, routine
``SetupDetail``), from which the figures were read. The report's table numbers are not repeated
because they were not checked against the report itself; each block names the table it is in the
report (equation-of-state parameters, characterization parameters, binary interaction parameters,
ideal-gas heat-capacity parameters).

Component order is that of :mod:`meterfix.gas.components` (the AGA8 order):
0 methane, 1 nitrogen, 2 carbon dioxide, 3 ethane, 4 propane, 5 isobutane, 6 n-butane,
7 isopentane, 8 n-pentane, 9 n-hexane, 10 n-heptane, 11 n-octane, 12 n-nonane, 13 n-decane,
14 hydrogen, 15 oxygen, 16 carbon monoxide, 17 water, 18 hydrogen sulfide, 19 helium, 20 argon.

Units are those of the report: density in mol/L (= kmol/m3), size parameters K in (L/mol)^(1/3),
energy parameters E in kelvin, molar masses in g/mol, R in J/(mol K).
"""

from __future__ import annotations

#: Molar gas constant of the DETAIL and GROSS equations [J/(mol K)] (AGA8 Part 1)
R_DETAIL = 8.31451

N_COMPONENTS = 21
N_TERMS = 58

#: Molar masses [g/mol] of the DETAIL characterization (AGA8 Part 1, characterization table; the
#: GROSS method uses the same figures)
MOLAR_MASS_G_PER_MOL = (
    16.043, 28.0135, 44.01, 30.07, 44.097, 58.123, 58.123, 72.15, 72.15, 86.177, 100.204, 114.231,
    128.258, 142.285, 2.0159, 31.9988, 28.01, 18.0153, 34.082, 4.0026, 39.948,
)

# ---------------------------------------------------------------------------------------------
# Equation-of-state parameters, n = 1..58 (AGA8 Part 1, table of the 58 terms:
# a_n, b_n, c_n, k_n, u_n, g_n, q_n, f_n, s_n, w_n)
# ---------------------------------------------------------------------------------------------
A = (
    0.1538326, 1.341953, -2.998583, -0.04831228, 0.3757965, -1.589575, -0.05358847, 0.88659463,
    -0.71023704, -1.471722, 1.32185035, -0.78665925, 0.00000000229129, 0.1576724, -0.4363864,
    -0.04408159, -0.003433888, 0.03205905, 0.02487355, 0.07332279, -0.001600573, 0.6424706,
    -0.4162601, -0.06689957, 0.2791795, -0.6966051, -0.002860589, -0.008098836, 3.150547,
    0.007224479, -0.7057529, 0.5349792, -0.07931491, -1.418465, -5.99905e-17, 0.1058402,
    0.03431729, -0.007022847, 0.02495587, 0.04296818, 0.7465453, -0.2919613, 7.294616, -9.936757,
    -0.005399808, -0.2432567, 0.04987016, 0.003733797, 1.874951, 0.002168144, -0.6587164,
    0.000205518, 0.009776195, -0.02048708, 0.01557322, 0.006862415, -0.001226752, 0.002850908,
)
#: density exponents b_n
B = (
    1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2, 2, 2, 2, 3, 3, 3,
    3, 3, 3, 3, 3, 3, 3, 4, 4, 4, 4, 4, 4, 4, 5, 5, 5, 5, 5, 6, 6, 7, 7, 8, 8, 8, 9, 9,
)
#: exponents k_n of density in exp(-c_n D^k_n); c_n is 1 where k_n > 0 and 0 elsewhere
K = (
    0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 3, 2, 2, 2, 4, 4, 0, 0, 2, 2, 2, 4, 4, 4, 4, 0, 1, 1,
    2, 2, 3, 3, 4, 4, 4, 0, 0, 2, 2, 2, 4, 4, 0, 2, 2, 4, 4, 0, 2, 0, 2, 1, 2, 2, 2, 2,
)
C = tuple(1 if k > 0 else 0 for k in K)
#: temperature exponents u_n
U = (
    0.0, 0.5, 1.0, 3.5, -0.5, 4.5, 0.5, 7.5, 9.5, 6.0, 12.0, 12.5, -6.0, 2.0, 3.0, 2.0, 2.0, 11.0,
    -0.5, 0.5, 0.0, 4.0, 6.0, 21.0, 23.0, 22.0, -1.0, -0.5, 7.0, -1.0, 6.0, 4.0, 1.0, 9.0, -13.0,
    21.0, 8.0, -0.5, 0.0, 2.0, 7.0, 9.0, 22.0, 23.0, 1.0, 9.0, 3.0, 8.0, 23.0, 1.5, 5.0, -0.5,
    4.0, 7.0, 3.0, 0.0, 1.0, 0.0,
)


def _flags(ones):
    return tuple(1 if n in ones else 0 for n in range(1, N_TERMS + 1))


#: flags of the orientation (g_n), quadrupole (q_n), high-temperature (f_n), dipole (s_n) and
#: association (w_n) parameters, listed by term number n (1-based, as in the report)
G_FLAG = _flags({5, 6, 25, 29, 32, 33, 34, 51, 54, 56})
Q_FLAG = _flags({7, 16, 26, 28, 37, 42, 47, 49, 52, 58})
F_FLAG = _flags({13, 27, 30, 35})
S_FLAG = _flags({8, 9})
W_FLAG = _flags({10, 11, 12})

# ---------------------------------------------------------------------------------------------
# Characterization parameters of the 21 components (AGA8 Part 1, characterization table)
# ---------------------------------------------------------------------------------------------
#: energy parameters E_i [K]
ENERGY = (
    151.3183, 99.73778, 241.9606, 244.1667, 298.1183, 324.0689, 337.6389, 365.5999, 370.6823,
    402.636293, 427.72263, 450.325022, 470.840891, 489.558373, 26.95794, 122.7667, 105.5348,
    514.0156, 296.355, 2.610111, 119.6299,
)
#: size parameters K_i [(L/mol)^(1/3)]
SIZE = (
    0.4619255, 0.4479153, 0.4557489, 0.5279209, 0.583749, 0.6406937, 0.6341423, 0.6738577,
    0.6798307, 0.7175118, 0.7525189, 0.784955, 0.8152731, 0.8437826, 0.3514916, 0.4186954,
    0.4533894, 0.3825868, 0.4618263, 0.3589888, 0.4216551,
)
#: orientation parameters G_i
ORIENTATION = (
    0.0, 0.027815, 0.189065, 0.0793, 0.141239, 0.256692, 0.281835, 0.332267, 0.366911, 0.289731,
    0.337542, 0.383381, 0.427354, 0.469659, 0.034369, 0.021, 0.038953, 0.3325, 0.0885, 0.0, 0.0,
)
#: quadrupole parameters Q_i (carbon dioxide, water, hydrogen sulfide)
QUADRUPOLE = tuple({2: 0.69, 17: 1.06775, 18: 0.633276}.get(i, 0.0) for i in range(N_COMPONENTS))
#: high-temperature parameter F_i (hydrogen)
HIGH_TEMPERATURE = tuple(1.0 if i == 14 else 0.0 for i in range(N_COMPONENTS))
#: dipole parameters S_i (water, hydrogen sulfide)
DIPOLE = tuple({17: 1.5822, 18: 0.39}.get(i, 0.0) for i in range(N_COMPONENTS))
#: association parameter W_i (water)
ASSOCIATION = tuple(1.0 if i == 17 else 0.0 for i in range(N_COMPONENTS))

# ---------------------------------------------------------------------------------------------
# Binary interaction parameters (AGA8 Part 1, binary parameter table); pairs (i, j), i < j, in
# the component order above; every pair not listed has the value 1
# ---------------------------------------------------------------------------------------------
#: binary energy parameters E*_ij
BINARY_ENERGY = {
    (0, 1): 0.97164, (0, 2): 0.960644, (0, 4): 0.994635, (0, 5): 1.01953, (0, 6): 0.989844,
    (0, 7): 1.00235, (0, 8): 0.999268, (0, 9): 1.107274, (0, 10): 0.88088, (0, 11): 0.880973,
    (0, 12): 0.881067, (0, 13): 0.881161, (0, 14): 1.17052, (0, 16): 0.990126, (0, 17): 0.708218,
    (0, 18): 0.931484,
    (1, 2): 1.02274, (1, 3): 0.97012, (1, 4): 0.945939, (1, 5): 0.946914, (1, 6): 0.973384,
    (1, 7): 0.95934, (1, 8): 0.94552, (1, 14): 1.08632, (1, 15): 1.021, (1, 16): 1.00571,
    (1, 17): 0.746954, (1, 18): 0.902271,
    (2, 3): 0.925053, (2, 4): 0.960237, (2, 5): 0.906849, (2, 6): 0.897362, (2, 7): 0.726255,
    (2, 8): 0.859764, (2, 9): 0.855134, (2, 10): 0.831229, (2, 11): 0.80831, (2, 12): 0.786323,
    (2, 13): 0.765171, (2, 14): 1.28179, (2, 16): 1.5, (2, 17): 0.849408, (2, 18): 0.955052,
    (3, 4): 1.02256, (3, 6): 1.01306, (3, 8): 1.00532, (3, 14): 1.16446, (3, 17): 0.693168,
    (3, 18): 0.946871,
    (4, 6): 1.0049, (4, 14): 1.034787,
    (5, 14): 1.3, (6, 14): 1.3,
    (9, 18): 1.008692, (10, 18): 1.010126, (11, 18): 1.011501, (12, 18): 1.012821, (13, 18): 1.014089,
    (14, 16): 1.1,
}
#: binary conformal energy parameters U_ij
BINARY_CONFORMAL = {
    (0, 1): 0.886106, (0, 2): 0.963827, (0, 4): 0.990877, (0, 6): 0.992291, (0, 8): 1.00367,
    (0, 9): 1.302576, (0, 10): 1.191904, (0, 11): 1.205769, (0, 12): 1.219634, (0, 13): 1.233498,
    (0, 14): 1.15639, (0, 18): 0.736833,
    (1, 2): 0.835058, (1, 3): 0.816431, (1, 4): 0.915502, (1, 6): 0.993556, (1, 14): 0.408838,
    (1, 18): 0.993476,
    (2, 3): 0.96987, (2, 9): 1.066638, (2, 10): 1.077634, (2, 11): 1.088178, (2, 12): 1.098291,
    (2, 13): 1.108021, (2, 16): 0.9, (2, 18): 1.04529,
    (3, 4): 1.065173, (3, 5): 1.25, (3, 6): 1.25, (3, 7): 1.25, (3, 8): 1.25, (3, 14): 1.61666,
    (3, 18): 0.971926,
    (9, 18): 1.028973, (10, 18): 1.033754, (11, 18): 1.038338, (12, 18): 1.042735, (13, 18): 1.046966,
}
#: binary size parameters K_ij
BINARY_SIZE = {
    (0, 1): 1.00363, (0, 2): 0.995933, (0, 4): 1.007619, (0, 6): 0.997596, (0, 8): 1.002529,
    (0, 9): 0.982962, (0, 10): 0.983565, (0, 11): 0.982707, (0, 12): 0.981849, (0, 13): 0.980991,
    (0, 14): 1.02326, (0, 18): 1.00008,
    (1, 2): 0.982361, (1, 3): 1.00796, (1, 14): 1.03227, (1, 18): 0.942596,
    (2, 3): 1.00851, (2, 9): 0.910183, (2, 10): 0.895362, (2, 11): 0.881152, (2, 12): 0.86752,
    (2, 13): 0.854406, (2, 18): 1.00779,
    (3, 4): 0.986893, (3, 14): 1.02034, (3, 18): 0.999969,
    (9, 18): 0.96813, (10, 18): 0.96287, (11, 18): 0.957828, (12, 18): 0.952441, (13, 18): 0.948338,
}
#: binary orientation parameters G*_ij
BINARY_ORIENTATION = {
    (0, 2): 0.807653, (0, 14): 1.95731, (1, 2): 0.982746, (2, 3): 0.370296, (2, 17): 1.67309,
}

# ---------------------------------------------------------------------------------------------
# Ideal-gas heat capacity of each component (AGA8 Part 1, ideal-gas parameter table):
# cp0/R = n3 + n4 (th4/T / sinh(th4/T))^2 + n5 (th5/T / cosh(th5/T))^2
#            + n6 (th6/T / sinh(th6/T))^2 + n7 (th7/T / cosh(th7/T))^2
# rows (n3, n4, n5, n6, n7, th4, th5, th6, th7), th in K; a theta of 0 marks an absent term.
# Only cp0 enters Z-side properties (speed of sound); n1, n2 (zero of energy and entropy) are
# not kept.
# ---------------------------------------------------------------------------------------------
IDEAL_GAS = (
    (4.00088, 0.76315, 0.0046, 8.74432, -4.46921, 820.659, 178.41, 1062.82, 1090.53),
    (3.50031, 0.13732, -0.1466, 0.90066, 0.0, 662.738, 680.562, 1740.06, 0.0),
    (3.50002, 2.04452, -1.06044, 2.03366, 0.01393, 919.306, 865.07, 483.553, 341.109),
    (4.00263, 4.33939, 1.23722, 13.1974, -6.01989, 559.314, 223.284, 1031.38, 1071.29),
    (4.02939, 6.60569, 3.197, 19.1921, -8.37267, 479.856, 200.893, 955.312, 1027.29),
    (4.06714, 8.97575, 5.25156, 25.1423, 16.1388, 438.27, 198.018, 1905.02, 893.765),
    (4.33944, 9.44893, 6.89406, 24.4618, 14.7824, 468.27, 183.636, 1914.1, 903.185),
    (4.0, 11.7618, 20.1101, 33.1688, 0.0, 292.503, 910.237, 1919.37, 0.0),
    (4.0, 8.95043, 21.836, 33.4032, 0.0, 178.67, 840.538, 1774.25, 0.0),
    (4.0, 11.6977, 26.8142, 38.6164, 0.0, 182.326, 859.207, 1826.59, 0.0),
    (4.0, 13.7266, 30.4707, 43.5561, 0.0, 169.789, 836.195, 1760.46, 0.0),
    (4.0, 15.6865, 33.8029, 48.1731, 0.0, 158.922, 815.064, 1693.07, 0.0),
    (4.0, 18.0241, 38.1235, 53.3415, 0.0, 156.854, 814.882, 1693.79, 0.0),
    (4.0, 21.0069, 43.4931, 58.3657, 0.0, 164.947, 836.264, 1750.24, 0.0),
    (2.47906, 0.95806, 0.45444, 1.56039, -1.3756, 228.734, 326.843, 1651.71, 1671.69),
    (3.50146, 1.07558, 1.01334, 0.0, 0.0, 2235.71, 1116.69, 0.0, 0.0),
    (3.50055, 1.02865, 0.00493, 0.0, 0.0, 1550.45, 704.525, 0.0, 0.0),
    (4.00392, 0.01059, 0.98763, 3.06904, 0.0, 268.795, 1141.41, 2507.37, 0.0),
    (4.0, 3.11942, 1.00243, 0.0, 0.0, 1833.63, 847.181, 0.0, 0.0),
    (2.5, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0),
    (2.5, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0),
)


def table_checksum() -> str:
    """SHA-256 over every figure of these tables, in a fixed text form (for a regression test)."""
    import hashlib

    parts = [repr(R_DETAIL), repr(MOLAR_MASS_G_PER_MOL), repr(A), repr(B), repr(C), repr(K), repr(U),
             repr(G_FLAG), repr(Q_FLAG), repr(F_FLAG), repr(S_FLAG), repr(W_FLAG), repr(ENERGY), repr(SIZE),
             repr(ORIENTATION), repr(QUADRUPOLE), repr(HIGH_TEMPERATURE), repr(DIPOLE), repr(ASSOCIATION),
             repr(sorted(BINARY_ENERGY.items())), repr(sorted(BINARY_CONFORMAL.items())),
             repr(sorted(BINARY_SIZE.items())), repr(sorted(BINARY_ORIENTATION.items())), repr(IDEAL_GAS)]
    return hashlib.sha256("\n".join(parts).encode()).hexdigest()
