"""The console in a real terminal: tmux on a private socket, polling the screen (no fixed sleeps)."""

from __future__ import annotations

import os
import shlex
import shutil
import subprocess
import sys
import time
import uuid

import numpy as np
import pytest

from .conftest import ROOT

pytestmark = pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed")


class Tmux:
    def __init__(self, tmp_path) -> None:
        self.sock = f"wk-{uuid.uuid4().hex[:8]}"
        self.tmp = tmp_path

    def tm(self, *args: str) -> str:
        return subprocess.run(["tmux", "-L", self.sock, *args], capture_output=True, text=True, check=True).stdout

    def start(self, *cli: str) -> None:
        env = f"WORDKIN_CACHE={shlex.quote(str(self.tmp / 'cache'))} WORDKIN_DATA={shlex.quote(str(self.tmp))}"
        cmd = " ".join(shlex.quote(c) for c in (sys.executable, "-m", "wordkin.console.cli", *cli))
        self.tm(
            "new-session",
            "-d",
            "-s",
            "t",
            "-x",
            "80",
            "-y",
            "24",
            "-c",
            str(ROOT),
            f"env {env} TERM=xterm-256color {cmd}; echo EXIT=$?; sleep 30",
        )

    def screen(self) -> str:
        return self.tm("capture-pane", "-t", "t", "-p")

    def keys(self, *keys: str) -> None:
        self.tm("send-keys", "-t", "t", *keys)

    def wait(self, text: str, timeout: float = 60) -> str:
        end = time.monotonic() + timeout
        while time.monotonic() < end:
            s = self.screen()
            if text in s:
                return s
            time.sleep(0.1)
        raise AssertionError(f"{text!r} never appeared; screen:\n{self.screen()}")

    def close(self) -> None:
        subprocess.run(["tmux", "-L", self.sock, "kill-server"], capture_output=True)


@pytest.fixture
def tmux(tmp_path):
    t = Tmux(tmp_path)
    yield t
    t.close()


def test_console_in_a_real_terminal(tmux, lee_model):
    kv, paths = lee_model
    tmux.start("open", str(paths["text"]))
    tmux.wait("words")
    tmux.wait("exact search: small set")  # the index is built, and a set this small is scanned
    word = kv.index_to_key[20]
    tmux.keys(word, "Enter")
    expected = [w for w, _ in kv.most_similar(word, topn=5)]
    screen = tmux.wait(f"neighbours of {word}")
    for w in expected:
        assert w in screen, (w, screen)
    tmux.keys("C-q")
    tmux.wait("EXIT=0")


def test_hostile_words_in_a_real_terminal(tmux, tmp_path):
    words = ["harbour", "[bold]x[/bold]", "\x1b[31mred", "\x1b]2;pwned\x07t", "\u202eevil", "quay"]
    rng = np.random.default_rng(3)
    base = rng.standard_normal(6)
    path = tmp_path / "hostile.txt"
    with open(path, "w", encoding="utf-8") as f:
        for i, w in enumerate(words):
            v = base + 0.02 * i * rng.standard_normal(6)
            f.write(w + " " + " ".join(f"{x:.4f}" for x in v) + "\n")
    tmux.start("open", str(path))
    tmux.wait("words")
    title_before = tmux.tm("display-message", "-p", "-t", "t", "#{pane_title}")
    tmux.keys("harbour", "Enter")
    screen = tmux.wait("neighbours of harbour")
    assert "[bold]x[/bold]" in screen
    assert "\\x1b[31mred" in screen and "\\x1b]2;pwned\\x07t" in screen and "\\u202eevil" in screen
    assert tmux.tm("display-message", "-p", "-t", "t", "#{pane_title}") == title_before  # no OSC got through
    tmux.keys("C-q")
    tmux.wait("EXIT=0")
    assert os.path.exists(path)


def test_term_list_built_and_exported_at_80x24(tmux, tmp_path):
    from wordkin.demo_vectors import demo_path

    nb, out = tmp_path / "team.wkn", tmp_path / "lodging.txt"
    tmux.start("open", str(demo_path()), "--notebook", str(nb))
    tmux.wait("5,310 words")
    tmux.keys("F6")
    tmux.wait("no term lists yet")
    tmux.keys("n")
    tmux.wait("then Enter")
    # A key that moves the focus (here n, a pane key) is handled in the focused widget's turn; keys injected by
    # tmux before that turn still go to the old focus (Textual dispatches keys to the focus at arrival). Pane keys
    # are priority bindings, which closes this for pane switches; for n a person's pause is enough, and the test
    # types after one.
    time.sleep(1.0)
    for ch in "lodging: hotel inn":
        tmux.keys("-l", ch)
    tmux.keys("Enter")
    tmux.wait("candidates ·")
    end = time.monotonic() + 30
    rows: list[str] = []
    # The table may be drawn a moment after the message line, and its word column may still be narrow (hos…).
    while (len(rows) < 2 or any(r.endswith("…") for r in rows)) and time.monotonic() < end:
        screen = tmux.screen()
        lines = [ln.replace("█", " ").strip() for ln in screen.splitlines()]  # █: the focused table's edge
        rows = [ln.split()[1] for ln in lines if ln[:1].isdigit() and len(ln.split()) > 3]
        time.sleep(0.1)
    assert "lodging · 2 terms: hotel, inn" in screen, screen
    first, second = rows[0], rows[1]
    tmux.keys("k")  # keep the first candidate; the cursor stays on row 1, now the next word
    tmux.wait(f"3 terms: hotel, inn, {first}")
    time.sleep(1.0)  # as above: a person's pause before the next key
    tmux.keys("d")  # drop what moved up to row 1
    tmux.wait("dropped 1")
    tmux.keys("x")
    time.sleep(1.0)  # as above
    for ch in str(out):
        tmux.keys("-l", ch)
    tmux.keys("Enter")
    tmux.wait("exported 3 terms")
    text = out.read_text(encoding="utf-8")
    assert text.startswith("# wordkin term list: lodging\n")
    assert text.splitlines()[-1] == f"hotel, inn, {first}" and second not in text.splitlines()[-1]
    tmux.keys("C-q")
    tmux.wait("EXIT=0")


def test_every_pane_reachable_without_function_keys(tmux, tmp_path):
    from wordkin.demo_vectors import demo_path

    tmux.start("open", str(demo_path()), "--notebook", str(tmp_path / "nb.wkn"))
    tmux.wait("5,310 words")
    # Alt+letter (Esc then the letter, which every terminal and multiplexer passes on) opens each pane.
    marks = [
        ("M-s", "words to compare"),
        ("M-a", "paris - france + italy"),
        ("M-b", "notebook "),
        ("M-t", "no term lists yet"),
        ("M-o", "open with --against OLD"),
        ("M-k", "Ctrl+R runs the check-up"),
        ("M-n", "a word, then Enter"),
    ]
    for key, text in marks:
        tmux.keys(key)
        tmux.wait(text)
    tmux.keys("C-q")
    tmux.wait("EXIT=0")
