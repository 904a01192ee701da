"""The notebook: an ordered list of saved queries with notes, one SQLite file per notebook.

Every save is committed (WAL, ``synchronous=FULL``) before it is reported; concurrent writers wait on a busy
timeout and retry. A file that is not a notebook, or is damaged, raises ``UnreadableFileError`` and is never
written to: it is first inspected through a read-only connection, and only a file that does not exist yet is
created. The schema version is SQLite's ``user_version``; ``MIGRATIONS`` brings older notebooks up to date.
"""

from __future__ import annotations

import contextlib
import json
import os
import sqlite3
import time
import uuid
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from wordkin.console.store.legacy_v1 import upgrade_v1
from wordkin.index import locations
from wordkin.index.errors import UnreadableFileError, WordkinError
from wordkin.index.kinds import Query, Result, query_from_json, result_from_json

COLUMNS = "id, position, kind, query, vector_set, result, note, created, updated"

APPLICATION_ID = 0x776B6E62  # "wknb"
SCHEMA_VERSION = 3
SQLITE_MAGIC = b"SQLite format 3\x00"


def _upgrade_entries_v2(con: sqlite3.Connection) -> None:
    """Version 2 stores each entry's whole query value and its result as the engine writes them (the kind's
    CHECK list is gone: kinds come from the registry). Version-1 rows are converted by ``legacy``."""
    con.execute(
        """CREATE TABLE entries_v2 (
            id INTEGER PRIMARY KEY AUTOINCREMENT,
            position REAL NOT NULL,
            kind TEXT NOT NULL,
            query TEXT NOT NULL,
            vector_set TEXT NOT NULL,
            result TEXT NOT NULL,
            note TEXT NOT NULL DEFAULT '',
            created TEXT NOT NULL,
            updated TEXT NOT NULL,
            deleted INTEGER NOT NULL DEFAULT 0
        )"""
    )
    rows = con.execute(
        "SELECT id, position, kind, query, params, vector_set, result, note, created, updated, deleted FROM entries"
    ).fetchall()
    for r in rows:
        query, result = upgrade_v1(r["kind"], json.loads(r["query"]), json.loads(r["params"]), json.loads(r["result"]))
        con.execute(
            "INSERT INTO entries_v2 (id, position, kind, query, vector_set, result, note, created, updated, deleted) "
            "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (
                r["id"],
                r["position"],
                r["kind"],
                _dump(query),
                r["vector_set"],
                _dump(result),
                r["note"],
                r["created"],
                r["updated"],
                r["deleted"],
            ),
        )
    con.execute("DROP TABLE entries")
    con.execute("ALTER TABLE entries_v2 RENAME TO entries")
    con.execute("CREATE INDEX entries_position ON entries (deleted, position)")


#: version -> steps (SQL statements or functions of the connection) that bring a notebook of version-1 up to it.
#: Never edit an old version; add one.
MIGRATIONS: dict[int, list[str | Callable[[sqlite3.Connection], None]]] = {
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
    2: [_upgrade_entries_v2],
    # Term lists (console/terms.py): a list, its decisions (appended, never edited) and the last candidates shown.
    3: [
        """CREATE TABLE term_lists (
            id INTEGER PRIMARY KEY AUTOINCREMENT,
            name TEXT NOT NULL UNIQUE,
            seeds TEXT NOT NULL,
            vector_set TEXT NOT NULL DEFAULT '{}',
            created TEXT NOT NULL,
            updated TEXT NOT NULL
        )""",
        """CREATE TABLE term_decisions (
            id INTEGER PRIMARY KEY AUTOINCREMENT,
            list_id INTEGER NOT NULL REFERENCES term_lists (id),
            word TEXT NOT NULL,
            state TEXT NOT NULL CHECK (state IN ('kept', 'dropped', 'aside')),
            note TEXT NOT NULL DEFAULT '',
            score REAL,
            support INTEGER,
            fingerprint TEXT NOT NULL DEFAULT '',
            decided TEXT NOT NULL,
            by TEXT NOT NULL DEFAULT '',
            undone INTEGER NOT NULL DEFAULT 0
        )""",
        "CREATE INDEX term_decisions_list ON term_decisions (list_id, undone, id)",
        """CREATE TABLE term_shown (
            list_id INTEGER NOT NULL REFERENCES term_lists (id),
            word TEXT NOT NULL,
            score REAL NOT NULL,
            support INTEGER NOT NULL,
            PRIMARY KEY (list_id, word)
        )""",
    ],
}


