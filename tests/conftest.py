"""Shared test fixtures: the repository layout and a CLI runner."""

from __future__ import annotations

from pathlib import Path

import pytest

#: Repository root (the folder holding optimiser/ and duty_cycles/).
REPO = Path(__file__).resolve().parent.parent


@pytest.fixture
def repo_root() -> Path:
    """The repository root."""
    return REPO


@pytest.fixture
def run_cli(capsys):
    """Run ``stowflow ARGS...`` in-process; return ``(exit code, stdout, stderr)``."""
    from stowflow.cli import main

    def run(*args: str) -> tuple[int, str, str]:
        code = main([str(a) for a in args])
        captured = capsys.readouterr()
        return code, captured.out, captured.err

    return run
