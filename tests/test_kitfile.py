"""Tests of stock.kits.kitfile: reading kit files, values in them, errors naming the line."""

from __future__ import annotations

import json
import math
import re
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import KitFileError
from stock.kinds import Bound, Kind
from stock.kits import load_any, load_kit, parse_kit
from stock.kits.kitfile import BANDS, CONDITION_UNITS, called_part
from stock.kits.schema import kit_schema, validate
from stock.kits.tomllines import line_index
from stock.slots import Conditions, Op, Role, Source

DATA = Path(__file__).parent / "data" / "kits"
ROOT = Path(__file__).parent.parent
ERRORS = tomllib.loads((DATA / "errors.toml").read_text(encoding="utf-8"))["case"]
VALUES = tomllib.loads((DATA / "values.toml").read_text(encoding="utf-8"))["case"]


def test_small_kit_reads_every_feature():
    kit = load_kit(DATA / "small.toml")
    assert (kit.name, kit.title, kit.source, kit.band) == ("test-osc", "test oscillator",
                                                           "kit", "20m")
    assert kit.file == str(DATA / "small.toml")
    # supply as a bare SI number; band 20 m → upper edge 14.35 MHz (ITU RR Art. 5, from
    # memory); ambient in °C
    assert kit.conditions == Conditions(supply=12.0, freq=14.35e6, ambient=40.0)
    q, r, c, lt, ct = kit.slots
    assert q.refs == ["Q1", "Q2"] and q.qty == 2 and q.kind is Kind.BJT
    assert q.role is Role.OSCILLATOR and q.part is None
    assert (q.package, q.pinout) == ("TO-18", "EBC")
    # slot conditions are the circuit's with the slot's own on top
    assert q.conditions == Conditions(supply=12.0, freq=14.35e6, ambient=40.0, current=0.01)
    assert [(x.param, x.op, x.value, x.source) for x in q.requirements] == [
        ("vceo", Op.GE, 30.0, Source.USER), ("ft", Op.GE, 150e6, Source.USER)]
    assert r.refs == ["R3", "R4", "R5", "R6", "R9"] and r.qty == 5
    assert c.refs == [] and c.qty == 2 and c.note.startswith("no designators")
    assert ct.conditions.freq == 14.06e6 and ct.conditions.v_peak == 30.0
    assert kit.units() == 2 + 5 + 2 + 1 + 1
    assert kit.slot_id(r) == "test-osc:R3-R6, R9"
    assert kit.slot_id(c) == "test-osc:100n X7R 50V"
    tie = kit.ties["tank"]
    assert (tie.what, tie.note, tie.refs) == ("tank", "L1 with C7", ["L1", "C7"])
    assert lt.tie == ct.tie == "tank"


@pytest.mark.parametrize("case", ERRORS, ids=[c["name"] for c in ERRORS])
def test_errors_name_the_line(case):
    with pytest.raises(KitFileError) as info:
        parse_kit(case["text"], file="bad.toml")
    msg = str(info.value)
    assert "\n" not in msg  # one line
    if case["line"]:
        assert msg.startswith(f"bad.toml:{case['line']}: "), msg
    else:
        assert msg.startswith("bad.toml: "), msg
    assert re.search(case["match"], msg), msg


@pytest.mark.parametrize("case", VALUES, ids=[f"{c['kind']} {c['text']}" for c in VALUES])
def test_called_for_values(case):
    # Source: the "source" column of tests/data/kits/values.toml (IEC 60062 and our format).
    part = called_part(Kind(case["kind"]), case["text"])
    assert part is not None and part.number == case["text"]
    got = {}
    for p in part.params:
        name = f"{p.name}.{p.bound.value}" if p.name == "tol" else p.name
        got[name] = p.value
    assert set(got) == set(case["params"])
    for name, want in case["params"].items():
        assert math.isclose(got[name], want, rel_tol=1e-9), name
    assert part.family == case.get("family")
    assert part.attrs.get("safety") == case.get("safety")


def test_numbered_kinds_have_no_value_part():
    assert called_part(Kind.BJT, "2N2222A") is None
    assert called_part(Kind.DIODE, "1N4148") is None


def test_demo_kits_load():
    # The Saltmarsh build-night kits in seeds_demo must stay valid.
    names = set()
    for path in sorted((ROOT / "seeds_demo" / "kits").glob("*.toml")):
        kit, warnings = load_any(path)
        assert warnings == [] and kit.source == "kit" and kit.slots
        names.add(kit.name)
    assert {"marsh-tx40", "marsh-dcrx40", "marsh-audio"} <= names
    tx = load_kit(ROOT / "seeds_demo" / "kits" / "marsh-tx40.toml")
    assert tx.conditions.freq == 7.030e6  # freq given: it wins over the band's edge
    assert "licence" in (ROOT / "seeds_demo" / "kits" / "marsh-tx40.toml").read_text("utf-8")


