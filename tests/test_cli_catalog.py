"""CLI: stock catalog (search, one row with its source, templates, CSV and JSON output)."""

from __future__ import annotations

import pytest

from tests.clihelp import run


@pytest.fixture(autouse=True)
def _home(tmp_path, monkeypatch):
    monkeypatch.setenv("STOCK_HOME", str(tmp_path))  # no user catalog unless a test writes one
    return tmp_path


def test_search_guaranteed_bounds_json():
    r = run(None, "catalog", "bjt", "vceo>=30V", "ft>=100MHz", "--family", "npn", "--json")
    assert r.code == 0, r.err
    found = {p["number"]: p for p in r.json()}
    # facts.md §4.1: onsemi P2N2222A/D Rev 7: VCEO 40 V, fT >= 300 MHz
    assert "P2N2222A" in found and found["P2N2222A"]["source"] == "onsemi P2N2222A/D Rev 7"
    assert "BC337-25" not in found  # its fT is typical only
    assert all(p["family"] == "npn" and p["kind"] == "bjt" for p in found.values())
    assert all(q["origin"] == "catalog" for p in found.values() for q in p["params"])


def test_search_table_and_typical():
    r = run(None, "catalog", "bjt", "ft>=100MHz", "--family", "npn", "--typical")
    assert r.code == 0 and "BC337-25" in r.out and "typ" in r.out
    assert "catalog rows" in r.err  # the count goes to stderr; stdout stays data


def test_show_one_row_with_source_and_variants():
    r = run(None, "catalog", "pn2222a")
    assert r.code == 0, r.err
    assert "PN2222A" in r.out and "pins EBC" in r.out
    assert "CBE" in r.out  # the P-prefixed version's order is flagged (facts.md §4.1 note)
    assert "source: PN2222A datasheet (NTE copy) [datasheet]" in r.out
    one = run(None, "catalog", "PN2222A", "--json").json()
    assert one["pinout"] == "EBC" and one["attrs"]["pin_variants"] == "CBE"


def test_unknown_number_is_one_line_with_suggestions():
    r = run(None, "catalog", "P2N222")
    assert r.code == 1 and r.out == ""
    assert r.err.count("\n") == 1 and "did you mean" in r.err and "P2N2222A" in r.err


def test_bad_bound_and_bad_first_word():
    r = run(None, "catalog", "bjt", "vceo>=abc")
    assert r.code == 1 and r.err.startswith("stock: ")
    r = run(None, "catalog", "valve", "vceo>=30V")
    assert r.code == 2


def test_templates_only_on_request():
    plain = {p["number"] for p in run(None, "catalog", "capacitor", "--json").json()}
    withs = {p["number"] for p in run(None, "catalog", "capacitor", "--templates",
                                      "--json").json()}
    assert "C0G-50V" not in plain and "C0G-50V" in withs


def test_csv_output_is_a_user_catalog(_home):
    r = run(None, "catalog", "P2N2222A", "--csv")
    assert r.code == 0 and r.out.startswith("number,kind,family")
    (_home / "catalog.csv").write_text(r.out.replace("vceo=40V", "vceo=42V"), encoding="utf-8")
    one = run(None, "catalog", "P2N2222A", "--json").json()
    vceo = [p for p in one["params"] if p["name"] == "vceo"]
    assert vceo[0]["value"] == 42.0


def test_command_is_documented():
    from pathlib import Path

    doc = (Path(__file__).parents[1] / "docs" / "catalog.md").read_text(encoding="utf-8")
    assert "stock catalog" in doc
    r = run(None, "catalog", "--help")
    assert r.code == 0 and "Example" in r.out
