"""stock: a parts inventory and build-substitution manager for electronics builders.

The package is a library first; :mod:`stock.cli` is a thin command line on top of it.
Values are SI floats inside (ohm, farad, henry, hertz, volt, ampere, watt, °C);
builders' notation is parsed and rendered only at the edges (:mod:`stock.quantities`).
"""

__version__ = "0.1.0"
