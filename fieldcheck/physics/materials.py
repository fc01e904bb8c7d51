"""Wire materials: DC conductivity and relative permeability, each with its source.

Values are at room temperature (20 degrees C).  Conductivities of alloys vary with
composition and temper by tens of percent; steel's permeability varies by an order
of magnitude with grade, field strength and frequency, so steel loss figures are
estimates only.  Where a value is quoted from memory the comment says so.

Percent IACS: 100 % IACS is the conductivity of the International Annealed Copper
Standard, 58.0 MS/m at 20 degrees C (resistivity 1/58 ohm mm^2/m), as defined in
IEC 60028:1925, International standard of resistance for copper.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import InputError

#: 100 % IACS, S/m (IEC 60028:1925: 1/58 ohm mm^2/m at 20 degrees C).
IACS_S_PER_M = 58.0e6


@dataclass(frozen=True)
class Material:
    """A conductor for wire antennas.

    Attributes
    ----------
    name : str
        Canonical name (as accepted by :func:`get_material`).
    conductivity_s_per_m : float
        DC conductivity of the conductor at the surface, S/m.
    relative_permeability : float
        Relative permeability of that conductor, dimensionless.
    source_note : str
        Where the values come from and how uncertain they are.
    core : Material or None
        For clad wire: the core conductor under a cladding of this material.
    cladding_m : float
        For clad wire: cladding thickness, m (0 for a solid wire).
    """

    name: str
    conductivity_s_per_m: float
    relative_permeability: float
    source_note: str
    core: "Material | None" = None
    cladding_m: float = 0.0

    def __post_init__(self):
        if not (self.conductivity_s_per_m > 0 and self.relative_permeability >= 1):
            raise InputError(
                f"material {self.name!r}: conductivity must be > 0 S/m and relative "
                f"permeability >= 1; got {self.conductivity_s_per_m}, {self.relative_permeability}"
            )
        if self.core is not None and not self.cladding_m > 0:
            raise InputError(f"material {self.name!r}: a clad wire needs a cladding thickness > 0 m")

    @property
    def is_clad(self) -> bool:
        return self.core is not None

    @property
    def percent_iacs(self) -> float:
        """Surface conductivity as percent of the IACS (IEC 60028)."""
        return 100.0 * self.conductivity_s_per_m / IACS_S_PER_M


COPPER = Material(
    "copper", IACS_S_PER_M, 1.0,
    "annealed copper, 100 % IACS = 58.0 MS/m at 20 C (IEC 60028:1925 definition); "
    "hard-drawn copper is about 97 % IACS",
)
SILVER = Material(
    # CRC Handbook of Chemistry and Physics, table 'Electrical resistivity of pure
    # metals': 1.59e-8 ohm m at 20 C (from memory) -> 6.29e7 S/m.
    "silver", 6.29e7, 1.0,
    "pure silver, 1.59e-8 ohm m at 20 C (CRC Handbook, from memory); a silver plating "
    "behaves as silver when it is several skin depths thick",
)
ALUMINIUM = Material(
    # CRC Handbook, pure aluminium 2.65e-8 ohm m at 20 C (from memory) -> 3.77e7 S/m.
    "aluminium", 3.77e7, 1.0,
    "pure aluminium, 2.65e-8 ohm m at 20 C (CRC Handbook, from memory), about 65 % IACS",
)
ALUMINIUM_6061 = Material(
    # 6061-T6 is about 43 % IACS (ASM Handbook vol. 2, from memory) -> 2.5e7 S/m.
    "aluminium-6061", 2.5e7, 1.0,
    "aluminium alloy 6061-T6, about 43 % IACS (ASM Handbook vol. 2, from memory); "
    "other tubing alloys range 35..55 % IACS",
)
BRASS = Material(
    # Cartridge brass C26000 (70/30) is about 28 % IACS (ASM Handbook vol. 2, from
    # memory) -> 1.6e7 S/m.  Other brasses range roughly 1.5e7..2.6e7 S/m.
    "brass", 1.6e7, 1.0,
    "cartridge brass C26000, about 28 % IACS = 1.6e7 S/m (ASM Handbook vol. 2, from "
    "memory); other brasses 1.5e7..2.6e7 S/m",
)
STEEL = Material(
    # Low-carbon steel: resistivity about 1.0e-7..1.7e-7 ohm m (6e6..1e7 S/m); relative
    # permeability hundreds at low frequency and low field, falling at RF (from memory).
    "steel", 7.0e6, 100.0,
    "mild (low-carbon) steel, 6e6..1e7 S/m; relative permeability taken as 100 but "
    "anywhere from tens to several hundred (grade, field, frequency): loss uncertain "
    "by a factor of about 3 (values from memory)",
)
STAINLESS_304 = Material(
    # AISI 304: resistivity about 72e-8 ohm m at 20 C (ASM Handbook, from memory) ->
    # 1.39e6 S/m; austenitic, so essentially non-magnetic when annealed.
    "stainless-304", 1.39e6, 1.0,
    "stainless steel AISI 304, about 0.72 micro-ohm m = 1.39e6 S/m (ASM Handbook, from "
    "memory), relative permeability about 1 (annealed; cold work raises it slightly)",
)

#: Default copper cladding of copper-clad steel wire, m.  A typical value (from
#: memory, no standard quoted): wires sold as 30 % to 40 % IACS carry copper
#: layers of roughly 0.05 mm to 0.15 mm depending on diameter; check the maker's
#: data sheet and pass the real figure.
DEFAULT_CCS_CLADDING_M = 0.1e-3


def copper_clad_steel(cladding_m: float = DEFAULT_CCS_CLADDING_M) -> Material:
    """Copper-clad steel wire with a copper layer ``cladding_m`` thick, m.

    Loss uses copper alone while the copper skin depth is below a third of the
    cladding, otherwise a layered estimate (see :mod:`fieldcheck.physics.loss`).
    """
    if not (cladding_m > 0 and cladding_m < 0.1):
        raise InputError(
            f"copper cladding thickness must be between 0 and 0.1 m; got {cladding_m!r} m"
        )
    return Material(
        "copper-clad-steel", COPPER.conductivity_s_per_m, 1.0,
        f"copper cladding {cladding_m * 1e3:.3g} mm over mild steel (steel values uncertain, "
        "see 'steel'); the cladding thickness default is typical, not standard",
        core=STEEL, cladding_m=float(cladding_m),
    )


_MATERIALS = {
    m.name: m for m in (COPPER, SILVER, ALUMINIUM, ALUMINIUM_6061, BRASS, STEEL, STAINLESS_304)
}
_MATERIALS["copper-clad-steel"] = copper_clad_steel()
_ALIASES = {
    "cu": "copper", "ag": "silver", "silver-plated": "silver", "al": "aluminium",
    "aluminum": "aluminium", "aluminum-6061": "aluminium-6061", "6061": "aluminium-6061",
    "mild-steel": "steel", "stainless": "stainless-304", "ss304": "stainless-304",
    "ccs": "copper-clad-steel", "copperweld": "copper-clad-steel",
}


def known_materials() -> tuple[str, ...]:
    """Canonical names accepted by :func:`get_material`."""
    return tuple(sorted(_MATERIALS))


def get_material(name: str, cladding_m: float | None = None) -> Material:
    """Look up a material by name (case, spaces and underscores do not matter).

    Parameters
    ----------
    name : str
        E.g. ``'copper'``, ``'aluminium-6061'``, ``'copper-clad-steel'``.
    cladding_m : float, optional
        Cladding thickness for ``copper-clad-steel``, m.

    Raises
    ------
    InputError
        For an unknown name (the message lists the known ones).
    """
    key = str(name).strip().lower().replace("_", "-").replace(" ", "-")
    key = _ALIASES.get(key, key)
    if key not in _MATERIALS:
        raise InputError(
            f"unknown material {name!r}: choose one of {', '.join(known_materials())}"
        )
    if cladding_m is not None:
        if key != "copper-clad-steel":
            raise InputError(f"a cladding thickness applies only to copper-clad-steel, not {key!r}")
        return copper_clad_steel(cladding_m)
    return _MATERIALS[key]
