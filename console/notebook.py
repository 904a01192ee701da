"""The notebook: an ordered list of saved queries with notes, one SQLite file per notebook.

Every save is committed (WAL, ``synchronous=FULL``) before it is reported; concurrent writers wait on a busy
timeout and retry. A file that is not a notebook, or is damaged, raises ``UnreadableFileError`` and is never
written to: it is first inspected through a read-only connection, and only a file that does not exist yet is
created. The schema version is SQLite's ``user_version``; ``MIGRATIONS`` brings older notebooks up to date.
"""

from __future__ import annotations

import json
import os
import sqlite3
import time
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from index.errors import UnreadableFileError, WordkinError
from index.results import CalcResult, NeighbourResult, SimilarityResult

APPLICATION_ID = 0x776B6E62  # "wknb"
SCHEMA_VERSION = 1
KINDS = ("neighbours", "arithmetic", "similarity")
SQLITE_MAGIC = b"SQLite format 3\x00"

MIGRATIONS: dict[int, list[str]] = {
    # version -> statements that bring a notebook of version-1 up to it
    1: [
        """CREATE TABLE entries (
            id INTEGER PRIMARY KEY AUTOINCREMENT,
            position REAL NOT NULL,
            kind TEXT NOT NULL CHECK (kind IN ('neighbours', 'arithmetic', 'similarity')),
            query TEXT NOT NULL,
            params TEXT NOT NULL,
            vector_set TEXT NOT NULL,
            result TEXT NOT NULL,
            note TEXT NOT NULL DEFAULT '',
            created TEXT NOT NULL,
            updated TEXT NOT NULL,
            deleted INTEGER NOT NULL DEFAULT 0
        )""",
        "CREATE INDEX entries_position ON entries (deleted, position)",
    ],
}


def default_path() -> Path:
    env = os.environ.get("WORDKIN_DATA")
    if env:
        return Path(env) / "notebook.wkn"
    from platformdirs import user_data_dir

    return Path(user_data_dir("wordkin", appauthor=False)) / "notebook.wkn"


def now() -> str:
    return datetime.now(UTC).isoformat(timespec="seconds")


@dataclass
class Entry:
    """One saved query. ``result`` holds the rows exactly as shown, plus kind-specific extras."""

    kind: str
    query: dict[str, Any]
    params: dict[str, Any]
    vector_set: dict[str, Any]
    result: dict[str, Any]
    note: str = ""
    id: int | None = None
    position: float = 0.0
    created: str = field(default_factory=now)
    updated: str = ""

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "position": self.position,
            "kind": self.kind,
            "query": self.query,
            "params": self.params,
            "vector_set": self.vector_set,
            "result": self.result,
            "note": self.note,
            "created": self.created,
            "updated": self.updated or self.created,
        }

    @classmethod
    def from_json(cls, d: dict[str, Any]) -> Entry:
        if d.get("kind") not in KINDS:
            raise ValueError(f"unknown entry kind {d.get('kind')!r}")
        return cls(
            kind=d["kind"],
            query=dict(d["query"]),
            params=dict(d["params"]),
            vector_set=dict(d["vector_set"]),
            result=dict(d["result"]),
            note=str(d.get("note", "")),
            id=d.get("id"),
            position=float(d.get("position", 0.0)),
            created=str(d["created"]),
            updated=str(d.get("updated", "")),
        )

    @property
    def title(self) -> str:
        if self.kind == "neighbours":
            return f"neighbours of {self.query['word']}"
        if self.kind == "arithmetic":
            return str(self.query["expression"])
        return "similarity of " + ", ".join(self.query["words"])


def vector_set_info(vs: Any) -> dict[str, Any]:
    return {
        "path": str(vs.source),
        "fingerprint": vs.fingerprint,
        "words": vs.n,
        "dims": vs.dims,
        "format": vs.format,
    }


def _rows(results: Any) -> list[dict[str, Any]]:
    return [{"rank": r.rank, "word": r.word, "similarity": r.similarity} for r in results]


