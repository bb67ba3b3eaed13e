"""Kits in: our TOML kit file and plain BOM spreadsheets, read into slots.

* :mod:`stock.kits.kitfile` — the kit file (``load_kit``, ``parse_kit``, :class:`Kit`);
* :mod:`stock.kits.bom` — plain BOM spreadsheets (``load_bom``, ``load_any``);
* :mod:`stock.kits.designators` — ``expand("R3-R6, R9")`` and ``compress``.
"""

from __future__ import annotations

from stock.kits.bom import BOM_COLUMNS, load_any, load_bom
from stock.kits.designators import compress, expand
from stock.kits.kitfile import Kit, Tie, load_kit, parse_kit

__all__ = ["BOM_COLUMNS", "Kit", "Tie", "compress", "expand", "load_any", "load_bom",
           "load_kit", "parse_kit"]
