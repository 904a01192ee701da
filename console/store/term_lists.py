"""Term lists in the notebook file: a name, seed words, and a decision per word with who made it and when.

A decision is one of three states, in plain words: **kept** (the word belongs in the list), **dropped** (it does
not) and **aside** (looked at, not yet decided: it stops being suggested and waits for a later look). Each
decision records the note, the score and support the word had in the last suggestion shown for the list, the
vector set (fingerprint) that suggestion came from, the time and the user. Decisions are appended, never edited:
the current state of a word is its latest decision that was not undone, and undo marks the latest one undone.
Every change is one committed transaction (``Notebook.transaction``) before it is reported.
"""

from __future__ import annotations

import getpass
import json
import os
import sqlite3
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from wordkin.console.store.notebook import Notebook, now
from wordkin.index.errors import UsageError
from wordkin.index.kinds import TermsResult, TermSuggest

STATES = ("kept", "dropped", "aside")

#: The tables are created by notebook schema 3 (``notebook.MIGRATIONS``).


@dataclass(frozen=True)
class Decision:
    word: str
    state: str
    note: str = ""
    score: float | None = None
    support: int | None = None
    fingerprint: str = ""
    decided: str = ""
    by: str = ""
    undone: bool = False

    def to_json(self) -> dict[str, Any]:
        return {
            "word": self.word,
            "state": self.state,
            "note": self.note,
            "score": self.score,
            "support": self.support,
            "fingerprint": self.fingerprint,
            "decided": self.decided,
            "by": self.by,
            "undone": self.undone,
        }

    @classmethod
    def from_json(cls, d: dict[str, Any]) -> Decision:
        if d.get("state") not in STATES:
            raise ValueError(f"unknown decision {d.get('state')!r}")
        return cls(
            str(d["word"]),
            str(d["state"]),
            str(d.get("note", "")),
            None if d.get("score") is None else float(d["score"]),
            None if d.get("support") is None else int(d["support"]),
            str(d.get("fingerprint", "")),
            str(d["decided"]),
            str(d.get("by", "")),
            bool(d.get("undone", False)),
        )


@dataclass(frozen=True)
class TermList:
    """A term list as stored: ``history`` holds every decision, oldest first, undone ones included."""

    name: str
    seeds: tuple[str, ...]
    created: str
    updated: str
    vector_set: dict[str, Any] = field(default_factory=dict)
    history: tuple[Decision, ...] = ()
    id: int | None = None

    @property
    def current(self) -> dict[str, Decision]:
        """Each decided word's latest decision that was not undone, in the order the words were decided."""
        out: dict[str, Decision] = {}
        for d in self.history:
            if not d.undone:
                out.pop(d.word, None)
                out[d.word] = d
        return out

    def words(self, state: str) -> tuple[str, ...]:
        return tuple(w for w, d in self.current.items() if d.state == state)

    @property
    def kept(self) -> tuple[str, ...]:
        return self.words("kept")

    @property
    def dropped(self) -> tuple[str, ...]:
        return self.words("dropped")

    @property
    def aside(self) -> tuple[str, ...]:
        return self.words("aside")

    @property
    def terms(self) -> tuple[str, ...]:
        """The list's terms: the seeds, then the kept words."""
        return self.seeds + tuple(w for w in self.kept if w not in self.seeds)

    def query(self, **options: Any) -> TermSuggest:
        """The suggestion query for the list's current state."""
        return TermSuggest(self.name, self.seeds, self.kept, self.dropped, self.aside, **options)

    def to_json(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "seeds": list(self.seeds),
            "created": self.created,
            "updated": self.updated,
            "vector_set": self.vector_set,
            "terms": list(self.terms),
            "kept": list(self.kept),
            "dropped": list(self.dropped),
            "aside": list(self.aside),
            "decisions": [d.to_json() for d in self.history],
        }

    @classmethod
    def from_json(cls, d: dict[str, Any]) -> TermList:
        seeds = d["seeds"]
        if not isinstance(seeds, list) or not all(isinstance(w, str) for w in seeds) or not seeds:
            raise ValueError("seeds must be a non-empty list of words")
        vs = d.get("vector_set", {})
        if not isinstance(vs, dict):
            raise ValueError("vector_set must be an object")
        return cls(
            str(d["name"]),
            tuple(seeds),
            str(d["created"]),
            str(d["updated"]),
            vs,
            tuple(Decision.from_json(x) for x in d.get("decisions", [])),
        )


