"""Primary equations of the meter kinds (orifice, Coriolis, error curves, speed of sound).

Pure vectorised functions, SI in and out, one per published method named for the quantity, the
method and the edition. This stage sits beside ``meterfix.energy``: it may import units, constants,
gas and z, nothing above (tests/test_layers.py).

    orifice_iso5167   ISO 5167-1/-2:2003: Reader-Harris/Gallagher C, expansibility, Re_D iteration,
                      thermal correction of d and D, limits and uncertainties of C and epsilon
    density           density, Z, speed of sound and isentropic exponent from a Z method, with the
                      gas constant and molar masses the method's standard prescribes
    viscosity         natural-gas viscosity (Lee, Gonzalez and Eakin 1966)
    coriolis          base volume and energy from mass
    error_curve       meter error curves and meter factors of volume meters
    speed_of_sound    measured against the equation of state's speed of sound
"""
