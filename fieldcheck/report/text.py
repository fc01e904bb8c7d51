"""Plain-text formatting helpers shared by the terminal reports."""

from __future__ import annotations


def mhz(f_hz: float, digits: int = 3) -> str:
    return f"{f_hz / 1e6:.{digits}f} MHz"


def mhz_pm(f_hz: float, sigma_hz: float) -> str:
    """``138.79 ± 1.59 MHz``: enough decimals to show the uncertainty's leading digit twice."""
    import math

    if not math.isfinite(sigma_hz) or sigma_hz <= 0:
        return f"{f_hz / 1e6:.3f} MHz"
    digits = min(6, max(3, 1 - math.floor(math.log10(sigma_hz / 1e6))))
    return f"{f_hz / 1e6:.{digits}f} ± {sigma_hz / 1e6:.{digits}f} MHz"


def mm(length_m: float, digits: int = 1) -> str:
    return f"{length_m * 1e3:.{digits}f} mm"


def signed_mm(length_m: float, digits: int = 1) -> str:
    return f"{length_m * 1e3:+.{digits}f} mm"


def pm(value: float, sigma: float, fmt: str = ".3g", unit: str = "") -> str:
    u = f" {unit}" if unit else ""
    return f"{value:{fmt}}{u} ± {sigma:{fmt}}{u}"


def table(rows, indent: int = 2) -> list[str]:
    """Two-column aligned rows: [(label, text), ...]."""
    width = max((len(r[0]) for r in rows), default=0)
    return [" " * indent + f"{label:<{width}}  {text}" for label, text in rows]


SAFETY_TRIM = (
    "Safety: do not transmit while you handle the antenna; keep clear of RF exposure limits "
    "when testing with power. On an installed antenna, work at height and near power lines "
    "only as local codes and licensed practice allow."
)
