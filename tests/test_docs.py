"""The documentation keeps up with the code.

* every command the CLI registers is documented in docs/user-guide.md (a heading or a
  code span ``stock NAME``), and every ``stock NAME`` the guide shows is a real command;
* every command's help text carries an example (style guide point 11, common practice
  after sqlite-utils' ``tests/test_docs.py``);
* every relative link in docs/*.md points to a file that exists (and, for a link to a
  heading, ``page.md#anchor``, to a heading that exists), and docs/README.md lists every
  page in docs/.

A new command without docs, a renamed command, or a moved file makes one of these fail.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import typer

import stock.cli

ROOT = Path(__file__).resolve().parents[1]
DOCS = ROOT / "docs"
GUIDE = DOCS / "user-guide.md"

COMMANDS = typer.main.get_command(stock.cli.app).commands  # name -> click command
NAMES = sorted(COMMANDS)

FENCE = re.compile(r"^(```|~~~).*?^\1[ \t]*$", re.S | re.M)
CODE_SPAN = re.compile(r"(`+)(.+?)\1", re.S)
# [text](target) and ![alt](target); the target ends at white space or ')'
LINK = re.compile(r"!?\[[^\]]*\]\(\s*<?([^)\s>]+)>?(?:\s+\"[^\"]*\")?\s*\)")


def _guide() -> str:
    return GUIDE.read_text(encoding="utf-8")


def _prose(text: str) -> str:
    """Markdown without fenced blocks and code spans (links in code are not links)."""
    return CODE_SPAN.sub("", FENCE.sub("", text))


def _documented(text: str, name: str) -> bool:
    """``stock NAME`` in a heading, or a code span that starts with ``stock NAME``."""
    word = re.escape(name)
    heading = re.compile(rf"^#+ .*\bstock {word}\b(?!-)", re.M)
    span = re.compile(rf"`stock {word}(?:`| [^`]*`)")
    return bool(heading.search(text) or span.search(text))


def _commands_shown(text: str) -> set[str]:
    """Every NAME the guide shows as ``stock NAME``: code spans and command lines in fences."""
    shown = {m.group(1) for m in re.finditer(r"`stock ([a-z][a-z-]*)\b", text)}
    for block in FENCE.finditer(text):
        for line in block.group(0).splitlines():
            m = re.match(r"\s*(?:\$\s+)?stock ([a-z][a-z-]*)\b", line)
            if m:
                shown.add(m.group(1))
    return shown


def test_the_cli_has_commands() -> None:
    # guards the parametrised tests below against an empty command list
    assert {"init", "add", "check", "fit"} <= set(NAMES)


@pytest.mark.parametrize("name", NAMES)
def test_every_command_is_in_the_user_guide(name: str) -> None:
    assert _documented(_guide(), name), (
        f"'stock {name}' is not documented in docs/user-guide.md: add a heading or a code "
        f"span `stock {name} ...` with an example and its output")


@pytest.mark.parametrize("name", NAMES)
def test_every_command_help_has_an_example(name: str) -> None:
    help_text = COMMANDS[name].help or ""
    assert "Example" in help_text, f"'stock {name} --help' shows no example"


def test_the_guide_shows_only_real_commands() -> None:
    unknown = _commands_shown(_guide()) - set(NAMES)
    assert not unknown, f"docs/user-guide.md shows commands the CLI lacks: {sorted(unknown)}"


def test_documented_detects_headings_and_spans() -> None:
    # the matcher itself: a near miss (build vs builds) must not count
    assert _documented("## `stock builds` — list", "builds")
    assert _documented("run `stock build club-night` when done", "build")
    assert not _documented("run `stock builds` to list", "build")
    assert not _documented("stock build in plain prose", "build")
    assert _documented("### Receive parts: stock add", "add")


def _links(path: Path) -> list[tuple[str, str]]:
    """(file, anchor) of every link that is not a URL; file '' is the page itself."""
    found = []
    for m in LINK.finditer(_prose(path.read_text(encoding="utf-8"))):
        target = m.group(1)
        if re.match(r"^[a-z][a-z0-9+.-]*:", target, re.I):
            continue  # a URL: http:, https:, mailto:
        file, _, anchor = target.partition("#")
        found.append((file, anchor))
    return found


def _relative_links(path: Path) -> list[str]:
    return [file for file, _ in _links(path) if file]


def _anchors(path: Path) -> set[str]:
    """Heading anchors as GitHub makes them: lower case, punctuation dropped, spaces to
    hyphens, repeats numbered -1, -2 ... (GitHub's documented heading-link behaviour)."""
    seen: dict[str, int] = {}
    anchors = set()
    text = FENCE.sub("", path.read_text(encoding="utf-8"))
    for m in re.finditer(r"^#{1,6}[ \t]+(.*?)[ \t#]*$", text, re.M):
        slug = re.sub(r"[^\w\- ]", "", m.group(1).strip().lower()).replace(" ", "-")
        n = seen.get(slug, 0)
        seen[slug] = n + 1
        anchors.add(slug if n == 0 else f"{slug}-{n}")
    return anchors


DOC_PAGES = sorted(DOCS.glob("*.md"))


@pytest.mark.parametrize("page", DOC_PAGES, ids=lambda p: p.name)
def test_relative_links_point_to_files_that_exist(page: Path) -> None:
    missing = [t for t in _relative_links(page) if not (page.parent / t).exists()]
    assert not missing, f"{page.name}: links to missing files: {missing}"


@pytest.mark.parametrize("page", DOC_PAGES, ids=lambda p: p.name)
def test_links_to_headings_point_to_headings_that_exist(page: Path) -> None:
    broken = []
    for file, anchor in _links(page):
        target = page.parent / file if file else page
        if anchor and target.suffix == ".md" and target.exists() \
                and anchor not in _anchors(target):
            broken.append(f"{file}#{anchor}")
    assert not broken, f"{page.name}: links to headings that do not exist: {broken}"


def test_anchors_follow_the_heading_rules(tmp_path: Path) -> None:
    page = tmp_path / "sample.md"
    page.write_text("# Title\n## `stock fit --json`\n## Scripts: `--json` and exit codes\n"
                    "### Title\n```\n# not a heading\n```\n", encoding="utf-8")
    assert _anchors(page) == {"title", "stock-fit---json", "scripts---json-and-exit-codes",
                              "title-1"}


def test_link_parser_finds_links_outside_code_only(tmp_path: Path) -> None:
    page = tmp_path / "sample.md"
    page.write_text("see [rules](rules.md#top) and ![x](img/a.png)\n```\n[no](in-code.md)\n"
                    "```\n`[no](span.md)` [web](https://example.org/) [here](#anchor)\n",
                    encoding="utf-8")
    assert _relative_links(page) == ["rules.md", "img/a.png"]


def test_docs_index_lists_every_page() -> None:
    index = (DOCS / "README.md").read_text(encoding="utf-8")
    linked = set(_relative_links(DOCS / "README.md"))
    missing = [p.name for p in DOC_PAGES if p.name != "README.md" and p.name not in linked]
    assert index.strip() and not missing, f"docs/README.md does not link to {missing}"
