"""The layers as import-linter contracts (``[tool.importlinter]`` in pyproject.toml): kept on the tree as it is,
and broken by a deliberate violation planted in a copy of the tree."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

from .conftest import ROOT

LINT = Path(sys.executable).parent / "lint-imports"


def _lint(cwd: Path, pythonpath: str | None = None) -> subprocess.CompletedProcess[str]:
    env = dict(os.environ)
    if pythonpath:
        env["PYTHONPATH"] = pythonpath
    return subprocess.run(
        [str(LINT), "--no-cache", "--config", str(ROOT / "pyproject.toml")],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=env,
        timeout=300,
    )


def test_every_layer_contract_is_kept(tmp_path):
    r = _lint(tmp_path)
    assert r.returncode == 0, r.stdout + r.stderr
    assert "0 broken" in r.stdout and "KEPT" in r.stdout


def test_a_planted_violation_breaks_its_contracts(tmp_path):
    # A copy of the tree in which the engine's search module imports the full-screen app.
    for folder in ("index", "console"):
        shutil.copytree(ROOT / folder, tmp_path / "wordkin" / folder, ignore=shutil.ignore_patterns("__pycache__"))
    search = tmp_path / "wordkin" / "index" / "search.py"
    search.write_text(search.read_text() + "\nfrom wordkin.console.tui import app  # planted\n")
    r = _lint(tmp_path, pythonpath=str(tmp_path))
    assert r.returncode == 1, r.stdout + r.stderr
    assert "the engine imports no console, textual or rich BROKEN" in r.stdout
    assert "wordkin.index.search -> wordkin.console.tui.app" in r.stdout
