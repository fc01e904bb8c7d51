"""Physical constants, each with its source.

CODATA 2018 values as published by NIST (https://physics.nist.gov/cuu/Constants/).
Since the 2019 SI redefinition c is exact and mu0 is measured.
"""

import math

#: Speed of light in vacuum, m/s (exact by definition of the metre, SI 2019).
C0_M_PER_S = 299_792_458.0

#: Vacuum magnetic permeability, H/m (CODATA 2018: 1.25663706212e-6).
MU0_H_PER_M = 1.25663706212e-6

#: Vacuum electric permittivity, F/m (CODATA 2018: 8.8541878128e-12).
EPS0_F_PER_M = 8.8541878128e-12

#: Impedance of free space, ohm (CODATA 2018: 376.730313668).
ETA0_OHM = 376.730313668

#: Natural logarithm of 10 over 20 and friends are derived, not constants.
TWO_PI = 2.0 * math.pi

#: Decibels per neper: 20 log10(e) = 20 / ln(10) = 8.685889638... dB/Np (definition
#: of the neper and the decibel, ISO 80000-3).
DB_PER_NEPER = 20.0 / math.log(10.0)
