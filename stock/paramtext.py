"""The parameter expression syntax: how parameters are written on the command line, in
kit files and in the catalog data files.

::

    vceo=40V                        the ParamDef's default bound (a rating: max)
    ft>=300MHz                      a guaranteed minimum          (ft.min=300MHz)
    vf<=1V@if=10mA                  a guaranteed maximum, with its test condition
    hfe=100..300@ic=150mA,vce=10V   min and max at the same conditions
    ft~300MHz                       a typical value               (ft.typ=300MHz)
    vz.nom=4V7                      an explicit bound: .min .typ .max .nom
    tol=±5%   tol=5%   tol=J        tolerance min −0.05, max +0.05
    tol=+80/-20%                    tolerance min −0.20, max +0.80
    pd=625mW@ta=25°C

Several expressions are joined with ``;``. Values are read with
:func:`stock.quantities.parse_value` in the unit ``stock.params.PARAMS[name].unit``;
condition keys and their units come from ``stock.params.CONDITIONS``. Values are written
back with every significant digit, so ``parse_params(render_params(ps)) == ps``.
The text carries no :class:`~stock.parts.Origin`: parsed params are ``Origin.USER``.

Search criteria (:func:`parse_criterion`) use the same names with ``>=``, ``<=`` or ``=``
and no conditions: ``vceo>=30V``, ``c=100n``, ``family=c0g``.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from decimal import Decimal

from stock.errors import NotationError, suggest
from stock.kinds import Bound, Kind, normalise_family
from stock.params import CONDITIONS, PARAMS, ParamDef, Sense
from stock.parts import Param
from stock.quantities import parse_tol, parse_value, render
from stock.slots import Op

__all__ = [
    "Criterion", "TEXT_ATTRIBUTES", "parse_criterion", "parse_param", "parse_params",
    "render_param", "render_params",
]

#: Attributes a criterion may compare as text (not in stock.params): they are fields of a
#: part record, compared for equality.
TEXT_ATTRIBUTES = ("family", "safety", "pinout", "package")

_OPS = {">=": ">=", "≥": ">=", "<=": "<=", "≤": "<=", "~": "~", "=": "=", "==": "="}
_HEAD_RE = re.compile(
    r"^\s*(?P<name>[A-Za-z_][A-Za-z0-9_]*)(?:\.(?P<bound>[A-Za-z]+))?\s*"
    r"(?P<op>>=|<=|≥|≤|==|=|~)\s*(?P<value>.*?)\s*$"
)
_FORMS = "write it like vceo=40V, ft>=300MHz, vf<=1V@if=10mA or hfe=100..300@ic=150mA"


def _err(text: str, why: str) -> NotationError:
    return NotationError(f"cannot read parameter {text!r}: {why}; {_FORMS}")


def _pdef(name: str, text: str, kind: Kind | None) -> ParamDef:
    key = name.lower()
    pdef = PARAMS.get(key)
    if pdef is None:
        raise NotationError(
            f"unknown parameter {name!r} in {text!r}{suggest(key, list(PARAMS))}; "
            "see 'stock params' for the list"
        )
    if kind is not None and not pdef.applies_to(kind):
        raise NotationError(
            f"{pdef.name!r} ({pdef.label}) is not a {kind.value} parameter, in {text!r}; "
            f"it applies to {', '.join(k.value for k in pdef.kinds)}"
        )
    return pdef


def _value(text: str, unit: str, whole: str) -> float:
    try:
        return parse_value(text, unit).value
    except NotationError as e:
        raise NotationError(f"{e} (in {whole!r})") from None


def _fraction(text: str, whole: str) -> float:
    """A signed tolerance figure: ``5%``, ``-20%``, ``+0.5 %`` or a bare fraction ``0.05``."""
    t = text.strip().replace("\u2212", "-").replace(" ", "")
    m = re.fullmatch(r"([+-]?)(\d+(?:\.\d*)?|\.\d+)%", t)
    if m:
        return float(f"{m[1]}{m[2]}e-2")  # the decimal shifted exactly: 4.7 % -> 0.047
    return _value(t, "", whole)


def _conditions(text: str, whole: str) -> dict[str, float]:
    at: dict[str, float] = {}
    for piece in text.split(","):
        key, eq, val = piece.partition("=")
        key = key.strip().lower()
        if not eq or not key or not val.strip():
            raise _err(whole, f"condition {piece.strip()!r} needs a key and a value, as ic=150mA")
        if key not in CONDITIONS:
            raise NotationError(
                f"unknown test condition {key!r} in {whole!r}{suggest(key, list(CONDITIONS))};"
                f" use one of {', '.join(CONDITIONS)}"
            )
        if key in at:
            raise _err(whole, f"condition {key!r} is given twice")
        at[key] = _value(val.strip(), CONDITIONS[key], whole)
    return at


_BOUND_OF_OP = {">=": Bound.MIN, "<=": Bound.MAX, "~": Bound.TYP}


def parse_param(text: str, kind: Kind | None = None) -> list[Param]:
    """Read one parameter expression into one or two Params (a range gives min and max).

    ``kind`` (optional) checks that the parameter belongs to that kind of part.
    Raises NotationError naming the text.
    """
    if not isinstance(text, str) or not text.strip():
        raise _err(str(text), "it is empty")
    head, at_sign, cond = text.partition("@")
    m = _HEAD_RE.match(head)
    if not m:
        if re.search(r"[<>](?!=)", head):
            raise _err(text, "use >= or <= (datasheet limits are inclusive)")
        raise _err(text, "expected a name, an operator (= >= <= ~) and a value")
    name, op, val = m["name"], _OPS[m["op"]], m["value"]
    pdef = _pdef(name, text, kind)
    if not val:
        raise _err(text, "the value is missing")
    at = _conditions(cond, text) if at_sign else {}
    if at_sign and not cond.strip():
        raise _err(text, "nothing follows '@'")
    explicit: Bound | None = None
    if m["bound"]:
        try:
            explicit = Bound(m["bound"].lower())
        except ValueError:
            raise _err(text, f"unknown bound {m['bound']!r}; use .min .typ .max or .nom") from None
        if op != "=":
            raise _err(text, "write an explicit bound with '=', as ft.min=300MHz")

    def one(bound: Bound, value: float) -> Param:
        return Param(pdef.name, bound, value, dict(at))

    is_tol = pdef.name == "tol"
    if op == "=" and explicit is None and ".." in val:
        lo_text, _, hi_text = val.partition("..")
        if not lo_text.strip() or not hi_text.strip() or ".." in hi_text:
            raise _err(text, "a range needs two values, as 100..300")
        lo_text, hi_text = lo_text.strip(), hi_text.strip()
        bare = re.fullmatch(r"[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?", lo_text)
        suffix = re.fullmatch(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?(\s*[^\d\s.][^\d]*)",
                              hi_text)
        if bare and suffix:
            lo_text += suffix[1]  # 440..540pF: the low end shares the high end's pF
        if is_tol:
            lo, hi = _fraction(lo_text, text), _fraction(hi_text, text)
        else:
            lo, hi = _value(lo_text, pdef.unit, text), _value(hi_text, pdef.unit, text)
        return [one(Bound.MIN, lo), one(Bound.MAX, hi)]
    if is_tol and op == "=" and explicit is None:
        try:
            minus, plus = parse_tol(val)
        except NotationError:
            f = abs(_fraction(val, text))  # a bare fraction: tol=0.05 is ±5 %
            minus, plus = -f, f
        return [one(Bound.MIN, minus), one(Bound.MAX, plus)]
    bound = explicit or _BOUND_OF_OP.get(op) or pdef.bound
    value = _fraction(val, text) if is_tol else _value(val, pdef.unit, text)
    return [one(bound, value)]


def parse_params(texts: Iterable[str] | str, kind: Kind | None = None) -> list[Param]:
    """Read several expressions: a ``;``-separated string or a list of them."""
    pieces = [texts] if isinstance(texts, str) else list(texts)
    out: list[Param] = []
    for piece in pieces:
        for part in piece.split(";"):
            if part.strip():
                out.extend(parse_param(part.strip(), kind))
    return out


# --- writing ------------------------------------------------------------------------------

def _num(value: float, unit: str) -> str:
    # every significant digit, so the text reads back to the same float
    return render(value, unit, style="compact", digits=17)


def _pct(f: float) -> str:
    d = Decimal(repr(abs(f))).scaleb(2).normalize()
    return f"{d:f}%"


def _signed_pct(f: float) -> str:
    return ("-" if f < 0 or (f == 0 and str(f).startswith("-")) else "") + _pct(f)


def _at(at: Mapping[str, float]) -> str:
    items = dict(at)
    if not items:
        return ""
    return "@" + ",".join(f"{k}={_num(v, CONDITIONS.get(k, ''))}" for k, v in items.items())


_OP_OF_BOUND = {Bound.MIN: ">=", Bound.MAX: "<=", Bound.TYP: "~"}


def _one(p: Param, pdef: ParamDef) -> str:
    is_tol = pdef.name == "tol"
    text = _signed_pct(p.value) if is_tol else _num(p.value, pdef.unit)
    # "=" for a rating's or a nominal's own bound (vceo=40V, r=4.7kΩ); characteristics show
    # their bound (ft>=300MHz, vf<=1V), which reads unambiguously
    if p.bound == pdef.bound and not is_tol and (pdef.sense is not Sense.CHAR
                                                  or p.bound is Bound.NOM):
        return f"{pdef.name}={text}{_at(p.at)}"
    if p.bound in _OP_OF_BOUND:
        return f"{pdef.name}{_OP_OF_BOUND[p.bound]}{text}{_at(p.at)}"
    return f"{pdef.name}.{p.bound.value}={text}{_at(p.at)}"


def _pair(lo: Param, hi: Param, pdef: ParamDef) -> str:
    if pdef.name == "tol":
        if lo.value <= 0 <= hi.value:
            if lo.value == -hi.value:
                body = f"±{_pct(hi.value)}"
            else:
                body = f"+{_pct(hi.value)[:-1]}/-{_pct(lo.value)}"
        else:
            body = f"{_signed_pct(lo.value)}..{_signed_pct(hi.value)}"
    else:
        body = f"{_num(lo.value, pdef.unit)}..{_num(hi.value, pdef.unit)}"
    return f"{pdef.name}={body}{_at(lo.at)}"


def render_param(params_of_one_name: list[Param]) -> str:
    """Write the Params of one name back as expressions: a min directly followed by a max
    at the same conditions becomes a range (``hfe=100..300@ic=150mA,vce=10V``); anything
    else is written one expression per Param, joined with ``; ``."""
    ps = list(params_of_one_name)
    out: list[str] = []
    i = 0
    while i < len(ps):
        p = ps[i]
        pdef = PARAMS.get(p.name)
        if pdef is None:
            raise NotationError(
                f"cannot write parameter {p.name!r}: not in the parameter list"
                f"{suggest(p.name, list(PARAMS))}"
            )
        nxt = ps[i + 1] if i + 1 < len(ps) else None
        if (nxt is not None and nxt.name == p.name and p.bound is Bound.MIN
                and nxt.bound is Bound.MAX and dict(p.at) == dict(nxt.at)):
            out.append(_pair(p, nxt, pdef))
            i += 2
        else:
            out.append(_one(p, pdef))
            i += 1
    return "; ".join(out)


def render_params(params: list[Param]) -> str:
    """Write Params as a ``; ``-joined string in their given order (stable: the same list
    always gives the same text, and it reads back to the same list)."""
    out: list[str] = []
    run: list[Param] = []
    for p in params:
        if run and p.name != run[0].name:
            out.append(render_param(run))
            run = []
        run.append(p)
    if run:
        out.append(render_param(run))
    return "; ".join(out)


# --- search criteria ------------------------------------------------------------------------

@dataclass(frozen=True)
class Criterion:
    """One condition of a search or a requirement: ``vceo >= 30.0``; ``family = "c0g"``."""

    param: str
    op: Op
    value: float | str


_CRIT_RE = re.compile(
    r"^\s*(?P<name>[A-Za-z_][A-Za-z0-9_]*)\s*(?P<op>>=|<=|≥|≤|==|=)\s*(?P<value>.+?)\s*$"
)


def parse_criterion(text: str, kind: Kind | None = None) -> Criterion:
    """Read a search criterion: ``vceo>=30V``, ``c=100n``, ``ft>=100MHz``, ``family=c0g``,
    ``v_rated>=50V``, ``tol<=5%``. Numeric values are SI floats; tolerances are fractions."""
    forms = "write it like vceo>=30V, c=100n, ft>=100MHz or family=c0g"
    if not isinstance(text, str) or not text.strip():
        raise NotationError(f"cannot read criterion {text!r}: it is empty; {forms}")
    if "@" in text:
        raise NotationError(
            f"cannot read criterion {text!r}: a search criterion has no test conditions; "
            f"drop the '@…' part; {forms}"
        )
    m = _CRIT_RE.match(text)
    if not m:
        why = ("use >= or <=" if re.search(r"[<>~]", text)
               else "expected a name, >=, <= or =, and a value")
        raise NotationError(f"cannot read criterion {text!r}: {why}; {forms}")
    name, op, val = m["name"].lower(), Op(_OPS[m["op"]]), m["value"]
    if name in TEXT_ATTRIBUTES:
        if op is not Op.EQ:
            raise NotationError(
                f"cannot read criterion {text!r}: {name} is compared with '=' only; {forms}"
            )
        return Criterion(name, op, _text_attr(name, val, kind, text))
    pdef = _pdef(name, text, kind)
    if pdef.name == "tol":
        value = abs(_fraction(val.lstrip("±"), text))
    else:
        value = _value(val, pdef.unit, text)
    return Criterion(pdef.name, op, value)


def _text_attr(name: str, val: str, kind: Kind | None, text: str) -> str:
    v = val.strip()
    if name == "family":
        if kind is None:
            return v.lower().replace("_", "-").replace(" ", "-")
        try:
            return normalise_family(kind, v) or ""
        except ValueError as e:
            raise NotationError(f"{e} (in {text!r})") from None
    if name in ("pinout", "safety"):
        return v.upper()
    return v
