"""Physical constants and their conditions, in one place.

Every model takes ``c0`` / ``rho0`` as keyword parameters defaulting to the
values here, so a caller can reproduce a standard that states other air
conditions (e.g. ISO 15186-3 Annex A: 23 degC, 1013 hPa).

References
----------
.. [1] ISO 9613-1:1993 / ISO 2533 (standard atmosphere): c0 = 343.2 m/s and
   rho0 = 1.204 kg/m^3 for dry air at 20 degC and 101.325 kPa (from memory).
   The project uses the rounded building-acoustics values c0 = 343 m/s,
   rho0 = 1.21 kg/m^3 (rho0*c0 = 415 Pa s/m), common practice, no source;
   these are the values the check tables of the method notes were computed
   with.
.. [2] Allard, J.-F. & Atalla, N. (2009) *Propagation of Sound in Porous
   Media*, 2nd ed., Wiley - viscosity, Prandtl number and ratio of specific
   heats of air (from memory).
"""

from __future__ import annotations

__all__ = [
    "C0",
    "RHO0",
    "Z0",
    "P0",
    "GAMMA",
    "MU",
    "PRANDTL",
    "EULER_GAMMA",
    "SABINE_ISO",
    "SABINE_ASTM",
    "T0_ISO",
    "A0_ISO",
]

#: Speed of sound in air, m/s (about 20 degC, 101.325 kPa; common practice).
C0 = 343.0
#: Density of air, kg/m^3 (about 20 degC, 101.325 kPa; common practice).
RHO0 = 1.21
#: Characteristic impedance of air rho0*c0, Pa s/m (415 with the values above).
Z0 = RHO0 * C0
#: Static (atmospheric) pressure, Pa (standard atmosphere).
P0 = 101325.0
#: Ratio of specific heats of air, dimensionless (from memory, [2]).
GAMMA = 1.4
#: Dynamic viscosity of air, Pa s (about 20 degC; from memory, [2]).
MU = 1.81e-5
#: Prandtl number of air, dimensionless (from memory, [2]).
PRANDTL = 0.71
#: Euler-Mascheroni constant, used in the slit end correction (Hopkins Eq. 4.100).
EULER_GAMMA = 0.5772156649015329
#: Sabine constant of ISO 16283-1 / ISO 10140: A = 0.16 V / T, s/m.
SABINE_ISO = 0.16
#: Sabine constant of ASTM E336 / E90: A = 55.26 V / (c T) = 0.161 V/T at c = 343 m/s, s/m.
SABINE_ASTM = 55.26 / C0
#: Reference reverberation time of ISO 16283-1 (DnT) and ASTM E336 (NNR), s.
T0_ISO = 0.5
#: Reference absorption area of ISO 16283-1 (Dn), m^2 (from memory).
A0_ISO = 10.0
