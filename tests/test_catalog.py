"""The reference catalog: schema of every shipped row, spot checks against published
values (tests/data/catalog_spotchecks.csv, each row naming its source), pin-order variants,
parametric search, passive templates and the user's own catalog file."""

from __future__ import annotations

import csv
import hashlib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.catalog import (
    COLUMNS,
    FROM_MEMORY,
    Catalog,
    Confidence,
    format_rows,
    is_template,
    load_catalog,
    read_catalog_file,
    shipped_files,
)
from stock.errors import ImportFileError, UnknownPart
from stock.kinds import FAMILIES, PIN_LETTERS, Bound, Kind
from stock.params import PARAMS
from stock.paramtext import Criterion, parse_criterion
from stock.parts import Origin, part_key
from stock.quantities import parse_value
from stock.slots import Op

DATA = Path(__file__).parent / "data"
HEADER = ",".join(COLUMNS)


@pytest.fixture(autouse=True)
def _no_user_catalog(tmp_path_factory, monkeypatch):
    """Point the config folder at an empty directory: the tester's own file stays out."""
    monkeypatch.setenv("STOCK_HOME", str(tmp_path_factory.mktemp("home")))


_SHIPPED: Catalog | None = None


def _shipped() -> Catalog:
    """The shipped rows only, read straight from the files (once per test session)."""
    global _SHIPPED
    if _SHIPPED is None:
        _SHIPPED = Catalog.of(s for f in shipped_files() for s in read_catalog_file(f))
    return _SHIPPED


@pytest.fixture
def cat() -> Catalog:
    return _shipped()


# --- schema ---------------------------------------------------------------------------------
def test_every_shipped_file_reads_and_numbers_are_unique():
    seen: dict[str, str] = {}
    for f in shipped_files():
        for spec in read_catalog_file(f):  # raises ImportFileError on any bad row
            key = part_key(spec.number)
            assert key not in seen, f"{spec.number} in {f.name} and {seen[key]}"
            seen[key] = f.name
    assert len(seen) >= 150


def test_every_row_names_a_source_and_a_consistent_confidence(cat):
    for spec in cat:
        assert spec.source and spec.source.strip(), spec.number
        conf = Confidence(spec.attrs["confidence"])
        if spec.source.lower() == FROM_MEMORY:
            assert conf is Confidence.FROM_MEMORY, spec.number
        if conf is Confidence.DATASHEET:
            # a confirmed row names the document (facts.md §4 style), not memory
            assert "memory" not in spec.source.lower(), spec.number


def test_rows_use_the_shared_vocabulary(cat):
    for spec in cat:
        assert spec.kind in Kind
        if FAMILIES[spec.kind]:
            assert spec.family in FAMILIES[spec.kind], spec.number
        assert spec.params, spec.number
        for p in spec.params:
            assert PARAMS[p.name].applies_to(spec.kind), (spec.number, p.name)
            assert p.origin is Origin.CATALOG, (spec.number, p.name)
        if spec.pinout and spec.kind in PIN_LETTERS:
            assert set(spec.pinout) <= set(PIN_LETTERS[spec.kind]), spec.number
            assert len(set(spec.pinout)) == len(spec.pinout), spec.number


def test_limits_with_a_range_have_min_at_or_below_max(cat):
    # common practice: a datasheet min never exceeds its max at the same conditions
    for spec in cat:
        for p in spec.params:
            if p.bound is Bound.MAX:
                for q in spec.params:
                    if q.name == p.name and q.bound is Bound.MIN and q.at == p.at:
                        assert q.value <= p.value, (spec.number, p.name)


# Rows whose sheet states a PD at 25 °C above what its own Tj and RθJA allow; the catalog keeps
# the sheet's figures and says so in the description (facts.md §4.2: onsemi J309/D, MPF102/D;
# 2N5457: 310 mW in both sheets fits onsemi's 135 °C Tj, not the Motorola 125 °C kept here).
PD_ABOVE_THERMAL_LIMIT = {"J310", "MPF102", "2N5457"}