def user() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return os.environ.get("USER", "")


def _check_name(name: str) -> str:
    name = name.strip()
    if not name:
        raise UsageError("a term list needs a name")
    if len(name) > 200:
        raise UsageError("a term list's name is at most 200 characters")
    return name


LIST_COLUMNS = "id, name, seeds, vector_set, created, updated"
DECISION_COLUMNS = "word, state, note, score, support, fingerprint, decided, by, undone"


def _row(con: sqlite3.Connection, path: Path, name: str) -> sqlite3.Row:
    r: sqlite3.Row | None = con.execute(f"SELECT {LIST_COLUMNS} FROM term_lists WHERE name = ?", (name,)).fetchone()
    if r is None:
        known = [x["name"] for x in con.execute("SELECT name FROM term_lists ORDER BY name")]
        hint = f"; the lists are: {', '.join(known)}" if known else "; it has none yet (`wordkin terms new`)"
        raise UsageError(f"{path} has no term list named {name!r}{hint}")
    return r


def _decision(r: sqlite3.Row) -> Decision:
    fields = {c: r[c] for c in DECISION_COLUMNS.split(", ")}
    return Decision(**{**fields, "undone": bool(fields["undone"])})


def _load(con: sqlite3.Connection, r: sqlite3.Row) -> TermList:
    hist = con.execute(
        f"SELECT {DECISION_COLUMNS} FROM term_decisions WHERE list_id = ? ORDER BY id", (r["id"],)
    ).fetchall()
    return TermList(
        r["name"],
        tuple(json.loads(r["seeds"])),
        r["created"],
        r["updated"],
        json.loads(r["vector_set"]),
        tuple(_decision(h) for h in hist),
        r["id"],
    )


def _name_taken(con: sqlite3.Connection, path: Path, name: str) -> None:
    if con.execute("SELECT 1 FROM term_lists WHERE name = ?", (name,)).fetchone():
        raise UsageError(f"{path} already has a term list named {name!r}")


def get_list(nb: Notebook, name: str) -> TermList:
    return _load(nb.con, _row(nb.con, nb.path, name))


def all_lists(nb: Notebook) -> list[TermList]:
    rows = nb.con.execute(f"SELECT {LIST_COLUMNS} FROM term_lists ORDER BY name").fetchall()
    return [_load(nb.con, r) for r in rows]


def create_list(nb: Notebook, name: str, seeds: list[str], *, created: str | None = None) -> TermList:
    """A new list; a usage error if ``name`` is taken or there are no seeds."""
    name = _check_name(name)
    words = list(dict.fromkeys(w for w in seeds if w))
    if not words:
        raise UsageError("a term list needs at least one seed word")
    when = created or now()
    with nb.transaction() as con:
        _name_taken(con, nb.path, name)
        con.execute(
            "INSERT INTO term_lists (name, seeds, created, updated) VALUES (?, ?, ?, ?)",
            (name, json.dumps(words, ensure_ascii=False), when, when),
        )
    return get_list(nb, name)


def rename_list(nb: Notebook, old: str, new: str) -> None:
    new = _check_name(new)
    with nb.transaction() as con:
        list_id = _row(con, nb.path, old)["id"]
        if new != old:
            _name_taken(con, nb.path, new)
        con.execute("UPDATE term_lists SET name = ?, updated = ? WHERE id = ?", (new, now(), list_id))


