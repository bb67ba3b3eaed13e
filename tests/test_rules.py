"""The policy table: shipped values, overrides from a config file, and docs/rules.md."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from stock.errors import ConfigError
from stock.rules import Policy, SourceTag, load_policy, parse_table, render_markdown

DATA = Path(__file__).parent / "data"
ROOT = Path(__file__).parent.parent


def _published() -> list[dict[str, str]]:
    with (DATA / "rules_published.csv").open(encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


@pytest.mark.parametrize("row", _published(), ids=lambda r: r["id"])
def test_published_values(row: dict[str, str]) -> None:
    # each row names its published source in the CSV
    policy = load_policy({})
    assert policy[row["id"]] == pytest.approx(float(row["value"]))


def test_every_rule_is_complete() -> None:
    policy = load_policy({})
    assert len(policy) >= 30
    for rule in policy.rules():
        assert rule.id and rule.source.strip() and rule.why.strip()
        assert isinstance(rule.tag, SourceTag)
        assert rule.note == "" and rule.default is None


def test_override_changes_only_that_rule(tmp_path: Path) -> None:
    cfg = tmp_path / "config.toml"
    cfg.write_text("[rules]\nft_ratio_min = 4\n", encoding="utf-8")
    shipped = load_policy({})
    policy = load_policy(path=cfg)
    assert policy["ft_ratio_min"] == 4.0
    assert policy.rule("ft_ratio_min").note == f"overridden in {cfg}"
    assert policy.rule("ft_ratio_min").default == 5.0
    changed = [k for k in policy if policy[k] != shipped[k]]
    assert changed == ["ft_ratio_min"]


def test_unknown_rule_id_names_it() -> None:
    with pytest.raises(ConfigError, match="ft_ratio_mn.*did you mean ft_ratio_min"):
        load_policy({"rules": {"ft_ratio_mn": 4}})


@pytest.mark.parametrize("bad", ["four", True, float("nan")])
def test_override_must_be_a_number(bad: object) -> None:
    with pytest.raises(ConfigError, match="not"):
        load_policy({"rules": {"ft_ratio_min": bad}})


def test_policy_is_immutable_mapping() -> None:
    policy = load_policy({})
    assert isinstance(policy, Policy)
    with pytest.raises(TypeError):
        policy["ft_ratio_min"] = 3  # type: ignore[index]
    with pytest.raises(KeyError, match="did you mean"):
        policy["ft_ratio_mi"]


def test_table_format_errors_are_one_line() -> None:
    with pytest.raises(ConfigError, match="lacks why"):
        parse_table('[[rule]]\nid="a"\nvalue=1\nunit=""\ntag="textbook"\nsource="x"\n')
    with pytest.raises(ConfigError, match="tag"):
        parse_table('[[rule]]\nid="a"\nvalue=1\nunit=""\ntag="folklore"\nsource="x"\nwhy="y"\n')
    with pytest.raises(ConfigError, match="twice"):
        row = '[[rule]]\nid="a"\nvalue=1\nunit=""\ntag="textbook"\nsource="x"\nwhy="y"\n'
        parse_table(row + row)


def test_docs_rules_md_is_generated_from_the_table() -> None:
    # regenerate with: python -c "from stock.rules import *; print(render_markdown(
    #   load_policy({})), end='')" > docs/rules.md
    text = (ROOT / "docs" / "rules.md").read_text(encoding="utf-8")
    assert text == render_markdown(load_policy({}))


def test_markdown_lists_every_rule_and_overrides() -> None:
    policy = load_policy({}).with_values({"rfc_x_ratio": 20}, note="overridden in test.toml")
    md = render_markdown(policy)
    for rid in policy:
        assert f"`{rid}`" in md
    assert "20 × (overridden in test.toml; shipped 10)" in md
