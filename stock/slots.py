"""Slots: one position in a circuit, what it calls for, what it does, what it must meet.

Kit files and BOM spreadsheets (:mod:`stock.kits`) produce slots; the fit engine
(:mod:`stock.fit`) turns a slot into requirements and holds candidates against them.
All values are SI floats.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from enum import StrEnum

from stock.kinds import Kind
from stock.parts import PartSpec


class Role(StrEnum):
    """What a slot does in the circuit; roles drive the rules that derive requirements."""

    GENERAL = "general"  # nothing known beyond the called-for part
    AUDIO_AMP = "audio-amp"
    RF_AMP = "rf-amp"
    OSCILLATOR = "oscillator"
    MIXER = "mixer"
    PA_A = "pa-a"  # RF power amplifier, class A
    PA_B = "pa-b"
    PA_C = "pa-c"
    PA_E = "pa-e"
    SWITCH = "switch"
    PASS = "pass"  # series pass element of a regulator
    DETECTOR = "detector"
    RECTIFIER_HALF = "rectifier-half"  # half-wave, capacitor input
    RECTIFIER_BRIDGE = "rectifier-bridge"
    CLAMP = "clamp"  # clamp / switching diode
    VARICAP = "varicap"
    TUNED = "tuned"  # frequency-determining: LC tank, filter
    CRYSTAL_LOAD = "crystal-load"  # a crystal's load capacitor (frequency-determining)
    TIMING = "timing"  # RC timing (frequency-determining)
    COUPLING = "coupling"
    BYPASS = "bypass"
    DECOUPLING = "decoupling"
    RESERVOIR = "reservoir"  # rectifier reservoir / filter capacitor
    BIAS = "bias"
    LOAD = "load"
    RF_CHOKE = "rf-choke"
    CRYSTAL = "crystal"
    MAINS_X = "mains-x"  # across the line (IEC 60384-14 class X position)
    MAINS_Y = "mains-y"  # line to earth (class Y position)
    REGULATOR = "regulator"


#: Roles whose capacitors set a frequency: only class-1 dielectrics belong there.
FREQUENCY_DETERMINING = frozenset({Role.TUNED, Role.OSCILLATOR, Role.CRYSTAL_LOAD, Role.TIMING})


class Source(StrEnum):
    """Where a requirement came from; shown beside every check."""

    PART = "part"  # the called-for part's guaranteed ratings
    ROLE = "role"  # a rule applied to the slot's role and operating conditions
    USER = "user"  # written on the slot or the command line; these win


class Op(StrEnum):
    GE = ">="
    LE = "<="
    EQ = "="  # equal within tolerance (value slots) or equal text (family, pinout)


@dataclass(frozen=True)
class Requirement:
    """A bound on one parameter a candidate must meet in a slot."""

    param: str  # a name from stock.params.PARAMS, or an attribute: family, safety, pinout
    op: Op
    value: float | str
    source: Source
    why: str = ""
    rule: str | None = None  # id of the policy rule that derived it (stock.rules)
    warn_only: bool = False  # a preference: missing it warns, never fails
    prefer: float | None = None  # a stricter value that is preferred: missing only it warns
    at: tuple[tuple[str, float], ...] = ()  # operating point the bound applies at (if=1 mA)


@dataclass
class Conditions:
    """Operating conditions of a circuit or a slot (None = not known). SI units."""

    supply: float | None = None  # V, the rail feeding the stage
    freq: float | None = None  # Hz, operating frequency
    current: float | None = None  # A, collector/drain/forward/load current
    dissipation: float | None = None  # W, power the part must dissipate
    ambient: float | None = None  # °C
    v_peak: float | None = None  # V, peak voltage across the part
    v_rms: float | None = None  # V, RMS voltage across the part (AC)
    v_dc: float | None = None  # V, DC working voltage across the part
    i_peak: float | None = None  # A
    impedance: float | None = None  # Ω, the impedance an RF choke isolates

    def merged(self, over: Conditions | None) -> Conditions:
        """These conditions with every value ``over`` knows put on top."""
        if over is None:
            return Conditions(**vars(self))
        return Conditions(**{k: (getattr(over, k) if getattr(over, k) is not None else v)
                             for k, v in vars(self).items()})


@dataclass
class Slot:
    """One position in a kit: reference designators, what it calls for, role, conditions."""

    refs: list[str]
    qty: int  # per copy of the kit
    calls_for: str  # as written: "2N2222A", "4k7", "100n C0G 50V"
    kind: Kind
    part: PartSpec | None = None  # the called-for part, resolved (store, catalog or value)
    role: Role = Role.GENERAL
    conditions: Conditions = field(default_factory=Conditions)
    requirements: list[Requirement] = field(default_factory=list)  # explicit, Source.USER
    tie: str | None = None  # name of a group of slots forming a tank or a crystal's load
    note: str = ""
    package: str | None = None  # package the board is laid out for ("TO-92"), if stated
    pinout: str | None = None  # pin order the board expects, pin 1 first ("EBC"), if stated

    @property
    def label(self) -> str:
        return ",".join(self.refs) if self.refs else self.calls_for
