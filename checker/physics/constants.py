"""Physical constants in SI units (exact SI 2019 values where they are defined).

References
----------
CODATA 2022 recommended values (P. J. Mohr et al., NIST, 2024); k_B, q, h are
exact since the 2019 SI redefinition.  m_0, epsilon_0 and a_0 are CODATA 2022.
"""

from .arrays import FloatOrArray

BOLTZMANN = 1.380649e-23  # J/K, exact
ELEMENTARY_CHARGE = 1.602176634e-19  # C, exact
PLANCK = 6.62607015e-34  # J s, exact
HBAR = PLANCK / (2.0 * 3.141592653589793)
ELECTRON_MASS = 9.1093837139e-31  # kg, CODATA 2022
VACUUM_PERMITTIVITY = 8.8541878188e-12  # F/m, CODATA 2022
BOHR_RADIUS = 5.29177210544e-11  # m, CODATA 2022

EV = ELEMENTARY_CHARGE  # J per eV
ROOM_TEMPERATURE = 300.0  # K, reference temperature of the material tables


def thermal_voltage(temperature: FloatOrArray) -> FloatOrArray:
    """kT/q in volts for a temperature in kelvin (array-friendly).

    Formula: V_T = k_B T / q.  Units: K -> V.  Valid for any T > 0.

    References
    ----------
    SI 2019 exact values of k_B and q (CODATA 2022).
    """
    return BOLTZMANN * temperature / ELEMENTARY_CHARGE
