"""CLI: init, add, show, drawers, drawer, find, move, take, count, log, verify, params."""

from __future__ import annotations

import pytest

from tests.clihelp import run


@pytest.fixture
def db(tmp_path):  # type: ignore[no-untyped-def]
    return tmp_path / "stock.db"


def test_init_creates_a_store(db):
    r = run(db, "init")
    assert r.code == 0 and "store ready" in r.err
    assert db.exists()


def test_add_from_catalog_fills_datasheet_limits(db):
    # 2N7000: onsemi 2N7000/D Rev 5 (facts.md §4.2): VDS 60 V, ID 200 mA, S-G-D
    r = run(db, "add", "2N7000", "--qty", "10", "--drawer", "A1", "--json")
    assert r.code == 0, r.err
    part = r.json()["part"]
    values = {(p["name"], p["bound"]): p for p in part["params"]}
    assert values[("vds", "max")]["value"] == 60.0
    assert values[("id", "max")]["value"] == pytest.approx(0.2)
    assert all(p["origin"] == "catalog" for p in part["params"])
    assert part["pinout"] == "SGD"
    assert r.json()["created"] is True


def test_add_param_overrides_catalog_and_is_marked_user(db):
    r = run(db, "add", "2N7000", "--qty", "5", "-d", "A1", "-p", "vds=50V", "--json")
    params = {(p["name"], p["bound"]): p for p in r.json()["part"]["params"]}
    assert params[("vds", "max")]["value"] == 50.0
    assert params[("vds", "max")]["origin"] == "user"
    assert params[("id", "max")]["origin"] == "catalog"


def test_add_unknown_number_needs_a_kind(db):
    r = run(db, "add", "XQ-9000", "--qty", "3", "-d", "A1")
    assert r.code == 1 and "--kind" in r.err
    r = run(db, "add", "XQ-9000", "--kind", "bjt", "--family", "npn", "-p", "vceo=30V",
            "-p", "ft>=150MHz", "--qty", "3", "-d", "A1", "--json")
    assert r.code == 0, r.err
    ps = {(p["name"], p["bound"]): p["value"] for p in r.json()["part"]["params"]}
    assert ps == {("vceo", "max"): 30.0, ("ft", "min"): 150e6}


def test_add_a_value_part_sets_its_value(db):
    # 4K7J = 4.7 kΩ ±5 % (IEC 60062 RKM code with tolerance letter J)
    r = run(db, "add", "4K7J", "--kind", "resistor", "--qty", "50", "-d", "R1", "--json")
    assert r.code == 0, r.err
    ps = {(p["name"], p["bound"]): p["value"] for p in r.json()["part"]["params"]}
    assert ps[("r", "nom")] == pytest.approx(4700)
    assert ps[("tol", "min")] == pytest.approx(-0.05) and ps[("tol", "max")] == pytest.approx(0.05)


@pytest.mark.parametrize("qty", ["0", "-4"])
def test_add_zero_or_negative_quantity_is_refused(db, qty):
    r = run(db, "add", "2N7000", "--qty", qty, "-d", "A1")
    assert r.code == 1 and "above zero" in r.err
    assert "Traceback" not in r.err
    assert run(db, "log", "--json").json() == []


def test_unparseable_value_names_the_text(db):
    r = run(db, "add", "4k7k", "--kind", "resistor", "--qty", "1", "-d", "R1",
            "-p", "p_rated=4k7kW")
    assert r.code == 1 and "4k7k" in r.err
    assert len(r.err.strip().splitlines()) == 1
    assert run(db, "log", "--json").json() == []


def test_show_drawers_and_find(db):
    run(db, "add", "2N7000", "--qty", "10", "-d", "A1")
    run(db, "add", "PN2222A", "--qty", "4", "-d", "A2")
    r = run(db, "show", "pn2222a")
    assert r.code == 0 and "PN2222A" in r.out and "A2" in r.out
    r = run(db, "show", "PN2222A", "--json")
    assert r.json()["drawers"] == [{"drawer": "A2", "on_hand": 4, "reserved": 0, "free": 4}]
    r = run(db, "drawers", "--json")
    assert [d["drawer"] for d in r.json()] == ["A1", "A2"]
    # PN2222A: VCEO 40 V, fT >= 300 MHz (facts.md §4.1)
    r = run(db, "find", "bjt", "vceo>=30V", "ft>=100MHz", "--json")
    assert [x["part"]["number"] for x in r.json()] == ["PN2222A"]
    r = run(db, "find", "bjt", "vceo>=50V", "--json")
    assert r.json() == []
    r = run(db, "find", "fet", "--family", "n-mosfet", "vds>=60V")
    assert r.code == 0 and "2N7000" in r.out


