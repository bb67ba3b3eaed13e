"""Cautions printed where a role can hurt: mains, safety capacitors, RF power, voltage, heat.

The engine checks numbers; it does not make mains work or a transmitter safe. These lines
say so plainly and defer to datasheets, local regulations and licensed practice.
"""

from __future__ import annotations

import math

from stock.kinds import POLARISED_FAMILIES, Kind
from stock.parts import PartSpec
from stock.rules import Policy, shipped_policy
from stock.slots import Role, Slot

DEFER = "datasheets and local regulations rule"

MAINS = ("Mains: only an IEC 60384-14 safety capacitor of the same or a better class (X2 → X1, "
         "Y2, Y1; Y2 → Y1) and at least the same AC rating may go here, never a plain capacitor; "
         "work on mains only if you are qualified to; " + DEFER + ".")
RF_POWER = ("RF power amplifier: a transmitter needs a licence and a harmonic (low-pass) filter "
            "on its output; heat-sink the device and check it at full drive into a mismatched "
            "load; " + DEFER + ".")
HIGH_VOLTAGE = ("High voltage: {v} can hurt; discharge capacitors before touching and keep "
                "one hand away; " + DEFER + ".")
HEAT = ("Heat: the part dissipates {p}; it will be hot enough to burn, so heat-sink it and "
        "keep it clear of other parts; " + DEFER + ".")
POLARISED = ("Polarised capacitor ({fam}): reversed or over-voltage it can vent, burst or burn; "
             "mount + to the higher DC potential; " + DEFER + ".")

_PA = frozenset({Role.PA_A, Role.PA_B, Role.PA_C, Role.PA_E})


def cautions(slot: Slot, candidate: PartSpec | None = None, *,
             policy: Policy | None = None) -> list[str]:
    """The cautions for a slot (and a candidate for it), most serious first."""
    pol = policy if policy is not None else shipped_policy()
    c = slot.conditions
    out: list[str] = []
    called_safety = slot.part.attrs.get("safety") if slot.part else None
    cand_safety = candidate.attrs.get("safety") if candidate else None
    if slot.role in (Role.MAINS_X, Role.MAINS_Y) or called_safety or cand_safety:
        out.append(MAINS)
    if slot.role in _PA:
        out.append(RF_POWER)
    volts: list[str] = []
    dc = [v for v in (c.supply, c.v_dc, c.v_peak) if v is not None]
    if dc and max(abs(v) for v in dc) > pol["caution_v_dc"]:
        volts.append(f"{max(abs(v) for v in dc):g} V")
    if c.v_rms is not None and c.v_rms > pol["caution_v_ac"]:
        volts.append(f"{c.v_rms:g} V RMS ({c.v_rms * math.sqrt(2):.0f} V peak)")
    if volts:
        out.append(HIGH_VOLTAGE.format(v=" and ".join(volts)))
    diss = c.dissipation
    if diss is not None and diss >= pol["caution_heat_w"]:
        out.append(HEAT.format(p=f"{diss:.3g} W"))
    elif c.supply and c.current and slot.kind in (Kind.BJT, Kind.FET) and \
            slot.role is not Role.SWITCH and c.supply * c.current >= pol["caution_heat_w"]:
        # a linear stage can dissipate up to its DC input; a saturated switch far less
        out.append(HEAT.format(p=f"up to {c.supply * c.current:.3g} W (supply × current)"))
    fam = candidate.family if candidate else (slot.part.family if slot.part else None)
    if slot.kind is Kind.CAPACITOR and fam in POLARISED_FAMILIES:
        out.append(POLARISED.format(fam=fam))
    return out