def test_free_air_dissipation_agrees_with_tj_and_rth_ja(cat):
    # facts.md §5.3: PD(TA) = (Tj,max − TA) / RθJA (e.g. onsemi P2N2222A/D: 625 mW, 200 °C/W)
    checked = 0
    for spec in cat:
        pd = [p for p in spec.values("pd") if p.at.get("ta") == 25]
        tj, rth = spec.get("tj"), spec.get("rth_ja")
        if not (pd and tj and rth):
            continue
        checked += 1
        allowed = (tj.value - 25) / rth.value
        if spec.number in PD_ABOVE_THERMAL_LIMIT:
            assert pd[0].value > allowed and "derate" in spec.description
        else:
            # 10 %: vendors round their derating factors (2N5457: 310 mW, 2.82 mW/°C)
            assert pd[0].value <= allowed * 1.1, spec.number
    assert checked >= 20


def test_content_covers_the_kinds_builders_use(cat):
    real = [s for s in cat if not is_template(s)]
    assert len(real) >= 150
    have = {(s.kind, s.family) for s in cat}
    wanted = [(Kind.BJT, "npn"), (Kind.BJT, "pnp"), (Kind.FET, "n-jfet"), (Kind.FET, "p-jfet"),
              (Kind.FET, "n-mosfet"), (Kind.FET, "p-mosfet"), (Kind.DIODE, "signal"),
              (Kind.DIODE, "schottky"), (Kind.DIODE, "germanium"), (Kind.DIODE, "rectifier"),
              (Kind.DIODE, "zener"), (Kind.DIODE, "varicap"), (Kind.IC, "regulator"),
              (Kind.IC, "opamp"), (Kind.IC, "audio-amp"), (Kind.CAPACITOR, "c0g"),
              (Kind.CAPACITOR, "x7r"), (Kind.CAPACITOR, "film"),
              (Kind.CAPACITOR, "electrolytic"), (Kind.CAPACITOR, "tantalum"),
              (Kind.RESISTOR, "carbon-film"), (Kind.RESISTOR, "metal-film"),
              (Kind.CRYSTAL, "fundamental"), (Kind.CRYSTAL, "overtone")]
    assert [w for w in wanted if w not in have] == []
    # RF and power parts are there too (fT of at least 500 MHz; PD of 40 W or more at TC)
    assert cat.search(Kind.BJT, "npn", [parse_criterion("ft>=500MHz", Kind.BJT)])
    assert any((p := s.get("pd")) is not None and p.value >= 40 for s in cat.search(Kind.BJT))


# The project keeps five type numbers out of every file; they are named here only by hash.
_KEPT_OUT = {"8e55fd48b4896b25", "4ef476e93627d726", "f977d0122040d58f", "89f57e9f616ef867",
             "762184581790045c"}


def test_numbers_kept_out_of_the_project_are_not_in_the_catalog():
    texts = [f.read_text(encoding="utf-8").upper() for f in shipped_files()]
    texts.append((Path(__file__).parents[1] / "docs" / "catalog.md").read_text("utf-8").upper())
    for text in texts:
        for size in (4, 5, 6):
            for i in range(len(text) - size + 1):
                h = hashlib.sha256(text[i:i + size].encode()).hexdigest()[:16]
                assert h not in _KEPT_OUT, text[max(0, i - 20):i + 20]


# --- spot checks against published values ---------------------------------------------------
def _spotchecks() -> list[dict[str, str]]:
    with (DATA / "catalog_spotchecks.csv").open(encoding="utf-8", newline="") as fh:
        return list(csv.DictReader(fh))


def test_spotcheck_table_is_big_enough_and_sourced():
    rows = _spotchecks()
    assert len(rows) >= 30
    assert all(r["source"].strip() for r in rows)


@pytest.mark.parametrize("row", _spotchecks(), ids=lambda r: f"{r['number']}-{r['param']}-"
                         f"{r['bound']}")
