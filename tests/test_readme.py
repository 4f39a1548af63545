"""The README's usage examples run as written (a documentation check on the real catalog)."""

from __future__ import annotations

import re
import shlex
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _usage_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("## Using it", 1)[1].split("\n## ", 1)[0]
    block = re.search(r"```sh\n(.*?)```", section, re.S).group(1)
    return [line.split("  #")[0].strip() for line in block.splitlines() if line.startswith("holdoff ")]


def test_readme_has_usage_examples():
    assert len(_usage_commands()) >= 10


@pytest.mark.parametrize("command", _usage_commands())
def test_readme_usage_example_runs(command, cli, tmp_path, monkeypatch):
    (tmp_path / "examples").symlink_to(ROOT / "examples")
    monkeypatch.chdir(tmp_path)
    args = shlex.split(command)[1:]
    code, out, err = cli(args + (["--draws", "50"] if args[0] == "shortlist" else []))
    assert code == 0, err
    assert out.strip()