def entry_from_result(res: Any, vs: Any, note: str = "") -> Entry:
    """The notebook entry for a result object of the engine."""
    info = vector_set_info(vs)
    if isinstance(res, NeighbourResult):
        return Entry(
            "neighbours",
            {"word": res.query},
            {"k": res.k, "top": res.top, "mode": res.mode},
            info,
            {"rows": _rows(res.results)},
            note,
        )
    if isinstance(res, CalcResult):
        extra: dict[str, Any] = {"rows": _rows(res.results), "excluded": list(res.excluded)}
        if res.target is not None:
            extra["target"] = {
                "word": res.target,
                "rank": res.target_rank,
                "similarity": res.target_similarity,
            }
        return Entry(
            "arithmetic",
            {"expression": res.expression},
            {
                "k": res.k,
                "method": res.method,
                "top": res.top,
                "mode": res.mode,
                "keep_inputs": not res.excluded,
            },
            info,
            extra,
            note,
        )
    if isinstance(res, SimilarityResult):
        return Entry(
            "similarity",
            {"words": list(res.words)},
            {},
            info,
            {
                "matrix": [list(r) for r in res.matrix],
                "odd_one_out": res.odd_one_out,
                "odd_scores": list(res.odd_scores),
                "pair_ranks": [list(r) for r in res.pair_ranks],
            },
            note,
        )
    raise WordkinError(f"cannot save a {type(res).__name__}")


def _create(path: Path) -> None:
    """Create an empty notebook at ``path`` atomically: built under a temporary name, then hard-linked into place,
    which fails if another process got there first (then theirs is used). A reader never sees a half-made file."""
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.new")
    try:
        con = sqlite3.connect(str(tmp), isolation_level=None)
        try:
            con.execute("PRAGMA journal_mode=WAL")
            nb = Notebook(tmp, con)
            nb._migrate(new=True)
            con.execute("PRAGMA wal_checkpoint(TRUNCATE)")
        finally:
            con.close()
        try:
            os.link(tmp, path)
        except FileExistsError:
            pass
    except OSError as exc:
        raise UnreadableFileError(str(path), f"cannot create the notebook: {exc.strerror or exc}") from None
    finally:
        for suffix in ("", "-wal", "-shm"):
            Path(str(tmp) + suffix).unlink(missing_ok=True)


def _check_existing(path: Path) -> None:
    """Raise unless ``path`` is a readable, undamaged wordkin notebook. Never writes to it."""
    try:
        with open(path, "rb") as f:
            head = f.read(100)
    except OSError as exc:
        raise UnreadableFileError(str(path), f"cannot read the notebook: {exc.strerror or exc}") from None
    if not head.startswith(SQLITE_MAGIC):
        raise UnreadableFileError(str(path), "is not a wordkin notebook (not an SQLite database); left untouched")
    app_id = int.from_bytes(head[68:72], "big")
    if app_id != APPLICATION_ID:
        raise UnreadableFileError(str(path), "is an SQLite database but not a wordkin notebook; left untouched")
    try:
        con = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True, timeout=10)
        try:
            ok = con.execute("PRAGMA quick_check").fetchone()[0]
            version = con.execute("PRAGMA user_version").fetchone()[0]
        finally:
            con.close()
    except sqlite3.DatabaseError as exc:
        raise UnreadableFileError(str(path), f"the notebook is damaged ({exc}); left untouched") from None
    if ok != "ok":
        raise UnreadableFileError(str(path), f"the notebook is damaged ({ok}); left untouched")
    if version > SCHEMA_VERSION:
        raise UnreadableFileError(str(path), f"was written by a newer wordkin (schema {version}); left untouched")


