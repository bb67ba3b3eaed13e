"""The kit-file JSON Schema, and a small validator for it.

The schema (``stock/data/kit.schema.json``, JSON Schema 2020-12) is the one statement
of the kit file's structure: the docs and editors read it, and so does this module.
The validator covers the keywords the schema uses — ``type``, ``properties``,
``required``, ``additionalProperties``, ``items``, ``enum``, ``const``, ``minimum``,
``minItems``, ``minLength``, ``pattern`` and local ``$ref`` — and reports each
problem with the key path, so the kit loader can name the line.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from functools import cache
from importlib import resources
from typing import Any

from stock.errors import suggest
from stock.kits.tomllines import Path

_TYPES: dict[str, tuple[type, ...]] = {
    "string": (str,),
    "integer": (int,),
    "number": (int, float),
    "boolean": (bool,),
    "array": (list,),
    "object": (dict,),
}
_TYPE_WORDS = {"string": "text in quotes", "integer": "a whole number", "number": "a number",
               "boolean": "true or false", "array": "a list [...]", "object": "a table"}


@dataclass(frozen=True)
class Problem:
    """One way a document breaks the schema: where, and what to do about it."""

    path: Path
    message: str


@cache
def kit_schema() -> dict[str, Any]:
    """The kit-file schema as a dict."""
    text = resources.files("stock").joinpath("data/kit.schema.json").read_text("utf-8")
    schema: dict[str, Any] = json.loads(text)
    return schema


def _is(value: Any, name: str) -> bool:
    if isinstance(value, bool) and name != "boolean":
        return False  # TOML true is not the number 1
    return isinstance(value, _TYPES[name])


def _name_of(value: Any) -> str:
    for name in ("boolean", "string", "integer", "number", "array", "object"):
        if _is(value, name):
            return _TYPE_WORDS[name]
    return type(value).__name__


def where(path: Path) -> str:
    """A path in words: ``("slot", 2, "role")`` → ``slot 3, role``."""
    words: list[str] = []
    for p in path:
        if isinstance(p, int):
            if words:
                words[-1] = f"{words[-1]} {p + 1}"
            else:
                words.append(f"item {p + 1}")
        else:
            words.append(p)
    return ", ".join(words) if words else "the file"


def validate(doc: Any, schema: dict[str, Any] | None = None) -> list[Problem]:
    """Every problem of ``doc`` against ``schema`` (the kit schema by default)."""
    root = kit_schema() if schema is None else schema
    out: list[Problem] = []
    _check(doc, root, root, (), out)
    return out


def _resolve(node: dict[str, Any], root: dict[str, Any]) -> dict[str, Any]:
    while "$ref" in node:
        ref = node["$ref"]
        if not ref.startswith("#/"):
            raise ValueError(f"only local $ref is supported, not {ref!r}")
        target: Any = root
        for part in ref[2:].split("/"):
            target = target[part]
        merged = {k: v for k, v in node.items() if k != "$ref"}
        node = {**target, **merged}
    return node


def _check(value: Any, node: dict[str, Any], root: dict[str, Any], path: Path,
           out: list[Problem]) -> None:
    node = _resolve(node, root)
    key = str(path[-1]) if path and isinstance(path[-1], str) else where(path)
    types = node.get("type")
    if types is not None:
        names = [types] if isinstance(types, str) else list(types)
        if not any(_is(value, n) for n in names):
            want = " or ".join(_TYPE_WORDS[n] for n in names)
            out.append(Problem(path, f"{key} must be {want}, not {_name_of(value)}"))
            return
    if "const" in node and value != node["const"]:
        out.append(Problem(path, f"{key} must be {node['const']!r}, not {value!r}"))
    if "enum" in node and value not in node["enum"]:
        choices = [str(c) for c in node["enum"]]
        out.append(Problem(path, f"{key} {value!r} is not known{suggest(str(value), choices)};"
                                 f" use one of: {', '.join(choices)}"))
    if isinstance(value, str):
        if len(value.strip()) < node.get("minLength", 0):
            out.append(Problem(path, f"{key} is empty; write what it should be"))
        pattern = node.get("pattern")
        if pattern and not re.search(pattern, value):
            out.append(Problem(path, f"{key} {value!r} has characters not allowed there; use "
                                     "letters, digits, '-', '_' and '.', starting with a "
                                     "letter or digit"))
    if _is(value, "number") and "minimum" in node and value < node["minimum"]:
        out.append(Problem(path, f"{key} is {value}; use {node['minimum']} or more"))
    if isinstance(value, list):
        if len(value) < node.get("minItems", 0):
            out.append(Problem(path, f"{key} needs at least {node['minItems']} entr"
                                     f"{'y' if node['minItems'] == 1 else 'ies'}"))
        if "items" in node:
            for i, item in enumerate(value):
                _check(item, node["items"], root, (*path, i), out)
    if isinstance(value, dict):
        props: dict[str, Any] = node.get("properties", {})
        extra = node.get("additionalProperties", True)
        # Unknown keys first: a misspelt key is also a missing one, and the spelling is
        # the thing to fix.
        if extra is False:
            for k in value:
                if k not in props:
                    allowed = ", ".join(props)
                    out.append(Problem((*path, k), f"unknown key {k!r} in {where(path)}"
                                                   f"{suggest(k, list(props))}; allowed: "
                                                   f"{allowed}"))
        for req in node.get("required", []):
            if req not in value:
                hint = _resolve(props.get(req, {}), root).get("description", "")
                hint = hint[:1].lower() + hint[1:].rstrip(".")
                out.append(Problem(path, f"{where(path)} lacks {req!r}; add it"
                                         + (f" ({hint})" if hint else "")))
        for k, v in value.items():
            if k in props:
                _check(v, props[k], root, (*path, k), out)
            elif isinstance(extra, dict):
                _check(v, extra, root, (*path, k), out)