def test_spotcheck(cat, row):
    spec = cat.get(row["number"])
    assert spec is not None, row["number"]
    pdef = PARAMS[row["param"]]
    expected = parse_value(row["expected"], pdef.unit or None).value
    bound = Bound(row["bound"])
    got = [p.value for p in spec.values(row["param"]) if p.bound is bound]
    assert got, f"{row['number']} has no {row['param']} {bound.value} ({row['source']})"
    assert any(v == pytest.approx(expected, rel=1e-9) for v in got), (got, row["source"])


# --- pin orders -------------------------------------------------------------------------------
# (number, pin order pin 1 first, a variant that must be flagged or None, source)
PINOUTS = [
    ("PN2222A", "EBC", "CBE", "facts.md §4.1 note: PN2222A E-B-C, onsemi P2N2222A C-B-E"),
    ("P2N2222A", "CBE", "EBC", "facts.md §4.1: onsemi P2N2222A/D Rev 7, case 29 style 17"),
    ("PN2907A", "EBC", "CBE", "facts.md §4.1: Fairchild PN2907A / Motorola P2N2907A"),
    ("P2N2907A", "CBE", "EBC", "facts.md §4.1: Motorola P2N2907A style 17"),
    ("2SC1815", "ECB", "BCE", "facts.md §4.1 note: one second source numbers it B-C-E"),
    ("J310", "DSG", "SDG", "facts.md §4.2: Fairchild J309/J310, source and drain interchangeable"),
    ("2N5457", "DSG", "SDG", "facts.md §4.2: onsemi/Fairchild 2N5457, D and S interchangeable"),
    ("2N7000", "SGD", None, "facts.md §4.2: onsemi 2N7000/D style 22"),
    ("BS170", "DGS", None, "facts.md §4.2: onsemi BS170/D style 30"),
    ("2N3819", "SGD", None, "facts.md §4.2: Vishay Siliconix 2N3819 Rev. D"),
    ("MPF102", "DSG", None, "facts.md §4.2: onsemi MPF102/D style 5"),
    ("MPSH10", "BEC", None, "facts.md §4.1: Motorola MPSH10/D style 2"),
    ("TIP31C", "BCE", None, "facts.md §4.1: onsemi TIP31/D; GE TIP31 series"),
    ("IRF510", "GDS", None, "facts.md §4.2: Fairchild IRF510A sheet"),
    ("BC547B", "CBE", None, "facts.md §4.1: MCC BC546B/BC547A-B-C"),
]


@pytest.mark.parametrize(("number", "pinout", "variant", "source"), PINOUTS,
                         ids=[p[0] for p in PINOUTS])
def test_pin_order_and_flagged_variants(cat, number, pinout, variant, source):
    spec = cat.get(number)
    assert spec is not None and spec.pinout == pinout, source
    if variant is not None:
        assert variant in cat.variants(number), source
        assert cat.get(number).description, "a flagged variant is explained in the description"


def test_variants_are_other_orders_of_the_same_pins(cat):
    flagged = 0
    for spec in cat:
        for v in cat.variants(spec.number):
            flagged += 1
            assert sorted(v) == sorted(spec.pinout or "") and v != spec.pinout, spec.number
    assert flagged >= 5
    assert cat.variants("NO-SUCH-PART") == []


def test_mirror_pairs_from_facts_are_mirrors(cat):
    # facts.md §4.2 pinout traps: 2N7000 (S-G-D) vs BS170 (D-G-S) are mirror images
    assert cat.get("2N7000").pinout == cat.get("BS170").pinout[::-1]
    assert cat.get("PN2222A").pinout == cat.get("P2N2222A").pinout[::-1]


# --- lookup -------------------------------------------------------------------------------------
def test_get_folds_case_and_spacing_and_returns_a_copy(cat):
    a = cat.get(" p2n2222a ")
    assert a is not None and a.number == "P2N2222A"
    a.params.clear()
    a.attrs["x"] = "y"
    b = cat.get("P2N2222A")
    assert b.params and "x" not in b.attrs
    assert "p2n2222a" in cat and "NOPE" not in cat
    assert cat.get("NOPE") is None