class Notebook:
    """A notebook file. Use ``Notebook.open(path)``; as a context manager it closes itself."""

    def __init__(self, path: Path, con: sqlite3.Connection) -> None:
        self.path = path
        self.con = con

    @classmethod
    def open(
        cls, path: str | os.PathLike[str] | None = None, *, create: bool = True, readonly: bool = False
    ) -> Notebook:
        p = Path(path) if path is not None else default_path()
        if not p.exists():
            if not create:
                raise UnreadableFileError(str(p), "no such notebook")
            _create(p)
        _check_existing(p)
        exists = True
        try:
            if readonly:
                con = sqlite3.connect(f"{p.resolve().as_uri()}?mode=ro", uri=True, timeout=30, isolation_level=None)
            else:
                con = sqlite3.connect(str(p), timeout=30, isolation_level=None)
                con.execute("PRAGMA journal_mode=WAL")
                con.execute("PRAGMA synchronous=FULL")
            con.execute("PRAGMA busy_timeout=30000")
            nb = cls(p, con)
            if not readonly:
                nb._migrate(new=not exists)
        except sqlite3.OperationalError as exc:
            raise UnreadableFileError(str(p), f"cannot open the notebook: {exc}") from None
        return nb

    def _migrate(self, new: bool) -> None:
        def step() -> None:
            version = self.con.execute("PRAGMA user_version").fetchone()[0]
            if new and version == 0:
                self.con.execute(f"PRAGMA application_id={APPLICATION_ID}")
            for v in range(version + 1, SCHEMA_VERSION + 1):
                for stmt in MIGRATIONS[v]:
                    self.con.execute(stmt)
                self.con.execute(f"PRAGMA user_version={v}")

        self._write(step)

    def _write(self, fn: Any) -> Any:
        """Run ``fn`` in one IMMEDIATE transaction, committed before returning; retries while another writer holds
        the lock beyond the busy timeout."""
        delay = 0.05
        for attempt in range(40):
            try:
                self.con.execute("BEGIN IMMEDIATE")
            except sqlite3.OperationalError as exc:
                if "locked" in str(exc) or "busy" in str(exc):
                    time.sleep(delay)
                    delay = min(1.0, delay * 2)
                    continue
                raise
            try:
                out = fn()
                self.con.execute("COMMIT")
                return out
            except sqlite3.OperationalError as exc:
                self.con.execute("ROLLBACK")
                raise WordkinError(f"{self.path}: nothing was saved ({exc}); the notebook is unchanged") from None
            except BaseException:
                self.con.execute("ROLLBACK")
                raise
            finally:
                _ = attempt
        raise WordkinError(f"{self.path}: the notebook stayed locked by another writer; nothing was saved")

    def close(self) -> None:
        self.con.close()

    def __enter__(self) -> Notebook:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # -- reading ---------------------------------------------------------------------------------------

    def entries(self, include_deleted: bool = False) -> list[Entry]:
        sql = "SELECT id, position, kind, query, params, vector_set, result, note, created, updated FROM entries"
        if not include_deleted:
            sql += " WHERE deleted = 0"
        rows = self.con.execute(sql + " ORDER BY position, id").fetchall()
        return [self._entry(r) for r in rows]

    def get(self, entry_id: int) -> Entry:
        r = self.con.execute(
            "SELECT id, position, kind, query, params, vector_set, result, note, created, updated FROM entries "
            "WHERE id = ?",
            (entry_id,),
        ).fetchone()
        if r is None:
            raise WordkinError(f"{self.path}: no entry {entry_id}")
        return self._entry(r)

    def _entry(self, r: tuple[Any, ...]) -> Entry:
        return Entry(
            id=r[0],
            position=r[1],
            kind=r[2],
            query=json.loads(r[3]),
            params=json.loads(r[4]),
            vector_set=json.loads(r[5]),
            result=json.loads(r[6]),
            note=r[7],
            created=r[8],
            updated=r[9],
        )

    # -- writing ---------------------------------------------------------------------------------------

    def add(self, e: Entry, *, keep_position: bool = False, keep_id: bool = False) -> int:
        """Append ``e`` (or, importing, keep its position and id); returns its id once committed to disk."""

        def step() -> int:
            pos = e.position
            if not keep_position:
                last = self.con.execute("SELECT MAX(position) FROM entries").fetchone()[0]
                pos = (last or 0.0) + 1.0
            cur = self.con.execute(
                "INSERT INTO entries (id, position, kind, query, params, vector_set, result, note, created, updated) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    e.id if keep_id else None,
                    pos,
                    e.kind,
                    _dump(e.query),
                    _dump(e.params),
                    _dump(e.vector_set),
                    _dump(e.result),
                    e.note,
                    e.created,
                    e.updated or e.created,
                ),
            )
            return int(cur.lastrowid or 0)

        e.id = self._write(step)
        return e.id

    def set_note(self, entry_id: int, note: str) -> None:
        self._write(
            lambda: self.con.execute("UPDATE entries SET note = ?, updated = ? WHERE id = ?", (note, now(), entry_id))
        )

    def delete(self, entry_id: int) -> None:
        """Soft delete: ``undelete`` brings it back (the console's undo)."""
        self._write(
            lambda: self.con.execute("UPDATE entries SET deleted = 1, updated = ? WHERE id = ?", (now(), entry_id))
        )

    def undelete(self, entry_id: int) -> None:
        self._write(
            lambda: self.con.execute("UPDATE entries SET deleted = 0, updated = ? WHERE id = ?", (now(), entry_id))
        )

    def move(self, entry_id: int, offset: int) -> None:
        """Move an entry ``offset`` places up (negative) or down (positive) in the order."""

        def step() -> None:
            ids = [
                r[0]
                for r in self.con.execute("SELECT id FROM entries WHERE deleted = 0 ORDER BY position, id").fetchall()
            ]
            if entry_id not in ids:
                return
            i = ids.index(entry_id)
            j = max(0, min(len(ids) - 1, i + offset))
            ids.insert(j, ids.pop(i))
            for pos, eid in enumerate(ids, 1):
                self.con.execute("UPDATE entries SET position = ? WHERE id = ?", (float(pos), eid))

        self._write(step)


def _dump(obj: Any) -> str:
    return json.dumps(obj, ensure_ascii=False, allow_nan=False)
