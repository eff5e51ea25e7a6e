"""The docs stay true: every rule and every error class has its entry; README keeps two commands."""

import re
from pathlib import Path

import derivpad
from derivpad.core.symbolic.rules import RULES

ROOT = Path(__file__).resolve().parents[1]


def test_every_rule_is_in_the_rule_doc():
    text = (ROOT / "docs" / "rules.md").read_text()
    for rule in RULES.values():
        assert f"## `{rule.id}` — {rule.name}" in text
        assert rule.statement in text
        assert f"- Source: {rule.source}" in text


def test_every_error_is_in_the_catalogue():
    text = (ROOT / "docs" / "errors.md").read_text()
    for name in derivpad.errors.__all__:
        assert f"`{name}`" in text, name


def test_readme_quick_start_has_two_commands_and_ci_runs_the_test_one():
    readme = (ROOT / "README.md").read_text()
    block = re.search(r"## Quick start\s+```bash\n(.*?)```", readme, re.S).group(1)
    commands = [line for line in block.splitlines() if line.strip()]
    assert len(commands) == 2
    assert "derivpad demo" in commands[0]
    assert commands[1] in (ROOT / ".ci" / "run").read_text()
    assert "qualified engineer" in readme and "local codes" in readme