def test_source_of_a_row(cat):
    assert cat.source("P2N2222A") == "onsemi P2N2222A/D Rev 7"  # facts.md §4.1
    assert cat.source("2N2222") == FROM_MEMORY
    with pytest.raises(UnknownPart):
        cat.source("NOPE")


# --- search -------------------------------------------------------------------------------------
def _crit(*texts: str, kind: Kind | None = None):
    return [parse_criterion(t, kind) for t in texts]


def test_search_holds_ge_against_guaranteed_minimum_only(cat):
    crit = _crit("vceo>=30V", "ft>=100MHz", kind=Kind.BJT)
    found = {s.number for s in cat.search(Kind.BJT, "npn", crit)}
    # facts.md §4.1: P2N2222A fT >= 300 MHz (min), VCEO 40 V; 2N4401 fT >= 250 MHz
    assert {"P2N2222A", "PN2222A", "2N4401", "BC547B"} <= found
    # BC337-25: fT is only typical (onsemi 210 typ, ST 100) so it is not guaranteed
    assert "BC337-25" not in found
    assert "BC337-25" in {s.number for s in cat.search(Kind.BJT, "npn", crit, typical=True)}
    # MPSH10 is VCEO 25 V (facts.md §4.1): below 30 V
    assert "MPSH10" not in found
    assert all(s.family == "npn" for s in cat.search(Kind.BJT, "npn", crit))


def test_search_holds_le_against_guaranteed_maximum(cat):
    found = {s.number for s in cat.search(Kind.FET, None, _crit("rds_on<=1Ω", kind=Kind.FET))}
    assert "IRF510" in found  # 0.54 Ω max (facts.md §4.2)
    assert "2N7000" not in found  # 5 Ω max (facts.md §4.2)


def test_search_equal_matches_nominal_and_text(cat):
    found = {s.number for s in cat.search(Kind.DIODE, "zener", _crit("vz=5.1V", kind=Kind.DIODE))}
    assert {"1N4733A", "BZX79C5V1"} <= found  # JEDEC 1N4733A = 5.1 V (from memory)
    assert all(s.nominal("vz") == pytest.approx(5.1) for s in
               cat.search(Kind.DIODE, "zener", _crit("vz=5.1V", kind=Kind.DIODE)))
    fam = cat.search(Kind.FET, None, _crit("family=n-jfet"))
    assert fam and all(s.family == "n-jfet" for s in fam)


def test_search_by_family_alone_folds_spellings(cat):
    # "NP0" is the older name of C0G (facts.md §3.2)
    assert [s.number for s in cat.search(None, "NP0", templates=True)] == \
        [s.number for s in cat.search(Kind.CAPACITOR, "c0g", templates=True)]
    assert {s.family for s in cat.search(None, "nmos")} == {"n-mosfet"}


def test_search_leaves_templates_out_unless_asked(cat):
    assert all(not is_template(s) for s in cat.search(Kind.CAPACITOR))
    assert any(is_template(s) for s in cat.search(Kind.CAPACITOR, templates=True))


@settings(max_examples=60, deadline=None)
@given(name=st.sampled_from(["vceo", "ic", "ft", "pd", "hfe", "tj"]),
       a=st.floats(0, 1e9, allow_nan=False), b=st.floats(0, 1e9, allow_nan=False),
       op=st.sampled_from([">=", "<="]))
def test_search_is_monotonic_and_every_hit_meets_the_criterion(name, a, b, op):
    cat = _shipped()
    lo, hi = sorted((a, b))

    def hits(x: float) -> set[str]:
        return {s.number for s in cat.search(Kind.BJT, None, [Criterion(name, Op(op), x)])}
    h_lo, h_hi = hits(lo), hits(hi)
    # a stricter bound never admits more parts
    assert (h_hi <= h_lo) if op == ">=" else (h_lo <= h_hi)
    for number in h_lo:
        spec = cat.get(number)
        g = spec.low(name) if op == ">=" else spec.high(name)
        assert g is not None and g.guaranteed
        assert (g.value >= lo * (1 - 1e-9)) if op == ">=" else (g.value <= lo * (1 + 1e-9))


