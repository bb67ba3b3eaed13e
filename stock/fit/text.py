"""Short renderings of SI values for check lines ("40 V", "300 MHz", "4.7 kΩ", "±5 %")."""

from __future__ import annotations

from collections.abc import Mapping


def si(value: float, unit: str = "") -> str:
    """``value`` to 3 significant figures with an SI prefix and unit: '4.7 mF', '24 V'.

    The notation is :func:`stock.quantities.render` (style ``si``); check texts are
    rendered only when shown, so this costs nothing while ranking.
    """
    from stock.quantities import render

    return render(float(f"{value:.3g}"), unit or None, style="si")


def frac(value: float) -> str:
    """A fraction as a percentage: 0.05 → '5 %'."""
    return f"{value * 100:.3g} %"


def at_text(at: Mapping[str, float] | tuple[tuple[str, float], ...]) -> str:
    """Test conditions: {'ic': 0.15, 'vce': 10} → '@ IC 150 mA, VCE 10 V'."""
    from stock.params import CONDITIONS

    items = at.items() if isinstance(at, Mapping) else at
    parts = [f"{k.upper()} {si(v, CONDITIONS.get(k, ''))}" for k, v in items]
    return ("@ " + ", ".join(parts)) if parts else ""
