"""Builders' value notation, IEC 60062 marking codes and IEC 60063 E-series.

Pure functions, no I/O: parse at the edges, keep SI floats inside.
"""

from stock.quantities.codes import (
    TOLERANCE_LETTERS,
    parse_cap_code,
    parse_eia96,
    parse_rkm,
    parse_smd_resistor,
)
from stock.quantities.eseries import (
    SERIES,
    decade,
    nearest,
    next_down,
    next_up,
    series_of,
    values_between,
)
from stock.quantities.notation import (
    STYLES,
    parse_quantity,
    parse_tol,
    parse_value,
    render,
    render_tol,
)
from stock.quantities.units import Value

__all__ = [
    "SERIES", "STYLES", "TOLERANCE_LETTERS", "Value", "decade", "nearest", "next_down",
    "next_up", "parse_cap_code", "parse_eia96", "parse_quantity", "parse_rkm",
    "parse_smd_resistor", "parse_tol", "parse_value", "render", "render_tol", "series_of",
    "values_between",
]
