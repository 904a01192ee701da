"""The package installs under the one name ``wordkin``: no generic ``index``, ``console`` or ``demo_vectors``
lands in site-packages. Checked on the wheel that ``pip install .`` builds and installs."""

from __future__ import annotations

import subprocess
import sys
import zipfile

from .conftest import ROOT


def test_wheel_holds_only_the_wordkin_package(tmp_path):
    r = subprocess.run(
        [
            sys.executable,
            "-m",
            "pip",
            "wheel",
            "--no-deps",
            "-q",
            "-w",
            str(tmp_path),
            str(ROOT),
        ],
        capture_output=True,
        text=True,
    )
    assert r.returncode == 0, r.stderr
    (wheel,) = tmp_path.glob("wordkin-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    tops = {n.split("/")[0] for n in names}
    assert tops == {"wordkin", next(t for t in tops if t.endswith(".dist-info"))}, tops
    for want in (
        "wordkin/index/kinds/__init__.py",
        "wordkin/console/tui/app.tcss",
        "wordkin/demo_vectors/brackwater.vec.gz",
    ):
        assert want in names
    # Every module of the three folders is in the wheel (a new subpackage not listed in pyproject.toml would be lost).
    for folder in ("index", "console", "demo_vectors"):
        for src in (ROOT / folder).rglob("*.py"):
            assert f"wordkin/{src.relative_to(ROOT).as_posix()}" in names, src
    assert "wordkin/__init__.py" not in names  # a namespace package: nothing but the three subpackages
    entry = zipfile.ZipFile(wheel).read(next(n for n in names if n.endswith("entry_points.txt"))).decode()
    assert "wordkin = wordkin.console.cli:main" in entry
