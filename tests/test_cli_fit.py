"""CLI: stock fit — ranked stand-ins with their checks, --explain, --json, --need, --all."""

from __future__ import annotations

from pathlib import Path

import pytest

from stock.kinds import Kind
from stock.paramtext import parse_params
from stock.parts import PartSpec
from tests.clihelp import run

# facts.md §4.1 rows (sources in tests/data/fit_cases.toml)
BJTS = [
    ("PN2222A", "EBC", "vceo=40V; ic=600mA; pd=625mW@ta=25°C; ft>=300MHz@ic=20mA,vce=20V; "
                       "hfe=100..300@ic=150mA,vce=10V; tj=150°C; rth_ja=200", "A1", 10),
    ("P2N2222A", "CBE", "vceo=40V; ic=600mA; pd=625mW@ta=25°C; ft>=300MHz@ic=20mA,vce=20V; "
                        "hfe=100..300@ic=150mA,vce=10V; tj=150°C; rth_ja=200", "A2", 5),
    ("BC547B", "CBE", "vceo=45V; ic=100mA; pd=625mW@ta=25°C; ft>=150MHz@ic=10mA,vce=5V; "
                      "hfe=200..450@ic=2mA,vce=5V; tj=150°C; rth_ja=200", "A3", 20),
]


@pytest.fixture
def db(file_store):  # type: ignore[no-untyped-def]
    store, path = file_store
    for number, pins, params, drawer, qty in BJTS:
        store.save_and_receive(PartSpec(number, Kind.BJT, "npn", "TO-92", pins,
                                        params=parse_params(params, Kind.BJT)), drawer, qty)
    for text, fam, drawer in (("100p C0G 5%", "c0g", "C1"), ("100p X7R 10%", "x7r", "C2")):
        value, *_ = text.split()
        store.save_and_receive(PartSpec(text, Kind.CAPACITOR, fam, "0805", None,
                                        params=parse_params(f"c={value}; tol=±"
                                                            f"{text.split()[-1]}",
                                                            Kind.CAPACITOR)), drawer, 50)
    return path


PA = ["PN2222A", "--role", "pa-c", "--supply", "12V", "--freq", "14MHz", "--current", "150mA"]


def test_ranked_table_hides_failing_parts(db: Path) -> None:
    r = run(db, "fit", *PA)
    assert r.code == 0, r.err
    assert "P2N2222A" in r.out and "reversed" in r.out
    assert "BC547B" not in r.out  # IC 100 mA < the 150 mA the stage draws: fails
    assert "licence" in r.out and "harmonic" in r.out
    r = run(db, "fit", *PA, "--all")
    assert "BC547B" in r.out and "fails" in r.out


def test_json_shape(db: Path) -> None:
    r = run(db, "fit", *PA, "--json", "--all")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["version"] == 1
    assert doc["slot"]["role"] == "pa-c" and doc["slot"]["part"] == "PN2222A"
    assert doc["slot"]["conditions"] == {"supply": 12.0, "freq": 14e6, "current": 0.15}
    vceo = next(q for q in doc["slot"]["requirements"] if q["param"] == "vceo")
    assert vceo["value"] == 24.0 and vceo["rule"] == "swing_class_abc"  # facts.md §5.6
    parts = [c["part"] for c in doc["candidates"]]
    assert parts[-1] == "BC547B" and doc["candidates"][-1]["fitness"] == "fails"
    first = doc["candidates"][0]
    assert first["drawers"] and {"param", "required", "actual", "bound", "margin", "verdict",
                                 "why", "source"} <= set(first["checks"][0])
    assert any("licence" in c for c in doc["cautions"])