# --- templates ------------------------------------------------------------------------------------
@pytest.mark.parametrize(("kind", "family", "hint", "number", "rating"), [
    (Kind.CAPACITOR, "c0g", "100p 50V", "C0G-50V", ("v_rated", 50)),
    # no rating written: the lowest-rated template (conservative)
    (Kind.CAPACITOR, "NP0", "47p", "C0G-50V", ("v_rated", 50)),
    # a rating written replaces the template's own: the part claims what the builder wrote
    (Kind.CAPACITOR, "c0g", "100p 200V", "C0G-500V", ("v_rated", 200)),
    (Kind.CAPACITOR, "x7r", "100n 63V", "X7R-100V", ("v_rated", 63)),
    (Kind.CAPACITOR, "x7r", "100n 1000V", "X7R-100V", ("v_rated", 1000)),
    (Kind.CAPACITOR, "electrolytic", "470u 25V", "ELECTROLYTIC-25V-105C", ("v_rated", 25)),
    (Kind.CAPACITOR, "electrolytic", "100u 16V", "ELECTROLYTIC-16V-85C", ("tmax", 85)),
    (Kind.CAPACITOR, "electrolytic", "100u 16V 105C", "ELECTROLYTIC-16V-105C", ("tmax", 105)),
    (Kind.CAPACITOR, "tantalum", "10u 50V", "TANTALUM-35V", ("v_rated", 50)),
    (Kind.CAPACITOR, "film", "100n X2 275VAC", "X2-275VAC", ("v_ac", 275)),
    (Kind.CAPACITOR, "film", "100n 250V", "FILM-PET-250V", ("v_rated", 250)),
    (Kind.RESISTOR, "carbon-film", "4k7 1/4W", "CF-0.25W", ("p_rated", 0.25)),
    (Kind.RESISTOR, "metal-film", "10k 0.5W", "MF-0.6W", ("p_rated", 0.5)),
    (Kind.CRYSTAL, "fundamental", "10MHz HC-49/S", "HC-49/S-FUND", ("overtone", 1)),
    (Kind.CRYSTAL, "overtone", "27MHz", "HC-49/U-3OT", ("overtone", 3)),
])
def test_template_choice(cat, kind, family, hint, number, rating):
    t = cat.template(kind, family, hint)
    assert t is not None and t.number == number
    name, value = rating
    assert [p.value for p in t.values(name)] == [pytest.approx(value)]
    assert all(p.origin is Origin.CATALOG for p in t.params)
    assert cat.get(number).get("tol") == t.get("tol")  # family figures come from the template


def test_safety_class_only_when_the_builder_names_it(cat):
    # IEC 60384-14 (facts.md §3.4): a class is a claim about the part; never infer one
    for hint in ("100n 275VAC", "100n 300V", "100n", "4n7 250VAC"):
        t = cat.template(Kind.CAPACITOR, "film", hint)
        assert t is not None and "safety" not in t.attrs, hint
    assert cat.template(Kind.CAPACITOR, "film", "4n7 Y2").attrs["safety"] == "Y2"


def test_no_template_for_a_family_without_one(cat):
    assert cat.template(Kind.INDUCTOR, "air", "1u") is None
    assert cat.template(Kind.CAPACITOR, "trimmer", "30p") is None


@settings(max_examples=60, deadline=None)
@given(volts=st.floats(1, 700), family=st.sampled_from(["c0g", "x7r", "x5r", "electrolytic",
                                                         "tantalum", "film"]))
