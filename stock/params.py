"""The parameter vocabulary: every electrical parameter a part record may carry.

Names are the datasheet symbols builders know (``vceo``, ``ic``, ``ft``, ``hfe``).
Values are SI floats: ohm, farad, henry, hertz, volt, ampere, watt, second, °C,
°C/W; tolerances are fractions (0.05 for ±5 %).

Each parameter has a *sense* that says how a requirement is held against it:

* ``rating`` — one limit the part withstands or delivers (VCEO, IC max, PD, a
  capacitor's rated voltage). Compared directly; it is a guaranteed figure.
* ``char`` — a characteristic with min / typ / max (fT, hFE, VF, RDS(on)). A
  requirement ``>= x`` is held against the guaranteed *min*, ``<= x`` against the
  guaranteed *max*; a typical value only ever gives a warning.
* ``nominal`` — the part's nominal value (4k7, 100 nF, 10 MHz).
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum

from stock.kinds import Bound, Kind


class Sense(StrEnum):
    RATING = "rating"
    CHAR = "char"
    NOMINAL = "nominal"


@dataclass(frozen=True)
class ParamDef:
    """One parameter of the vocabulary."""

    name: str
    unit: str  # SI unit symbol used to parse and render: V A W Hz F H Ω °C °C/W s dB ''
    sense: Sense
    label: str  # what a builder calls it
    kinds: tuple[Kind, ...]  # kinds it belongs to (empty = any kind)
    bound: Bound  # the bound a bare ``name=value`` means

    def applies_to(self, kind: Kind) -> bool:
        return not self.kinds or kind in self.kinds


_B, _F, _D, _C, _R, _L, _X, _I = (
    Kind.BJT, Kind.FET, Kind.DIODE, Kind.CAPACITOR, Kind.RESISTOR, Kind.INDUCTOR,
    Kind.CRYSTAL, Kind.IC,
)
_SEMI = (_B, _F, _D, _I)


def _p(name: str, unit: str, sense: Sense, label: str, kinds: tuple[Kind, ...] = (),
       bound: Bound | None = None) -> ParamDef:
    if bound is None:
        bound = {Sense.RATING: Bound.MAX, Sense.CHAR: Bound.TYP, Sense.NOMINAL: Bound.NOM}[sense]
    return ParamDef(name, unit, sense, label, kinds, bound)


R, C, N = Sense.RATING, Sense.CHAR, Sense.NOMINAL

PARAMS: dict[str, ParamDef] = {
    p.name: p
    for p in (
        # --- thermal, any semiconductor --------------------------------------------
        _p("pd", "W", R, "power dissipation (at the stated TA or TC)", (_B, _F, _D, _I)),
        _p("tj", "°C", R, "maximum junction temperature", _SEMI),
        _p("rth_ja", "°C/W", C, "thermal resistance junction–ambient", _SEMI, Bound.MAX),
        _p("rth_jc", "°C/W", C, "thermal resistance junction–case", _SEMI, Bound.MAX),
        # --- bipolar transistors --------------------------------------------------
        _p("vceo", "V", R, "collector–emitter breakdown, base open", (_B,)),
        _p("vcbo", "V", R, "collector–base breakdown, emitter open", (_B,)),
        _p("vcer", "V", R, "collector–emitter breakdown, base via resistor", (_B,)),
        _p("vebo", "V", R, "emitter–base breakdown", (_B,)),
        _p("ic", "A", R, "continuous collector current", (_B,)),
        _p("ft", "Hz", C, "transition frequency", (_B,), Bound.MIN),
        _p("hfe", "", C, "DC current gain", (_B,), Bound.MIN),
        _p("vce_sat", "V", C, "collector–emitter saturation voltage", (_B,), Bound.MAX),
        _p("ccb", "F", C, "collector–base capacitance", (_B,), Bound.MAX),
        _p("nf", "dB", C, "noise figure", (_B, _F), Bound.MAX),
        # --- field-effect transistors ---------------------------------------------
        _p("vds", "V", R, "drain–source voltage", (_F,)),
        _p("vgs", "V", R, "gate–source voltage", (_F,)),
        _p("id", "A", R, "continuous drain current", (_F,)),
        _p("rds_on", "Ω", C, "drain–source on-resistance", (_F,), Bound.MAX),
        _p("vgs_th", "V", C, "gate threshold voltage", (_F,)),
        _p("vgs_off", "V", C, "gate–source cut-off voltage (JFET)", (_F,)),
        _p("idss", "A", C, "zero-gate-voltage drain current (JFET)", (_F,)),
        _p("gfs", "S", C, "forward transconductance", (_F,), Bound.MIN),
        _p("ciss", "F", C, "input capacitance", (_F,), Bound.MAX),
        _p("crss", "F", C, "reverse transfer capacitance", (_F,), Bound.MAX),
        _p("qg", "C", C, "total gate charge", (_F,), Bound.MAX),
        # --- diodes ---------------------------------------------------------------
        _p("vrrm", "V", R, "repetitive peak reverse voltage", (_D,)),
        _p("if_avg", "A", R, "average forward current", (_D,)),
        _p("ifsm", "A", R, "surge forward current", (_D,)),
        _p("vf", "V", C, "forward voltage (at the stated IF)", (_D,), Bound.MAX),
        _p("ir", "A", C, "reverse leakage current", (_D,), Bound.MAX),
        _p("cj", "F", C, "junction capacitance (at the stated VR)", (_D,), Bound.MAX),
        _p("trr", "s", C, "reverse recovery time", (_D,), Bound.MAX),
        _p("vz", "V", C, "zener voltage", (_D,), Bound.NOM),
        _p("cv", "F", C, "varicap capacitance (at the stated VR)", (_D,)),
        _p("cv_ratio", "", C, "varicap capacitance ratio", (_D,)),
        _p("rs", "Ω", C, "series resistance", (_D,), Bound.MAX),
        # --- passives -------------------------------------------------------------
        _p("r", "Ω", N, "resistance", (_R,)),
        _p("c", "F", N, "capacitance", (_C,)),
        _p("l", "H", N, "inductance", (_L,)),
        _p("tol", "", C, "tolerance (fractions: min −0.05, max +0.05 for ±5 %)", (_R, _C, _L, _X),
           Bound.MAX),
        _p("v_rated", "V", R, "rated DC voltage", (_C,)),
        _p("v_ac", "V", R, "rated AC voltage (RMS)", (_C,)),
        _p("esr", "Ω", C, "equivalent series resistance", (_C,), Bound.MAX),
        _p("i_ripple", "A", R, "rated ripple current", (_C,)),
        _p("tmin", "°C", R, "lowest operating temperature", (_C, _R, _L, _X, _I), Bound.MIN),
        _p("tmax", "°C", R, "highest operating temperature", (_C, _R, _L, _X, _I)),
        _p("p_rated", "W", R, "rated power (at 70 °C unless stated)", (_R,)),
        _p("v_limit", "V", R, "limiting element voltage", (_R,)),
        _p("tc", "ppm/°C", C, "temperature coefficient", (_R, _C), Bound.MAX),
        _p("isat", "A", R, "saturation current", (_L,)),
        _p("irms", "A", R, "rated RMS current", (_L,)),
        _p("srf", "Hz", C, "self-resonant frequency", (_L,), Bound.MIN),
        _p("q", "", C, "quality factor (at the stated f)", (_L, _D), Bound.MIN),
        _p("dcr", "Ω", C, "DC resistance", (_L,), Bound.MAX),
        # --- crystals -------------------------------------------------------------
        _p("f", "Hz", N, "nominal frequency", (_X,)),
        _p("cl", "F", N, "specified load capacitance (0 = series resonance)", (_X,)),
        _p("c0", "F", C, "shunt capacitance", (_X,)),
        _p("c1", "F", C, "motional capacitance", (_X,)),
        _p("r1", "Ω", C, "motional resistance (ESR)", (_X,), Bound.MAX),
        _p("overtone", "", N, "overtone order (1 = fundamental)", (_X,)),
        _p("drive", "W", R, "maximum drive level", (_X,)),
        # --- integrated circuits ----------------------------------------------------
        _p("vin", "V", R, "maximum input or supply voltage", (_I,)),
        _p("vout", "V", C, "output voltage", (_I,), Bound.NOM),
        _p("iout", "A", R, "output current", (_I,)),
        _p("vdrop", "V", C, "dropout voltage", (_I,), Bound.MAX),
        _p("gbw", "Hz", C, "gain–bandwidth product", (_I,)),
        _p("slew", "V/s", C, "slew rate", (_I,)),
        _p("pout", "W", C, "output power (at the stated supply and load)", (_I,)),
    )
}

#: Test-condition keys that may follow ``@`` on a parameter, with their units.
CONDITIONS: dict[str, str] = {
    "ic": "A", "vce": "V", "id": "A", "vds": "V", "vgs": "V", "if": "A", "vr": "V",
    "f": "Hz", "ta": "°C", "tc": "°C", "vcc": "V", "vs": "V", "rl": "Ω", "rbe": "Ω",
}


def param_def(name: str) -> ParamDef:
    """The definition of ``name``; ValueError listing close names if unknown."""
    key = name.strip().lower()
    try:
        return PARAMS[key]
    except KeyError:
        from stock.errors import UnknownName, suggest

        raise UnknownName(
            f"unknown parameter {name!r}{suggest(key, list(PARAMS))}; "
            "see 'stock params' for the list"
        ) from None


#: The parameter that holds a value part's nominal value, by kind.
VALUE_PARAMS: dict[Kind, str] = {_R: "r", _C: "c", _L: "l", _X: "f"}

#: The value kinds that combine in series and parallel (resistors, capacitors, inductors).
RLC_PARAMS: dict[Kind, str] = {k: v for k, v in VALUE_PARAMS.items() if k is not _X}