def record_shown(nb: Notebook, result: TermsResult, vector_set: dict[str, Any]) -> None:
    """Remember the candidates just shown for the list (the score and support a decision will record)."""
    with nb.transaction() as con:
        list_id = _row(con, nb.path, result.query.name)["id"]
        con.execute("DELETE FROM term_shown WHERE list_id = ?", (list_id,))
        con.executemany(
            "INSERT INTO term_shown (list_id, word, score, support) VALUES (?, ?, ?, ?)",
            [(list_id, c.word, c.score, c.support) for c in result.rows],
        )
        con.execute(
            "UPDATE term_lists SET vector_set = ? WHERE id = ?", (json.dumps(vector_set, ensure_ascii=False), list_id)
        )


@dataclass(frozen=True)
class Outcome:
    """What a decision call did: ``changed`` words got the new state; the others are reported, not duplicated."""

    changed: tuple[str, ...] = ()
    already: tuple[str, ...] = ()
    seeds: tuple[str, ...] = ()

    def message(self, state: str) -> str:
        parts = []
        if self.changed:
            parts.append(f"{state}: {', '.join(self.changed)}")
        if self.already:
            parts.append(f"already {state}: {', '.join(self.already)}")
        if self.seeds:
            parts.append(f"seeds of the list, left as they are: {', '.join(self.seeds)}")
        return "; ".join(parts) or "nothing to do"


def decide(nb: Notebook, name: str, words: list[str], state: str, *, note: str = "", by: str | None = None) -> Outcome:
    """Record ``state`` for ``words`` in one transaction."""
    if state not in STATES:
        raise UsageError(f"a decision is one of {', '.join(STATES)}, not {state!r}")
    who = user() if by is None else by

    with nb.transaction() as con:
        r = _row(con, nb.path, name)
        tl = _load(con, r)
        current = tl.current
        shown = {
            x["word"]: (x["score"], x["support"])
            for x in con.execute("SELECT word, score, support FROM term_shown WHERE list_id = ?", (r["id"],))
        }
        fingerprint = str(tl.vector_set.get("fingerprint", ""))
        changed, already, seeds = [], [], []
        when = now()
        for w in dict.fromkeys(words):
            if w in tl.seeds:
                seeds.append(w)
                continue
            if w in current and current[w].state == state:
                already.append(w)
                continue
            score, support = shown.get(w, (None, None))
            con.execute(
                "INSERT INTO term_decisions (list_id, word, state, note, score, support, fingerprint, decided, by) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (r["id"], w, state, note, score, support, fingerprint, when, who),
            )
            changed.append(w)
        if changed:
            con.execute("UPDATE term_lists SET updated = ? WHERE id = ?", (when, r["id"]))
    return Outcome(tuple(changed), tuple(already), tuple(seeds))


def undo(nb: Notebook, name: str) -> Decision | None:
    """Undo the list's latest decision that is not undone yet; returns it (None when there is none)."""
    with nb.transaction() as con:
        list_id = _row(con, nb.path, name)["id"]
        r = con.execute(
            f"SELECT id, {DECISION_COLUMNS} FROM term_decisions WHERE list_id = ? AND undone = 0 "
            "ORDER BY id DESC LIMIT 1",
            (list_id,),
        ).fetchone()
        if r is None:
            return None
        con.execute("UPDATE term_decisions SET undone = 1 WHERE id = ?", (r["id"],))
        con.execute("UPDATE term_lists SET updated = ? WHERE id = ?", (now(), list_id))
    return _decision(r)


def import_list(nb: Notebook, tl: TermList) -> None:
    """Add a list read from a JSON export, with its whole history, times and users as they were."""
    with nb.transaction() as con:
        _name_taken(con, nb.path, tl.name)
        cur = con.execute(
            "INSERT INTO term_lists (name, seeds, vector_set, created, updated) VALUES (?, ?, ?, ?, ?)",
            (
                tl.name,
                json.dumps(list(tl.seeds), ensure_ascii=False),
                json.dumps(tl.vector_set, ensure_ascii=False),
                tl.created,
                tl.updated,
            ),
        )
        con.executemany(
            "INSERT INTO term_decisions (list_id, word, state, note, score, support, fingerprint, decided, by, undone)"
            " VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            [
                (cur.lastrowid, d.word, d.state, d.note, d.score, d.support, d.fingerprint, d.decided, d.by, d.undone)
                for d in tl.history
            ],
        )