def test_template_takes_the_lowest_rating_that_meets_the_hint(volts, family):
    cat = _shipped()
    v = round(volts, 2)
    t = cat.template(Kind.CAPACITOR, family, f"{v:.2f}V")
    assert t is not None

    def rated(s):  # noqa: ANN001, ANN202
        return (s.get("v_rated") or s.get("v_ac")).value

    assert rated(t) == pytest.approx(v)  # the builder's rating, never the template's
    ratings = [rated(s) for s in cat.templates(Kind.CAPACITOR, family) if "safety" not in s.attrs]
    enough = [r for r in ratings if r >= v]
    assert rated(cat.get(t.number)) == (min(enough) if enough else max(ratings))


def test_crystal_template_carries_typical_motional_values(cat):
    # facts.md §5.2: HC-49/U AT-cut fundamental C0 ≈ 3–7 pF; C1 ≈ 10–30 fF [M]
    t = cat.template(Kind.CRYSTAL, "fundamental", "HC-49/U")
    assert 3e-12 <= t.get("c0", Bound.TYP).value <= 7e-12
    assert 10e-15 <= t.get("c1", Bound.TYP).value <= 30e-15
    # overtone pullability falls by about 1/n² (facts.md §5.2): C1 scales the same way
    ot = cat.template(Kind.CRYSTAL, "overtone", "")
    n = ot.get("overtone").value
    ratio = t.get("c1", Bound.TYP).value / ot.get("c1", Bound.TYP).value
    assert ratio == pytest.approx(n ** 2, rel=0.1)


# --- the user's own catalog -----------------------------------------------------------------------
USER_ROWS = (
    HEADER + "\n"
    # a club's own measurement overrides the shipped row (invented figures)
    'P2N2222A,bjt,npn,TO-92,EBC,,club batch measured,"vceo=45V; ic=500mA",club bench notes 2026,'
    "datasheet\n"
    'XQ-101,bjt,pnp,TO-92,EBC,,an invented house number,"vceo=20V; ft>=50MHz",'
    "from memory,from-memory\n"
)


def test_user_file_extends_and_overrides(tmp_path):
    user = tmp_path / "catalog.csv"
    user.write_text(USER_ROWS, encoding="utf-8")
    shipped = load_catalog()
    both = load_catalog(user)
    assert len(both) == len(shipped) + 1
    assert both.get("XQ-101").family == "pnp"
    over = both.get("P2N2222A")
    assert over.get("vceo").value == 45 and over.pinout == "EBC"
    assert over.get("ft") is None  # the user's row replaces the whole shipped row
    assert both.source("P2N2222A") == "club bench notes 2026"
    assert shipped.get("P2N2222A").get("vceo").value == 40  # the shipped catalog is untouched


def test_user_file_in_the_config_folder_is_found(tmp_path, monkeypatch):
    monkeypatch.setenv("STOCK_HOME", str(tmp_path))
    assert load_catalog().get("XQ-101") is None
    (tmp_path / "catalog.csv").write_text(USER_ROWS, encoding="utf-8")
    assert load_catalog().get("XQ-101") is not None
    # a changed file is read again (size differs, so the cache key changes)
    (tmp_path / "catalog.csv").write_text(USER_ROWS.replace("vceo=20V", "vceo=25.5V"), "utf-8")
    assert load_catalog().get("XQ-101").get("vceo").value == 25.5


def test_user_file_with_a_byte_order_mark_reads(tmp_path):
    user = tmp_path / "catalog.csv"
    user.write_text(USER_ROWS, encoding="utf-8-sig")  # as spreadsheet programs save CSV UTF-8
    assert load_catalog(user).get("XQ-101") is not None


GOOD = 'XQ-1,bjt,npn,TO-92,EBC,,fine,"vceo=20V",from memory,from-memory'


