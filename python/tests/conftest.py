"""Shared fixtures: the repository root (the demo data), the command-line
program the Python results are compared with, and a runner for it."""

import json
import os
import subprocess
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]


def _binary() -> Path:
    given = os.environ.get("TAUWISE_BIN")
    path = Path(given) if given else REPO / "target" / "release" / "tauwise"
    if not path.is_file():
        pytest.fail(
            f"the tauwise command is not at {path}: build it with `cargo build --release` "
            "(or set TAUWISE_BIN); these tests compare the Python results with it"
        )
    return path


@pytest.fixture(scope="session")
def repo() -> Path:
    return REPO


@pytest.fixture
def at_repo(monkeypatch):
    """Run the test from the repository root, so that the relative paths the
    command line and Python are given (and write into `"input"`) agree."""
    monkeypatch.chdir(REPO)
    return REPO


@pytest.fixture(scope="session")
def cli():
    """Run `tauwise ARGS…` from the repository root; its JSON output parsed."""
    binary = _binary()

    def run(*args: str) -> dict:
        out = subprocess.run(
            [str(binary), *args],
            cwd=REPO,
            capture_output=True,
            text=True,
            check=False,
        )
        if out.returncode not in (0,):
            raise AssertionError(f"tauwise {' '.join(args)} failed ({out.returncode}): {out.stderr}")
        return json.loads(out.stdout)

    return run
