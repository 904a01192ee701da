"""Lint, format and types as part of the suite: ruff check and ruff format --check over the code, mypy over both
packages as they install (``wordkin.index`` strict; config in pyproject.toml)."""

from __future__ import annotations

import importlib.util
import subprocess
import sys

import pytest

from .conftest import ROOT

CODE = ["index", "console", "tests", "demo_vectors"]
needs_ruff = pytest.mark.skipif(importlib.util.find_spec("ruff") is None, reason="ruff is not installed")


@needs_ruff
def test_ruff_clean(tmp_path):
    r = subprocess.run(
        [sys.executable, "-m", "ruff", "check", "--cache-dir", str(tmp_path), *CODE],
        cwd=ROOT,
        capture_output=True,
        text=True,
    )
    assert r.returncode == 0, r.stdout + r.stderr


@needs_ruff
def test_ruff_format_clean(tmp_path):
    r = subprocess.run(
        [sys.executable, "-m", "ruff", "format", "--check", "--cache-dir", str(tmp_path), *CODE],
        cwd=ROOT,
        capture_output=True,
        text=True,
    )
    assert r.returncode == 0, r.stdout + r.stderr


def test_mypy_clean(tmp_path):
    # The repository's folders laid out as they install (wordkin/index, wordkin/console), as links.
    pkg = tmp_path / "src" / "wordkin"
    pkg.mkdir(parents=True)
    for name in ("index", "console", "demo_vectors"):
        (pkg / name).symlink_to(ROOT / name, target_is_directory=True)
    r = subprocess.run(
        [
            sys.executable,
            "-m",
            "mypy",
            "--config-file",
            str(ROOT / "pyproject.toml"),
            "--cache-dir",
            str(tmp_path / "cache"),
            "-p",
            "wordkin.index",
            "-p",
            "wordkin.console",
        ],
        cwd=tmp_path / "src",
        capture_output=True,
        text=True,
    )
    assert r.returncode == 0, r.stdout + r.stderr
