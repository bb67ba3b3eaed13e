"""The policy table: every threshold the fit engine uses, with its value, source and why.

The shipped table is ``stock/data/rules.toml``; a user's config file may override any
value in a ``[rules]`` table (``ft_ratio_min = 4``). ``docs/rules.md`` is generated from
the table by :func:`render_markdown`, so the documentation never drifts from the code.
"""

from __future__ import annotations

import math
import tomllib
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, replace
from enum import StrEnum
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

from stock.errors import ConfigError, suggest


class SourceTag(StrEnum):
    """How well a rule's value is founded."""

    STANDARD = "standard"
    DATASHEET = "datasheet"
    TEXTBOOK = "textbook"
    COMMON_PRACTICE = "common practice"
    FROM_MEMORY = "from memory"


@dataclass(frozen=True)
class Rule:
    """One threshold of the policy table."""

    id: str
    value: float
    unit: str
    tag: SourceTag
    source: str
    why: str
    note: str = ""  # "overridden in <config file>" when a user changed it
    default: float | None = None  # the shipped value, when overridden


_KEYS = ("id", "value", "unit", "tag", "source", "why")


class Policy(Mapping[str, float]):
    """An immutable mapping of rule id to value; :meth:`rule` gives the whole row."""

    __slots__ = ("_rules", "_values")

    def __init__(self, rules: Mapping[str, Rule]) -> None:
        self._rules: dict[str, Rule] = dict(rules)
        # plain floats looked up on every check: keep a flat dict for speed
        self._values: dict[str, float] = {k: r.value for k, r in self._rules.items()}

    def __getitem__(self, id: str) -> float:
        try:
            return self._values[id]
        except KeyError:
            raise KeyError(f"no policy rule {id!r}{suggest(id, list(self._values))}") from None

    def rule(self, id: str) -> Rule:
        """The whole row of rule ``id`` (value, unit, tag, source, why, note)."""
        try:
            return self._rules[id]
        except KeyError:
            raise KeyError(f"no policy rule {id!r}{suggest(id, list(self._rules))}") from None

    def __iter__(self) -> Iterator[str]:
        return iter(self._rules)

    def __len__(self) -> int:
        return len(self._rules)

    def rules(self) -> list[Rule]:
        """Every rule in table order."""
        return list(self._rules.values())

    def with_values(self, values: Mapping[str, float], note: str = "") -> Policy:
        """A copy with some values changed (unknown ids raise :class:`ConfigError`)."""
        return Policy(_apply(self._rules, values, note))

    def __repr__(self) -> str:
        return f"Policy({len(self)} rules)"


def _table_text() -> str:
    return resources.files("stock").joinpath("data/rules.toml").read_text(encoding="utf-8")


def parse_table(text: str, origin: str = "rules.toml") -> dict[str, Rule]:
    """Read a policy table in the rules.toml format; :class:`ConfigError` on a bad row."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{origin}: {exc}; fix the TOML syntax there") from None
    rows = data.get("rule", [])
    if not isinstance(rows, list):
        raise ConfigError(f"{origin}: 'rule' must be an array of [[rule]] tables")
    out: dict[str, Rule] = {}
    for n, row in enumerate(rows, 1):
        missing = [k for k in _KEYS if k not in row]
        if missing:
            raise ConfigError(f"{origin}: rule #{n} lacks {', '.join(missing)}; add them")
        rid = str(row["id"])
        if rid in out:
            raise ConfigError(f"{origin}: rule {rid!r} appears twice; keep one row")
        value = _number(row["value"], f"{origin}: rule {rid!r}")
        try:
            tag = SourceTag(str(row["tag"]))
        except ValueError:
            tags = ", ".join(t.value for t in SourceTag)
            raise ConfigError(f"{origin}: rule {rid!r} has tag {row['tag']!r}; use one of: {tags}")\
                from None
        out[rid] = Rule(rid, value, str(row["unit"]), tag, str(row["source"]), str(row["why"]))
    return out


def _number(v: Any, where: str) -> float:
    if isinstance(v, bool) or not isinstance(v, int | float):
        raise ConfigError(f"{where}: value {v!r} is not a number; write a plain number")
    f = float(v)
    if not math.isfinite(f):
        raise ConfigError(f"{where}: value {v!r} is not finite; write a plain number")
    return f


@lru_cache(maxsize=1)
def _shipped() -> Policy:
    return Policy(parse_table(_table_text()))


def shipped_policy() -> Policy:
    """The policy exactly as shipped (no user overrides)."""
    return _shipped()


def _apply(rules: Mapping[str, Rule], values: Mapping[str, Any], note: str) -> dict[str, Rule]:
    out = dict(rules)
    for rid, v in values.items():
        if rid not in out:
            raise ConfigError(
                f"unknown rule {rid!r} in [rules]{suggest(rid, list(out))}; "
                "see docs/rules.md for the rule ids"
            )
        value = _number(v, f"[rules] {rid}")
        old = out[rid]
        shipped = old.default if old.default is not None else old.value
        out[rid] = replace(old, value=value, note=note or old.note, default=shipped)
    return out


def load_policy(config: Mapping[str, Any] | None = None, path: Path | None = None) -> Policy:
    """The shipped table with the ``[rules]`` overrides of a config.

    ``config`` is the parsed config file (:func:`stock.config.load_config`); when None
    the file at ``path`` (default: the user's config file) is read. Overridden rows keep
    a note naming the config file. An unknown rule id raises :class:`ConfigError`.
    """
    from stock.config import config_path, load_config

    where = path or config_path()
    if config is None:
        config = load_config(path)
    overrides = config.get("rules", {}) if config else {}
    if not overrides:
        return _shipped()
    if not isinstance(overrides, Mapping):
        raise ConfigError(f"{where}: [rules] must be a table of rule = number lines")
    return _shipped().with_values(overrides, note=f"overridden in {where}")


def _fmt_value(rule: Rule) -> str:
    v = rule.value
    if rule.unit == "F":
        return f"{v * 1e12:g} pF"
    if rule.unit == "A" and abs(v) < 1:
        return f"{v * 1e3:g} mA"
    if rule.unit == "±":
        return f"±{v * 100:g} %"
    if rule.unit in ("×", "class", ""):
        return f"{v:g}" + (" ×" if rule.unit == "×" else "")
    return f"{v:g} {rule.unit}"


def render_markdown(policy: Policy) -> str:
    """docs/rules.md: every rule with its value, source tag, source and why."""
    lines = [
        "# Policy rules",
        "",
        "<!-- generated from stock/data/rules.toml by stock.rules.render_markdown; "
        "do not edit by hand -->",
        "",
        "Every threshold the fit engine uses lives in one table, `stock/data/rules.toml`.",
        "Each rule has a value, a source tag (standard, datasheet, textbook, common practice,",
        "from memory), where the value comes from, and why it matters. Override any value in",
        "your config file:",
        "",
        "```toml",
        "[rules]",
        "ft_ratio_min = 4",
        "```",
        "",
        "An unknown rule id in `[rules]` is an error that names it. Rules tagged *common",
        "practice* or *from memory* are judgement calls: check them against your own practice.",
        "",
        "| rule | value | tag | source | why |",
        "|---|---|---|---|---|",
    ]
    for r in policy.rules():
        note = f" ({r.note}; shipped {r.default:g})" if r.note and r.default is not None else ""
        cells = [f"`{r.id}`", _fmt_value(r) + note, r.tag.value, r.source, r.why]
        lines.append("| " + " | ".join(c.replace("|", "\\|") for c in cells) + " |")
    lines.append("")
    return "\n".join(lines)
