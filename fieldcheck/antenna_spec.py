"""The validated antenna description as frozen dataclasses.

:func:`fieldcheck.antenna.load_description` (and the option loaders of
:mod:`fieldcheck.antenna_options`) build a :class:`Description` from a TOML
file or command-line options; the schema is in :mod:`fieldcheck.antenna`,
which re-exports every class here.  All lengths are in metres, frequencies in
hertz, impedances in ohms.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

from .physics.installation import Installation


@dataclass(frozen=True)
class Insulation:
    """Dielectric jacket on the wire.

    Parameters
    ----------
    thickness_m : float
        Radial thickness of the jacket, m.
    permittivity : float
        Relative permittivity of the jacket (dimensionless, >= 1).
    """

    thickness_m: float
    permittivity: float


@dataclass(frozen=True)
class AntennaSpec:
    """What was built.

    Parameters
    ----------
    name : str
        Free text ("" when not given).
    form : str
        ``'dipole'`` or ``'monopole'``.
    arm_length_m : float
        Dipole: one arm, feed terminal to tip, m.  Monopole: element height, m.
    diameter_m : float
        Bare conductor diameter, m.
    material : str
        Conductor material name, lower-cased (checked by the loss model).
    feed_gap_m : float
        Gap between the arms (dipole) or element base and plane (monopole), m.
    insulation : Insulation or None
        Jacket, or None for bare wire.
    """

    name: str
    form: str
    arm_length_m: float
    diameter_m: float
    material: str
    feed_gap_m: float
    insulation: Insulation | None

    @property
    def radius_m(self) -> float:
        """Conductor radius, m."""
        return 0.5 * self.diameter_m

    @property
    def total_length_m(self) -> float:
        """Dipole: tip to tip including the gap, m; monopole: the element height, m."""
        if self.form == "dipole":
            return 2.0 * self.arm_length_m + self.feed_gap_m
        return self.arm_length_m


@dataclass(frozen=True)
class TargetSpec:
    """What the antenna should do.

    Parameters
    ----------
    frequency_hz : float
        Target frequency (the band centre when a band is given), Hz.
    band_hz : tuple of float or None
        ``(low_hz, high_hz)`` when a band was given, Hz.
    criterion : str
        ``'match'`` or ``'resonance'``.
    vswr_limit : float
        VSWR limit for bandwidth figures (dimensionless, > 1).
    """

    frequency_hz: float
    band_hz: tuple[float, float] | None
    criterion: str
    vswr_limit: float


@dataclass(frozen=True)
class FeedSpec:
    """How the antenna is fed and measured.

    Parameters
    ----------
    system_impedance_ohm : float
        Feed line / analyser impedance, ohm.
    balun_ratio : float
        Impedance ratio of the balun (1.0 for none and 1:1, 4.0 for 4:1).
    balun_label : str
        ``'none'``, ``'1:1'`` or ``'4:1'``.
    cable : str or None
        Cable to remove, ``--cable`` syntax.
    fixture_path : str or None
        Absolute path of a fixture 2-port to remove.
    delay : str or None
        Residual one-way delay to remove, ``--delay`` syntax.
    """

    system_impedance_ohm: float
    balun_ratio: float
    balun_label: str
    cable: str | None
    fixture_path: str | None
    delay: str | None


@dataclass(frozen=True)
class Description:
    """A complete, validated antenna description (``target`` None only if not required)."""

    antenna: AntennaSpec
    installation: Installation
    target: TargetSpec | None
    feed: FeedSpec
    source_path: str | None

    def to_dict(self) -> dict:
        """Plain data for JSON reports, SI units in the key names."""
        ant = asdict(self.antenna)
        ant["radius_m"] = self.antenna.radius_m
        ant["total_length_m"] = self.antenna.total_length_m
        target = None
        if self.target is not None:
            target = asdict(self.target)
            target["band_hz"] = list(self.target.band_hz) if self.target.band_hz else None
        return {"source_path": self.source_path, "antenna": ant,
                "installation": asdict(self.installation), "target": target,
                "feed": asdict(self.feed)}
