"""The code passes ruff with the project's configuration (pyproject.toml, [tool.ruff]): style, imports, bugbear."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _ruff() -> list[str]:
    beside = Path(sys.executable).with_name("ruff")  # the test environment's own (a test extra)
    if beside.exists():
        return [str(beside)]
    found = shutil.which("ruff")
    if found is None:
        pytest.fail("ruff is not installed; it is a test extra: pip install -e '.[test]'")
    return [found]


def test_ruff_passes():
    result = subprocess.run([*_ruff(), "check", "--no-cache", "src", "tests", "benchmarks", "data_examples"],
                            cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert result.returncode == 0, result.stdout + result.stderr