@pytest.mark.parametrize(("line", "column"), [
    ('XQ-1,valve,npn,TO-92,EBC,,x,"vceo=20V",from memory,from-memory', "kind"),
    ('XQ-1,bjt,nnp,TO-92,EBC,,x,"vceo=20V",from memory,from-memory', "family"),
    ('XQ-1,bjt,,TO-92,EBC,,x,"vceo=20V",from memory,from-memory', "family"),
    ('XQ-1,bjt,npn,TO-92,EBX,,x,"vceo=20V",from memory,from-memory', "pinout"),
    ('XQ-1,bjt,npn,TO-92,EEC,,x,"vceo=20V",from memory,from-memory', "pinout"),
    ('XQ-1,bjt,npn,TO-92,EBC,CB,x,"vceo=20V",from memory,from-memory', "pin_variants"),
    ('XQ-1,bjt,npn,TO-92,EBC,EBC,x,"vceo=20V",from memory,from-memory', "pin_variants"),
    ('XQ-1,bjt,npn,TO-92,,CBE,x,"vceo=20V",from memory,from-memory', "pin_variants"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,"vceo=20V",,from-memory', "source"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,"vceo=20V",from memory,datasheet', "confidence"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,"vceo=20V",from memory,maybe', "confidence"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,,from memory,from-memory', "params"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,"vceo=twenty",from memory,from-memory', "params"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,"vds=20V",from memory,from-memory', "params"),
    ('XQ-1,bjt,npn,TO-92,EBC,,x,"hfe=300..100",from memory,from-memory', "params"),
    (',bjt,npn,TO-92,EBC,,x,"vceo=20V",from memory,from-memory', "number"),
    (GOOD, "number"),  # the same number twice
])
def test_bad_rows_name_file_row_and_column(tmp_path, line, column):
    f = tmp_path / "mine.csv"
    f.write_text(f"{HEADER}\n{GOOD}\n{line}\n", encoding="utf-8")
    with pytest.raises(ImportFileError) as exc:
        read_catalog_file(f)
    err = exc.value
    assert err.file == str(f) and err.column == column and err.row == 3
    assert str(err).count("\n") == 0


def test_bad_header_and_unreadable_files(tmp_path):
    f = tmp_path / "c.csv"
    f.write_text("number,kind\nX,bjt\n", encoding="utf-8")
    with pytest.raises(ImportFileError, match="header"):
        read_catalog_file(f)
    f.write_bytes(HEADER.encode() + b"\nX\xff\xfe,bjt\n")
    with pytest.raises(ImportFileError, match="UTF-8"):
        read_catalog_file(f)
    with pytest.raises(ImportFileError):
        load_catalog(tmp_path / "missing.csv")


# --- writing rows back ------------------------------------------------------------------------
def _same(a, b) -> bool:
    def key(s):  # noqa: ANN001, ANN202
        return (s.number, s.kind, s.family, s.package, s.pinout, s.description, s.source,
                s.attrs, sorted((p.name, p.bound, p.value, tuple(sorted(p.at.items())),
                                 p.origin) for p in s.params))
    return key(a) == key(b)


@settings(max_examples=25, deadline=None)
@given(st.lists(st.sampled_from([s.number for s in _shipped()]), min_size=1, max_size=12,
                unique=True))
def test_format_rows_reads_back_the_same_rows(tmp_path_factory, numbers):
    cat = _shipped()
    parts = [cat.get(n) for n in numbers]
    f = tmp_path_factory.mktemp("rt") / "mine.csv"
    f.write_text(format_rows(parts), encoding="utf-8")
    back = read_catalog_file(f)
    assert [s.number for s in back] == numbers
    assert all(_same(a, b) for a, b in zip(parts, back, strict=True))


# --- candidates to buy --------------------------------------------------------------------------
def test_to_buy_lists_catalog_parts_not_in_the_drawers(cat):
    recs = cat.to_buy(Kind.FET, "n-jfet", exclude=["j310", "MPF102"])
    numbers = {r.part.number for r in recs}
    assert "2N5457" in numbers and "J310" not in numbers and "MPF102" not in numbers
    assert all(r.to_buy and r.free == 0 and r.part.family == "n-jfet" for r in recs)
    assert all(not is_template(r.part) for r in cat.to_buy(Kind.CAPACITOR))
