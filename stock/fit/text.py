"""Short renderings of SI values for check lines ("40 V", "300 MHz", "4.7 kΩ", "±5 %").

Kept local and cheap (no regex, no imports) because the fit engine renders a few strings
for every candidate it checks.
"""

from __future__ import annotations

from collections.abc import Mapping

_PREFIXES = ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"),
             (1e-9, "n"), (1e-12, "p"), (1e-15, "f"))

# units that take SI prefixes; the rest are printed plainly
_PREFIXED = frozenset({"V", "A", "W", "Hz", "F", "H", "Ω", "S", "s", "C", "V/s"})


def si(value: float, unit: str = "") -> str:
    """``value`` with an SI prefix and unit, 3 significant figures: 0.0047 F → '4.7 mF'."""
    if unit == "" or unit not in _PREFIXED:
        num = f"{value:.3g}"
        return f"{num} {unit}".strip() if unit else num
    mag = abs(value)
    if mag == 0:
        return f"0 {unit}"
    for scale, prefix in _PREFIXES:
        if mag >= scale * 0.9995:
            return f"{value / scale:.3g} {prefix}{unit}"
    return f"{value:.3g} {unit}"


def frac(value: float) -> str:
    """A fraction as a percentage: 0.05 → '5 %'."""
    return f"{value * 100:.3g} %"


def at_text(at: Mapping[str, float] | tuple[tuple[str, float], ...]) -> str:
    """Test conditions: {'ic': 0.15, 'vce': 10} → '@ IC 150 mA, VCE 10 V'."""
    from stock.params import CONDITIONS

    items = at.items() if isinstance(at, Mapping) else at
    parts = [f"{k.upper()} {si(v, CONDITIONS.get(k, ''))}" for k, v in items]
    return ("@ " + ", ".join(parts)) if parts else ""
