"""CLI: stock check, reserve, build, release, builds, pick — exit codes, output, JSON shapes."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from stock.cli.kits import kits_with_copies, split_copies
from stock.kinds import Kind
from stock.kits.kitfile import called_part
from tests.clihelp import run

DOCS = Path(__file__).parents[1] / "docs"

# An invented two-stage kit. Q1 is a switch, Q2 an RF power amplifier (pa-c), so the
# fit engine's RF-power caution must be printed, once for the kit.
KIT = '''
name = "bench"
title = "invented test circuit"
[conditions]
supply = "12V"
freq = "7.030MHz"
[[slot]]
refs = "R1-R3"
calls_for = "10k 5% 1/4W"
kind = "resistor"
role = "bias"
[[slot]]
refs = "R4"
calls_for = "1k 5% 1/4W"
kind = "resistor"
role = "bias"
[[slot]]
refs = "Q1"
calls_for = "PN2222A"
kind = "bjt"
role = "switch"
conditions = { current = "20mA" }
[[slot]]
refs = "Q2"
calls_for = "2N2222A"
kind = "bjt"
role = "pa-c"
need = ["vceo>=30V"]
conditions = { current = "60mA", dissipation = "200mW" }
[[slot]]
refs = "Q3"
calls_for = "2N2222A"
kind = "bjt"
role = "pa-c"
conditions = { current = "60mA", dissipation = "200mW" }
'''

SMALL = '''
name = "small"
[[slot]]
refs = "R1"
calls_for = "10k 5% 1/4W"
kind = "resistor"
'''


@pytest.fixture(autouse=True)
def _wide(monkeypatch):  # type: ignore[no-untyped-def]
    # rich wraps table cells to the terminal width; a wide one keeps phrases on one line
    monkeypatch.setenv("COLUMNS", "220")


@pytest.fixture
def env(file_store, tmp_path):  # type: ignore[no-untyped-def]
    """A file store with resistors and two catalog transistors, and the kit files."""
    from stock.catalog import load_catalog

    store, path = file_store
    cat = load_catalog()
    store.save_and_receive(called_part(Kind.RESISTOR, "10k 5% 1/4W"), "R2", 7)
    store.save_and_receive(called_part(Kind.RESISTOR, "10k 5% 1/4W"), "R10", 2)
    store.save_and_receive(called_part(Kind.RESISTOR, "1k 5% 1/4W"), "R1", 2)
    store.save_and_receive(cat.get("PN2222A"), "A2", 10)
    store.save_and_receive(cat.get("2N2222A"), "A1", 4)
    kit = tmp_path / "bench.toml"
    kit.write_text(KIT, encoding="utf-8")
    small = tmp_path / "small.toml"
    small.write_text(SMALL, encoding="utf-8")
    return path, kit, small, store


# --- KIT:N and --copies -------------------------------------------------------------------------

def test_split_copies(tmp_path):  # type: ignore[no-untyped-def]
    assert split_copies("tx.toml:3") == ("tx.toml", 3)
    assert split_copies("tx.toml") == ("tx.toml", None)
    assert split_copies("C:/kits/tx.toml") == ("C:/kits/tx.toml", None)
    odd = tmp_path / "odd.toml:2"  # a file really named so is taken as written
    odd.write_text("", encoding="utf-8")
    assert split_copies(str(odd)) == (str(odd), None)


def test_kits_with_copies_pairs_in_order():
    assert kits_with_copies(["a", "b:4"], None) == [("a", 1), ("b", 4)]
    assert kits_with_copies(["a", "b"], [3]) == [("a", 3), ("b", 3)]
    assert kits_with_copies(["a", "b:7"], [2, 5]) == [("a", 2), ("b", 7)]


# --- check ----------------------------------------------------------------------------------------

def test_check_table(env):  # type: ignore[no-untyped-def]
    db, kit, _, _ = env
    r = run(db, "check", f"{kit}:2")
    assert r.code == 0, r.err
    # drawers as a builder reads them: R2 before R10
    assert "in stock: R2 ×4, R10 ×2" in r.out
    # 1k: 2 free for 2 copies; the four 2N2222A cover Q2 and Q3 of two copies
    assert "bench: the free stock builds 2 of 2 copies now" in r.out
    assert "limited by" not in r.out
    # the RF-power caution once for the kit, although two slots are pa-c
    assert r.out.count("caution: RF power amplifier") == 1
    assert "licence" in r.out and "harmonic" in r.out


def test_check_shows_short_and_limits(env):  # type: ignore[no-untyped-def]
    db, kit, _, _ = env
    r = run(db, "check", str(kit), "--copies", "3", "--no-combine")
    assert r.code == 0, r.err
    # two 1k for R4: the third copy is one short
    assert "builds 2 of 3 copies" in r.out
    assert "limited by R4 (1k 5% 1/4W): 1 per copy, 1 short for copy 3" in r.out
    assert "│ short " in r.out


def test_check_explains_a_stand_in_that_saves_a_scarcer_part(env):  # type: ignore[no-untyped-def]
    db, kit, _, store = env
    store.take("2N2222A", "A1", 3)  # one 2N2222A left for Q2 and Q3, PN2222A stands in
    r = run(db, "check", str(kit))
    assert r.code == 0, r.err
    assert "stand-in PN2222A" in r.out
    assert "note:" in r.out and "stood in PN2222A to keep the only 2N2222A" in r.out


def test_check_json_shape(env):  # type: ignore[no-untyped-def]
    db, kit, small, _ = env
    r = run(db, "check", f"{kit}:2", f"{small}:1", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert list(doc) == ["version", "complete", "cost", "notes", "kits", "slots"]
    assert doc["version"] == 1
    assert [k["kit"] for k in doc["kits"]] == ["bench", "small"]
    assert list(doc["kits"][0]) == ["kit", "wanted", "buildable", "limits", "cautions"]
    assert any("RF power amplifier" in c for c in doc["kits"][0]["cautions"])
    assert doc["kits"][1]["cautions"] == []
    slot = next(s for s in doc["slots"] if s["key"] == "bench:R1-R3")
    assert slot["need"] == 6 and slot["copies"] == 2
    # the two kits share drawers: 9 free 10k for 6 + 1 units
    tens = [a for s in doc["slots"] if s["calls_for"] == "10k 5% 1/4W" for a in s["allocations"]]
    assert sum(a["qty"] for a in tens) == 7


def test_check_copies_count_must_match(env):  # type: ignore[no-untyped-def]
    db, kit, small, _ = env
    r = run(db, "check", str(kit), str(small), "--copies", "1", "--copies", "2",
            "--copies", "3")
    assert r.code == 2 and "--copies" in r.err


def test_check_missing_kit_file(env, tmp_path):  # type: ignore[no-untyped-def]
    db, *_ = env
    r = run(db, "check", str(tmp_path / "nope.toml"))
    assert r.code == 1 and "cannot read the kit file" in r.err


# --- reserve, build, release, builds, pick ---------------------------------------------

def test_reserve_build_release_round(env):  # type: ignore[no-untyped-def]
    db, kit, _, store = env
    r = run(db, "reserve", str(kit), "--name", "night")
    assert r.code == 0, r.err
    assert "reserved 7 parts from 5 drawers" in r.err and "for build night (1 × bench)" in r.err
    assert r.out.count("caution: RF power amplifier") == 1
    assert sum(h.reserved for h in store.holdings("10k 5% 1/4W")) == 3
    # reserve then check: the check sees less free
    doc = run(db, "check", str(kit), "--json").json()
    tens = next(s for s in doc["slots"] if s["key"] == "bench:R1-R3")
    assert sum(x["free"] for x in tens["exact"]) == 9 - 3
    r = run(db, "reserve", str(kit), "--name", "night")
    assert r.code == 1 and "a build named 'night' exists" in r.err
    r = run(db, "builds")
    assert r.code == 0 and "night" in r.out and "reserved" in r.out
    r = run(db, "release", "night")
    assert r.code == 0 and "released 7 parts held for night" in r.err
    assert sum(h.reserved for h in store.holdings()) == 0
    assert run(db, "verify").code == 0


def test_reserve_refuses_short_unless_allowed(env):  # type: ignore[no-untyped-def]
    db, kit, _, store = env
    n = store.movement_count()
    r = run(db, "reserve", f"{kit}:3")
    assert r.code == 1
    assert "units short for 3 copies" in r.err and "--allow-short" in r.err
    assert store.movement_count() == n
    r = run(db, "reserve", f"{kit}:3", "--allow-short", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["written"] is True and doc["short"] > 0 and doc["name"] == "bench"
    assert store.movement_count() > n


def test_reserve_dry_run_writes_nothing(env):  # type: ignore[no-untyped-def]
    db, kit, _, store = env
    n = store.movement_count()
    r = run(db, "reserve", str(kit), "--dry-run")
    assert r.code == 0 and "would reserve 7 parts" in r.err and "dry run" in r.err
    assert store.movement_count() == n
    assert run(db, "builds", "--json").json() == []


def test_reserve_json_shape(env):  # type: ignore[no-untyped-def]
    db, kit, _, _ = env
    doc = run(db, "reserve", str(kit), "-n", "2", "--name", "j", "--json").json()
    assert list(doc) == ["version", "name", "kit", "copies", "built", "status", "remaining",
                         "held", "short", "created_at", "notes", "slots", "written",
                         "cautions"]
    assert (doc["copies"], doc["held"], doc["status"]) == (2, 14, "reserved")
    q2 = next(s for s in doc["slots"] if s["refs"] == ["Q2"])
    assert sum(h["qty"] for h in q2["holds"]) == 2
    assert all(len(h["per_copy"]) == 2 for h in q2["holds"])


def test_build_partial_then_rest(env):  # type: ignore[no-untyped-def]
    db, kit, _, store = env
    assert run(db, "reserve", str(kit), "-n", "2", "--name", "b").code == 0
    on_hand = sum(h.on_hand for h in store.holdings())
    r = run(db, "build", "b", "--copies", "1")
    assert r.code == 0 and "1 of 2 built; 7 parts still held" in r.err
    assert sum(h.on_hand for h in store.holdings()) == on_hand - 7
    r = run(db, "build", "b", "--copies", "5")
    assert r.code == 1 and "1 of 2 copies left to build" in r.err
    r = run(db, "build", "b", "--json")
    assert r.code == 0 and r.json()["status"] == "built" and r.json()["held"] == 0
    assert sum(h.reserved for h in store.holdings()) == 0
    r = run(db, "release", "b")
    assert r.code == 1 and "is built" in r.err
    assert run(db, "verify").code == 0


def test_builds_show_and_json(env):  # type: ignore[no-untyped-def]
    db, kit, small, _ = env
    run(db, "reserve", str(small), "--name", "first")
    run(db, "reserve", str(kit), "--name", "second")
    r = run(db, "builds", "--json")
    assert r.code == 0
    assert [b["name"] for b in r.json()] == ["second", "first"]  # newest first
    assert list(r.json()[0]) == ["version", "name", "kit", "copies", "built", "status",
                                 "remaining", "held", "short", "created_at"]
    r = run(db, "builds", "second")
    assert r.code == 0 and "second: 1 × bench, 0 built, reserved; 7 units held" in r.out
    assert "R1, R2, R3" in r.out and "2N2222A A1 ×1" in r.out
    assert run(db, "builds", "second", "--json").json()["slots"][0]["key"] == "bench:R1-R3"
    r = run(db, "builds", "secnd")
    assert r.code == 1 and "no build 'secnd' (did you mean second?)" in r.err


def test_pick_sorted_by_drawer_with_json_and_files(env, tmp_path):  # type: ignore[no-untyped-def]
    db, kit, _, store = env
    store.take("10k 5% 1/4W", "R2", 5)  # 2 left in R2, 2 in R10: the 10k come from both
    assert run(db, "reserve", str(kit), "--name", "pk").code == 0
    r = run(db, "pick", "pk", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert list(doc) == ["version", "build", "kit", "copies", "lines"]
    drawers = [x["drawer"] for x in doc["lines"]]
    # walk the drawers once, in the builder's order: R2 before R10 (numbers as numbers)
    assert drawers == ["A1", "A1", "A2", "R1", "R2", "R10"]
    assert sum(x["qty"] for x in doc["lines"]) == 7
    r = run(db, "pick", "pk")
    assert r.code == 0 and "pick list: pk, 1 × bench" in r.out
    out_csv = tmp_path / "pick.csv"
    r = run(db, "pick", "pk", "--out", str(out_csv))
    assert r.code == 0 and "wrote" in r.err
    with open(out_csv, encoding="utf-8-sig", newline="") as f:
        rows = list(csv.reader(f))
    assert rows[0] == ["drawer", "part", "qty", "refs", "slot", "exact"]
    assert [row[0] for row in rows[1:]] == drawers
    out_xlsx = tmp_path / "pick.xlsx"
    assert run(db, "pick", "pk", "-o", str(out_xlsx)).code == 0
    from openpyxl import load_workbook

    book = load_workbook(out_xlsx, read_only=True)  # read-only keeps the file open: close it
    try:
        cells = [list(row) for row in book["pick"].iter_rows(values_only=True)]
    finally:
        book.close()
    assert [row[0] for row in cells[1:]] == drawers
    assert sum(int(row[2]) for row in cells[1:]) == 7


def test_pick_after_built_is_refused(env):  # type: ignore[no-untyped-def]
    db, _, small, _ = env
    run(db, "reserve", str(small), "--name", "s")
    run(db, "build", "s")
    r = run(db, "pick", "s")
    assert r.code == 1 and "nothing is left to pick" in r.err


# --- documentation ------------------------------------------------------------------------

@pytest.mark.parametrize("command", ["check", "reserve", "build", "release", "builds", "pick"])
def test_every_command_is_documented_with_an_example(command):  # type: ignore[no-untyped-def]
    doc = (DOCS / "kits.md").read_text(encoding="utf-8")
    assert f"stock {command} " in doc
    r = run(None, command, "--help")
    assert r.code == 0 and "Example" in r.out
