"""Why the resonance is where it is: the as-built design, step by step, to the fit.

The chain, each step a resonance computed with the fitted model's physics::

    half-wave of the built length, c / 2L (an infinitely thin wire)
    -> bare wire of the real thickness (method of moments: the end effect)
    -> with the jacket, if the description has one (an estimate: fieldcheck.physics.insulation)
    -> at the fitted electrical length (what remains: length error, supports, nearby objects)
    -> with the fitted feed capacitance, shunt and loss = the fitted resonance
"""

from __future__ import annotations

from dataclasses import dataclass

from .antenna_fit import AntennaFit, _len_factor, feed_of, model_resonance_hz
from .constants import C0_M_PER_S
from .physics.insulation import insulation_length_factor


@dataclass(frozen=True)
class ShiftBudget:
    """The steps from the thin-wire half wave to the fitted resonance, Hz.

    ``half_wave_hz`` c / 2L of the built length; ``design_hz`` bare wire of the
    real thickness; ``insulation_part_hz`` the jacket's estimated share (0 for
    bare wire); ``length_part_hz`` what the fitted electrical length adds
    beyond that; ``feed_part_hz`` the fitted feed parasitics' share;
    ``measured_hz`` the fitted resonance.
    """

    half_wave_hz: float
    design_hz: float
    insulation_part_hz: float
    length_part_hz: float
    feed_part_hz: float
    measured_hz: float

    @property
    def thickness_part_hz(self) -> float:
        return self.design_hz - self.half_wave_hz

    def to_dict(self) -> dict:
        return {"half_wave_hz": self.half_wave_hz, "thickness_part_hz": self.thickness_part_hz,
                "design_hz": self.design_hz, "insulation_part_hz": self.insulation_part_hz,
                "length_part_hz": self.length_part_hz, "feed_part_hz": self.feed_part_hz,
                "measured_hz": self.measured_hz}


def explain_shift(af: AntennaFit, insulation=None) -> ShiftBudget | None:
    """The shift budget of a fit (None when the fitted antenna has no resonance).

    Parameters
    ----------
    af : AntennaFit
    insulation : fieldcheck.antenna.Insulation, optional
        The jacket from the description, for its estimated share.
    """
    if af.f_res_hz is None:
        return None
    v = af.fit.values
    m, built = af.model, af.built_length_m
    f_fit = af.f_res_hz.value
    half_wave = C0_M_PER_S / (2.0 * built * _len_factor(m))
    f_design = model_resonance_hz(m, built, 0.0, 0.0, f_fit)
    f_jacket = f_design
    if insulation is not None:
        factor = insulation_length_factor(f_design, built * _len_factor(m), m.radius_m,
                                          insulation.thickness_m, insulation.permittivity)
        f_jacket = model_resonance_hz(m, built * float(factor), 0.0, 0.0, f_design)
    f_len = model_resonance_hz(m, v["length_m"], 0.0, 0.0, f_fit)
    f_full = model_resonance_hz(m, v["length_m"], **feed_of(v), f_guess_hz=f_fit)
    return ShiftBudget(half_wave_hz=half_wave, design_hz=f_design,
                       insulation_part_hz=f_jacket - f_design, length_part_hz=f_len - f_jacket,
                       feed_part_hz=f_full - f_len, measured_hz=f_full)



def conductor_loss_ohm(af: AntennaFit, material_name: str) -> float:
    """Skin-effect loss of the wire itself at the fitted resonance (or best match), ohm.

    From the method-of-moments current of the as-built wire and the material's
    conductivity (:func:`fieldcheck.physics.loss.installed_conductor_loss_ohm`);
    set beside the fitted loss resistance, the difference is loss the wire
    cannot explain (joints, balun, ground, nearby lossy objects).
    """
    import numpy as np

    from .physics.loss import installed_conductor_loss_ohm
    from .physics.materials import get_material

    f_ref = af.f_res_hz.value if af.f_res_hz is not None else af.f_match_hz
    m = af.model
    return float(installed_conductor_loss_ohm(np.array([f_ref]), af.built_length_m, m.radius_m,
                                              m.installation, get_material(material_name))[0])