def test_utf8_bom_and_bad_encoding(tmp_path):
    text = (DATA / "small.toml").read_text(encoding="utf-8")
    p = tmp_path / "bom.toml"
    p.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    assert load_kit(p).name == "test-osc"
    q = tmp_path / "latin1.toml"
    q.write_bytes('name = "k"  # Stra\u00dfe\n'.encode("latin-1"))
    with pytest.raises(KitFileError, match="not UTF-8; save the kit file as UTF-8"):
        load_kit(q)
    with pytest.raises(KitFileError, match="cannot read the kit file"):
        load_kit(tmp_path / "missing.toml")
    with pytest.raises(KitFileError, match="unknown kit file type '.json'"):
        load_any(tmp_path / "kit.json")


def test_schema_agrees_with_the_vocabulary():
    schema = kit_schema()
    slot = schema["$defs"]["slot"]["properties"]
    assert slot["kind"]["enum"] == [k.value for k in Kind]
    assert slot["role"]["enum"] == [r.value for r in Role]
    cond = set(schema["$defs"]["conditions"]["properties"])
    assert cond == set(CONDITION_UNITS) | {"band"}
    assert set(CONDITION_UNITS) == set(vars(Conditions()))
    # the file is plain JSON that other tools can read
    path = ROOT / "stock" / "data" / "kit.schema.json"
    assert json.loads(path.read_text(encoding="utf-8"))["title"].startswith("stock kit file")


def test_validator_reports_every_problem():
    doc = {"name": "k", "slot": [{"kind": "bjt", "qty": 0, "extra": 1}], "format": 2}
    problems = validate(doc)
    paths = sorted(str(p.path) for p in problems)
    assert paths == sorted(["('format',)", "('slot', 0)", "('slot', 0, 'qty')",
                            "('slot', 0, 'extra')"])
    assert validate({"name": "k", "slot": [{"kind": "bjt", "calls_for": "x", "qty": True}]})


def test_bands_are_ordered_and_contain_the_demo_frequency():
    # ITU RR Article 5 amateur allocations (from memory): lower edge below upper edge,
    # and 7.030 MHz (the demo transmitter) lies in the 40 m band.
    for lo, hi in BANDS.values():
        assert 0 < lo < hi
    lo, hi = BANDS["40m"]
    assert lo <= 7.030e6 <= hi


def test_line_index_follows_tables_and_arrays():
    text = (DATA / "small.toml").read_text(encoding="utf-8")
    idx = line_index(text)
    lines = text.splitlines()
    # each indexed key really is on that line (the key text appears there)
    for path, line in idx.items():
        last = path[-1]
        if isinstance(last, str):
            assert last in lines[line - 1] or f"[{path[0]}" in lines[line - 1], (path, line)
    assert lines[idx[("slot", 4, "conditions", "v_peak")] - 1].startswith("v_peak")
    assert lines[idx[("slot", 0, "need", 1)] - 1].strip().startswith("need")


# --- property: every key of a generated kit is found on its line ------------------------

_keys = st.sampled_from(["refs", "calls_for", "kind", "role", "note", "tie", "package"])
_vals = st.text(alphabet="abc #=[]{}'\"\\,", max_size=8)


def _toml_string(value: str, multiline: bool) -> str:
    # a JSON string is a valid TOML basic string; a literal multi-line string when asked
    if multiline and "'''" not in value and not value.endswith("'"):
        return "'''\n" + value + "'''"
    return json.dumps(value)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.dictionaries(_keys, _vals, min_size=1), min_size=1, max_size=4),
       st.booleans(), st.booleans())
def test_line_index_finds_keys_of_generated_documents(slots, multiline, tables):
    doc = {"name": "k", "slot": slots}
    if tables:  # [[slot]] headers, one key per line
        text = 'name = "k"\n' + "".join(
            "\n[[slot]]\n" + "".join(f"{k} = {_toml_string(v, multiline)}\n"
                                      for k, v in s.items()) for s in slots)
    else:  # one array of inline tables, items on lines of their own
        text = 'name = "k"\nslot = [\n' + "".join(
            "  { " + ", ".join(f"{k} = {json.dumps(v)}" for k, v in s.items()) + " },\n"
            for s in slots) + "]\n"
    assert tomllib.loads(text) == doc  # the generator makes valid TOML
    idx = line_index(text)
    lines = text.splitlines()
    for i, slot in enumerate(slots):
        if tables:
            assert lines[idx[("slot", i)] - 1] == "[[slot]]"
        for key in slot:
            assert f"{key} = " in lines[idx[("slot", i, key)] - 1], (i, key, text)


def test_bound_direction_of_called_part_params():
    # ratings come out with their parameter's default bound (stock.params): max
    part = called_part(Kind.CAPACITOR, "100n C0G 50V")
    assert part is not None
    assert part.get("v_rated").bound is Bound.MAX
    assert part.get("c").bound is Bound.NOM
