"""Lint and types as part of the suite: ruff over the code, mypy over both packages (config in pyproject.toml)."""

from __future__ import annotations

import importlib.util
import subprocess
import sys

import pytest

from .conftest import ROOT


@pytest.mark.skipif(importlib.util.find_spec("ruff") is None, reason="ruff is not installed")
def test_ruff_clean(tmp_path):
    r = subprocess.run(
        [
            sys.executable,
            "-m",
            "ruff",
            "check",
            "--cache-dir",
            str(tmp_path),
            "index",
            "console",
            "tests",
            "demo_vectors",
        ],
        cwd=ROOT,
        capture_output=True,
        text=True,
    )
    assert r.returncode == 0, r.stdout + r.stderr


def test_mypy_clean(tmp_path):
    r = subprocess.run(
        [sys.executable, "-m", "mypy", "--cache-dir", str(tmp_path)], cwd=ROOT, capture_output=True, text=True
    )
    assert r.returncode == 0, r.stdout + r.stderr
