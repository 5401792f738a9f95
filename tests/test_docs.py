"""The documentation in docs/ stays true: generated reference, commands, links, cautions."""

from __future__ import annotations

import importlib.util
import re
from pathlib import Path

import pytest

from robust.cli import main

DOCS = Path(__file__).resolve().parent.parent / "docs"


def _generator():
    spec = importlib.util.spec_from_file_location(
        "generate_cli_reference", DOCS / "generate_cli_reference.py"
    )
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _code_blocks(text: str) -> list[str]:
    return re.findall(r"^```[^\n]*\n(.*?)^```", text, flags=re.MULTILINE | re.DOTALL)


def test_cli_reference_is_up_to_date():
    """docs/cli.md equals what docs/generate_cli_reference.py writes from the current commands."""
    expected = _generator().render()
    actual = (DOCS / "cli.md").read_text(encoding="utf-8")
    assert actual == expected, (
        "docs/cli.md is stale: run `python docs/generate_cli_reference.py` and commit the result"
    )


def test_cli_reference_covers_every_command():
    """Every command of the CLI has its own section in docs/cli.md."""
    text = (DOCS / "cli.md").read_text(encoding="utf-8")
    for name in main.commands:
        assert f"\n## robust {name}\n" in text, name


def _tutorial_commands() -> list[str]:
    text = (DOCS / "tutorial.md").read_text(encoding="utf-8")
    words = []
    for block in _code_blocks(text):
        for line in block.splitlines():
            match = re.match(r"\s*(?:\$\s+)?robust\s+(\S+)", line)
            if match:
                words.append(match.group(1))
    words += re.findall(r"`robust\s+([^\s`]+)", text)
    return words


def test_tutorial_shows_commands():
    """The tutorial shows every analysis command at least once."""
    shown = set(_tutorial_commands())
    for name in ("check", "trace", "margin", "rank", "yield", "report", "routh", "demo"):
        assert name in shown, name


@pytest.mark.parametrize("word", sorted(set(_tutorial_commands())))
def test_tutorial_commands_exist(word):
    """Every `robust ...` command shown in docs/tutorial.md names an existing command."""
    if word.startswith("-"):
        assert word in ("--help", "-h", "--version"), word
    else:
        assert word in main.commands, f"docs/tutorial.md shows `robust {word}`, which does not exist"


def _relative_links() -> list[tuple[str, str]]:
    links = []
    for page in sorted(DOCS.glob("*.md")):
        text = page.read_text(encoding="utf-8")
        for target in re.findall(r"\]\(([^)\s]+)\)", text):
            if re.match(r"[a-z][a-z0-9+.-]*:", target) or target.startswith("#"):
                continue  # absolute URLs and anchors within the page
            links.append((page.name, target))
    return links


@pytest.mark.parametrize(("page", "target"), _relative_links())
def test_relative_links_resolve(page, target):
    """Every relative link in docs/*.md points to an existing file or directory."""
    path = (DOCS / target.split("#", 1)[0]).resolve()
    assert path.exists(), f"docs/{page} links to {target}, which does not exist"


@pytest.mark.parametrize(
    "phrase",
    [
        "unmodelled dynamics",
        "delays",
        "saturation",
        "nonlinearity",
        "time variation",
        "ageing",
        "temperature outside the stated",
        "necessary, not sufficient",
        "applicable standards",
        "qualified",
        "does not replace it",
    ],
)
def test_methods_state_the_cautions(phrase):
    """docs/methods.md states every caution of DESIGN.md section 7."""
    text = " ".join((DOCS / "methods.md").read_text(encoding="utf-8").split()).replace("**", "")
    assert phrase in text.lower(), phrase