def test_move_take_count_log_verify(db):
    run(db, "add", "PN2222A", "--qty", "20", "-d", "A1")
    assert run(db, "move", "PN2222A", "5", "A1", "B1").code == 0
    assert run(db, "take", "PN2222A", "2", "-d", "B1", "--note", "repair").code == 0
    r = run(db, "count", "PN2222A", "14", "-d", "A1")
    assert r.code == 0 and "-1" in r.err
    r = run(db, "log", "--json")
    assert [(e["reason"], e["qty"]) for e in r.json()] == [
        ("count", -1), ("take", -2), ("move", 5), ("move", -5), ("receive", 20)]
    r = run(db, "log", "--part", "PN2222A", "--drawer", "B1", "--json")
    assert [e["qty"] for e in r.json()] == [-2, 5]
    r = run(db, "verify", "--json")
    assert r.code == 0 and r.json()["ok"] is True and r.json()["movements"] == 5


def test_verify_finds_a_drifted_parameter_document_and_repair_rewrites_it(db):
    import sqlite3

    run(db, "add", "PN2222A", "--qty", "20", "-d", "A1")
    con = sqlite3.connect(db)
    with con:  # a hand edit that touched only the copy
        con.execute("UPDATE parts SET params_doc = '{}'")
    con.close()
    r = run(db, "verify")
    assert r.code == 1 and "PN2222A: its parameter document differs" in r.out
    r = run(db, "verify", "--repair", "--json")
    assert r.code == 0 and r.json()["repaired"] == ["PN2222A"] and r.json()["ok"] is True
    assert run(db, "verify").code == 0


def test_moving_more_than_free_is_refused_and_changes_nothing(db):
    run(db, "add", "PN2222A", "--qty", "3", "-d", "A1")
    r = run(db, "move", "PN2222A", "5", "A1", "B1")
    assert r.code == 1 and "holds 3" in r.err
    r = run(db, "take", "PN2222A", "4", "-d", "A1")
    assert r.code == 1
    assert len(run(db, "log", "--json").json()) == 1


def test_unknown_part_and_drawer_suggest_names(db):
    run(db, "add", "PN2222A", "--qty", "3", "-d", "A1")
    r = run(db, "take", "PN2222", "1", "-d", "A1")
    assert r.code == 1 and "did you mean PN2222A" in r.err
    r = run(db, "take", "PN2222A", "1", "-d", "A7")
    assert r.code == 1 and "did you mean A1" in r.err


def test_drawer_in_cabinet(db):
    assert run(db, "drawer", "A3", "--in", "CAB1", "--note", "TO-92").code == 0
    rows = {d["drawer"]: d for d in run(db, "drawers", "--json").json()}
    assert rows["A3"]["cabinet"] == "CAB1"


def test_usage_error_exits_2(db):
    r = run(db, "move", "PN2222A")
    assert r.code == 2


def test_params_lists_the_vocabulary(db):
    r = run(None, "params", "bjt", "--json")
    names = {p["name"] for p in r.json()}
    assert {"vceo", "ft", "hfe", "pd", "tj", "rth_ja"} <= names
    assert "vds" not in names


def test_since_must_be_a_date(db):
    r = run(db, "log", "--since", "last week")
    assert r.code == 1 and "2026-11-01" in r.err


def test_a_bare_resistor_value_is_ohms_not_an_smd_code(db):
    # builders write "470" for 470 Ω on a through-hole resistor; the 3-digit SMD code
    # reading (47 × 10^0 = 47 Ω, facts.md §2.5) applies only to marked SMD parts
    r = run(db, "add", "470", "--kind", "resistor", "--qty", "5", "-d", "R1", "--json")
    ps = {(p["name"], p["bound"]): p["value"] for p in r.json()["part"]["params"]}
    assert ps[("r", "nom")] == 470.0


def test_a_value_part_name_carries_family_and_rating(db):
    r = run(db, "add", "100n C0G 50V", "--kind", "capacitor", "--qty", "20", "-d", "C1",
            "--json")
    part = r.json()["part"]
    ps = {(p["name"], p["bound"]): p["value"] for p in part["params"]}
    assert part["family"] == "c0g"
    assert ps[("c", "nom")] == pytest.approx(100e-9) and ps[("v_rated", "max")] == 50.0


def test_find_takes_a_bound_without_a_kind_and_names_unknown_kinds(db):
    run(db, "add", "PN2222A", "--qty", "4", "-d", "A2")
    r = run(db, "find", "vceo>=30V", "--json")
    assert r.code == 0 and [x["part"]["number"] for x in r.json()] == ["PN2222A"]
    r = run(db, "find", "transistorz")
    assert r.code == 1 and "unknown kind 'transistorz'" in r.err and "Traceback" not in r.err
    r = run(db, "add", "XX", "--kind", "gizmo", "--qty", "1", "-d", "A1")
    assert r.code == 1 and "use one of: bjt" in r.err
