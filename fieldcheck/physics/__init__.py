"""Physics models of wire antennas: pure functions, no I/O (except loading the shipped table).

Method-of-moments dipole (:mod:`.mom`), installations over ground (:mod:`.installation`)
and the fast interpolated impedance surface used for fitting (:mod:`.surface`).
"""

from .installation import (Installation, horizontal_dipole_over_ground_impedance, installed_impedance,
                           monopole_impedance, mutual_impedance_parallel)
from .mom import DipoleSolution, dipole_impedance, solve_dipole
from .surface import DipoleSurface, default_surface, resonant_frequency_hz

__all__ = [
    "DipoleSolution", "solve_dipole", "dipole_impedance",
    "Installation", "installed_impedance", "monopole_impedance",
    "horizontal_dipole_over_ground_impedance", "mutual_impedance_parallel",
    "DipoleSurface", "default_surface", "resonant_frequency_hz",
]
