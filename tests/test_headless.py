"""The engine is proven headless, and the warm ``near`` path imports nothing it does not need."""

from __future__ import annotations

import json
import subprocess
import sys

from .conftest import ROOT, gensim_data, run_cli

ENGINE = [
    "index",
    "index.store",
    "index.search",
    "index.ann",
    "index.cache",
    "index.formats",
    "index.read_text",
    "index.read_binary",
    "index.read_other",
    "index.suggest",
]


def _loaded_after(code: str) -> set[str]:
    out = (
        subprocess.run(
            [sys.executable, "-c", code + "\nimport sys, json; print(json.dumps(sorted(sys.modules)))"],
            capture_output=True,
            text=True,
            cwd=ROOT,
            check=True,
        )
        .stdout.strip()
        .splitlines()[-1]
    )
    return {m.split(".")[0] for m in json.loads(out)}


def test_index_imports_no_ui():
    code = "\n".join(
        f"import {m}" for m in ENGINE + ["index.expr", "index.analogy", "index.similarity", "index.scoring"]
    )
    loaded = _loaded_after(code)
    assert "textual" not in loaded and "rich" not in loaded


def test_warm_near_imports_no_gensim_scipy_textual_pyarrow(tmp_path):
    path = str(gensim_data("lee_fasttext.vec"))
    cache = str(tmp_path / "c")
    assert run_cli("info", path, "--cache", cache).returncode == 0  # the first open fills the cache
    code = (
        "import sys\nfrom console.cli import main\n"
        f"rc = main(['near', {path!r}, 'government', '--cache', {cache!r}, '--json'])\nassert rc == 0"
    )
    loaded = _loaded_after(code)
    for heavy in ("gensim", "scipy", "textual", "pyarrow", "rapidfuzz", "smart_open"):
        assert heavy not in loaded, heavy