def test_explain_one_candidate(db: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("COLUMNS", "250")  # keep table cells on one line
    r = run(db, "fit", *PA, "--explain", "bc547b")
    assert r.code == 0, r.err
    assert "BC547B" in r.out and "fails" in r.out
    assert "IC 100 mA is below" in r.out
    r = run(db, "fit", *PA, "--explain", "NOPE")
    assert r.code == 1 and "not among the candidates" in r.err


def test_need_bound_wins(db: Path) -> None:
    r = run(db, "fit", *PA, "--need", "vceo>=60V", "--json")
    assert r.code == 0, r.err
    assert r.json()["candidates"] == []
    r = run(db, "fit", *PA, "--need", "vceo>=60V", "--json", "--all")
    checks = r.json()["candidates"][0]["checks"]
    vceo = [c for c in checks if c["param"] == "vceo"]
    assert [c["source"] for c in vceo] == ["user"] and vceo[0]["verdict"] == "fail"


def test_value_slot_tuned_circuit(db: Path) -> None:
    r = run(db, "fit", "100p C0G 5%", "--role", "tuned", "--json", "--all")
    assert r.code == 0, r.err
    by_part = {c["part"]: c for c in r.json()["candidates"]}
    assert by_part["100p C0G 5%"]["fitness"] == "fits"
    assert by_part["100p X7R 10%"]["fitness"] == "fails"  # facts.md §3.3: class 1 only


def test_config_override_changes_the_verdict(db: Path, tmp_path: Path,
                                             monkeypatch: pytest.MonkeyPatch) -> None:
    # BC547B (fT ≥ 150 MHz) at 40 MHz: fails fT ≥ 5 × f; passes fT ≥ 3 × f
    args = ["BC547B", "--role", "rf-amp", "--freq", "40MHz", "--current", "5mA", "--json"]
    mine = lambda doc: [c for c in doc["candidates"] if c["part"] == "BC547B"]  # noqa: E731
    assert mine(run(db, "fit", *args).json()) == []
    cfg = tmp_path / "config.toml"
    cfg.write_text("[rules]\nft_ratio_min = 3\n", encoding="utf-8")
    monkeypatch.setenv("STOCK_CONFIG", str(cfg))
    [c] = mine(run(db, "fit", *args).json())
    assert c["fitness"] == "fits with warnings"  # still below the preferred 10 × f


def test_errors(db: Path) -> None:
    r = run(db, "fit", "ZZ-NOTHING-9")
    assert r.code == 1 and "stock add" in r.err
    r = run(db, "fit", "PN2222A", "--role", "class-c")
    assert r.code == 2 and "pa-c" in r.err
    r = run(db, "fit", "PN2222A", "--supply", "twelve")
    assert r.code == 1 and "twelve" in r.err


def test_fit_is_documented() -> None:
    doc = (Path(__file__).parents[1] / "docs" / "fit.md").read_text(encoding="utf-8")
    assert "stock fit" in doc and "--explain" in doc and "--json" in doc


def test_combinations_when_no_single_part_fits(file_store) -> None:  # type: ignore[no-untyped-def]
    store, path = file_store
    for value in ("4k7", "1k", "10k"):
        store.save_and_receive(PartSpec(value, Kind.RESISTOR, "metal-film", params=parse_params(
            f"r={value}; tol=±1%", Kind.RESISTOR)), "R1", 20)
    r = run(path, "fit", "5k6 2%", "--kind", "resistor", "--role", "bias", "--json")
    assert r.code == 0, r.err
    doc = r.json()
    assert doc["candidates"] == []
    combos = doc["combinations"]
    assert combos and all(c["ok"] for c in combos)
    # worst-case stacking (facts.md §5.4): every listed combination stays in 5k6 ±2 %
    for c in combos:
        assert 5600 * 0.98 <= c["low"] <= c["high"] <= 5600 * 1.02
    assert "4k7" in combos[0]["parts"]


def test_buy_adds_catalog_parts_after_the_drawers(tmp_path):
    """--buy ranks reference-catalog parts not in stock, marked 'to buy', after what is in
    the drawers. 2N3906 and 2N4403 limits: facts.md §4.1 (catalog rows with those sources)."""
    from tests.clihelp import run

    db = tmp_path / "buy.db"
    assert run(db, "add", "2N4403", "--qty", "5", "-d", "A3").code == 0
    r = run(db, "fit", "2N3906", "--role", "switch", "--current", "150mA", "--buy", "--json")
    assert r.code == 0, r.err
    cands = r.json()["candidates"]
    assert cands[0]["part"] == "2N4403" and cands[0]["to_buy"] is False
    buy = [c["part"] for c in cands if c["to_buy"]]
    assert "2N3906" in buy  # the called-for part itself is the first thing to buy
    assert all(c["to_buy"] for c in cands[1:])
    r = run(db, "fit", "2N3906", "--role", "switch", "--current", "150mA", "--json")
    assert [c["part"] for c in r.json()["candidates"]] == ["2N4403"]