def now() -> str:
    return datetime.now(UTC).isoformat(timespec="seconds")


@dataclass
class Entry:
    """One saved query: the query value, its result as shown, the vector set that answered it and a note."""

    query: Query
    result: Result
    vector_set: dict[str, Any]
    note: str = ""
    id: int | None = None
    position: float = 0.0
    created: str = field(default_factory=now)
    updated: str = ""

    @classmethod
    def of(cls, result: Result, vs: Any, note: str = "") -> Entry:
        """The entry that saves ``result`` (answered by vector set ``vs``)."""
        return cls(result.query, result, vector_set_info(vs), note)

    @property
    def kind(self) -> str:
        return self.query.kind

    @property
    def title(self) -> str:
        return self.query.title()

    def to_json(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "position": self.position,
            "kind": self.kind,
            "query": self.query.to_json(),
            "result": self.result.to_json(),
            "vector_set": self.vector_set,
            "note": self.note,
            "created": self.created,
            "updated": self.updated or self.created,
        }

    @classmethod
    def from_json(cls, d: dict[str, Any]) -> Entry:
        """An entry as ``to_json`` wrote it; ``ValueError`` (or ``KeyError``/``TypeError``) when it is not one."""
        if not isinstance(d, dict):
            raise ValueError("an entry must be an object")
        query = query_from_json(d["query"])
        if d.get("kind", query.kind) != query.kind:
            raise ValueError(f"entry kind {d.get('kind')!r} does not match its query ({query.kind})")
        if not isinstance(d["result"], dict) or not isinstance(d.get("vector_set", {}), dict):
            raise ValueError("result and vector_set must be objects")
        return cls(
            query=query,
            result=result_from_json(query, d["result"]),
            vector_set=dict(d.get("vector_set", {})),
            note=str(d.get("note", "")),
            id=d.get("id"),
            position=float(d.get("position", 0.0)),
            created=str(d["created"]),
            updated=str(d.get("updated", "")),
        )


def vector_set_info(vs: Any) -> dict[str, Any]:
    return {
        "path": str(vs.source),
        "fingerprint": vs.fingerprint,
        "words": vs.n,
        "dims": vs.dims,
        "format": vs.format,
    }


def _create(path: Path) -> None:
    """Create an empty notebook at ``path`` atomically: built under a temporary name, then hard-linked into place,
    which fails if another process got there first (then theirs is used). A reader never sees a half-made file."""
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.{uuid.uuid4().hex[:8]}.new")  # unique per thread too
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
        p = Path(path) if path is not None else locations.notebook_path()
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
            con.row_factory = sqlite3.Row
            nb = cls(p, con)
            if not readonly:
                nb._migrate(new=not exists)
        except sqlite3.OperationalError as exc:
            raise UnreadableFileError(str(p), f"cannot open the notebook: {exc}") from None
        return nb

    def _migrate(self, new: bool) -> None:
        with self.transaction() as con:
            version = con.execute("PRAGMA user_version").fetchone()[0]
            if new and version == 0:
                con.execute(f"PRAGMA application_id={APPLICATION_ID}")
            for v in range(version + 1, SCHEMA_VERSION + 1):
                for stmt in MIGRATIONS[v]:
                    if isinstance(stmt, str):
                        con.execute(stmt)
                    else:
                        stmt(con)
                con.execute(f"PRAGMA user_version={v}")

    @contextlib.contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """One IMMEDIATE transaction around the ``with`` block, committed (on disk, ``synchronous=FULL``) when the
        block ends and rolled back if it raises. Waits while another writer holds the lock beyond the busy
        timeout; a database error inside becomes a one-line "nothing was saved"."""
        self._begin()
        try:
            yield self.con
        except sqlite3.OperationalError as exc:
            self.con.execute("ROLLBACK")
            raise WordkinError(f"{self.path}: nothing was saved ({exc}); the notebook is unchanged") from None
        except BaseException:
            self.con.execute("ROLLBACK")
            raise
        self.con.execute("COMMIT")

    def _begin(self) -> None:
        delay = 0.05
        for _ in range(40):
            try:
                self.con.execute("BEGIN IMMEDIATE")
                return
            except sqlite3.OperationalError as exc:
                if "locked" not in str(exc) and "busy" not in str(exc):
                    raise
                time.sleep(delay)
                delay = min(1.0, delay * 2)
        raise WordkinError(f"{self.path}: the notebook stayed locked by another writer; nothing was saved")

    def close(self) -> None:
        self.con.close()

    def __enter__(self) -> Notebook:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # -- reading ---------------------------------------------------------------------------------------

    def entries(self, include_deleted: bool = False) -> list[Entry]:
        sql = f"SELECT {COLUMNS} FROM entries"
        if not include_deleted:
            sql += " WHERE deleted = 0"
        rows = self.con.execute(sql + " ORDER BY position, id").fetchall()
        return [self._entry(r) for r in rows]

    def get(self, entry_id: int) -> Entry:
        r = self.con.execute(
            f"SELECT {COLUMNS} FROM entries WHERE id = ?",
            (entry_id,),
        ).fetchone()
        if r is None:
            raise WordkinError(f"{self.path}: no entry {entry_id}")
        return self._entry(r)

    def _entry(self, r: sqlite3.Row) -> Entry:
        try:
            query = query_from_json(json.loads(r["query"]))
            return Entry(
                id=r["id"],
                position=r["position"],
                query=query,
                result=result_from_json(query, json.loads(r["result"])),
                vector_set=json.loads(r["vector_set"]),
                note=r["note"],
                created=r["created"],
                updated=r["updated"],
            )
        except (KeyError, TypeError, ValueError) as exc:
            raise UnreadableFileError(str(self.path), f"entry {r['id']} is damaged ({exc}); left untouched") from None

    # -- writing ---------------------------------------------------------------------------------------

    def add(self, e: Entry, *, keep_position: bool = False, keep_id: bool = False) -> int:
        """Append ``e`` (or, importing, keep its position and id); returns its id once committed to disk."""

        with self.transaction() as con:
            pos = e.position
            if not keep_position:
                last = con.execute("SELECT MAX(position) FROM entries").fetchone()[0]
                pos = (last or 0.0) + 1.0
            cur = con.execute(
                "INSERT INTO entries (id, position, kind, query, vector_set, result, note, created, updated) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    e.id if keep_id else None,
                    pos,
                    e.kind,
                    _dump(e.query.to_json()),
                    _dump(e.vector_set),
                    _dump(e.result.to_json()),
                    e.note,
                    e.created,
                    e.updated or e.created,
                ),
            )
        e.id = int(cur.lastrowid or 0)
        return e.id

    def set_note(self, entry_id: int, note: str) -> None:
        with self.transaction() as con:
            con.execute("UPDATE entries SET note = ?, updated = ? WHERE id = ?", (note, now(), entry_id))

    def delete(self, entry_id: int) -> None:
        """Soft delete: ``undelete`` brings it back (the console's undo)."""
        with self.transaction() as con:
            con.execute("UPDATE entries SET deleted = 1, updated = ? WHERE id = ?", (now(), entry_id))

    def undelete(self, entry_id: int) -> None:
        with self.transaction() as con:
            con.execute("UPDATE entries SET deleted = 0, updated = ? WHERE id = ?", (now(), entry_id))

    def move(self, entry_id: int, offset: int) -> None:
        """Move an entry ``offset`` places up (negative) or down (positive) in the order."""

        with self.transaction() as con:
            ids = [r["id"] for r in con.execute("SELECT id FROM entries WHERE deleted = 0 ORDER BY position, id")]
            if entry_id not in ids:
                return
            i = ids.index(entry_id)
            j = max(0, min(len(ids) - 1, i + offset))
            ids.insert(j, ids.pop(i))
            for pos, eid in enumerate(ids, 1):
                con.execute("UPDATE entries SET position = ? WHERE id = ?", (float(pos), eid))


def _dump(obj: Any) -> str:
    return json.dumps(obj, ensure_ascii=False, allow_nan=False)
