"""The project file: one SQLite database per evaluation engagement.

Every change is one transaction committed at once, so there is no "unsaved" state and a
crash loses nothing that was confirmed. Raw tables are stored columnar (a Parquet blob per
wave) beside the original source bytes and their SHA-256. The file is opened in exclusive
locking mode so a second process gets a clear message instead of a half-shared file.
"""

from __future__ import annotations

import hashlib
import importlib
import io
import json
import os
import sqlite3
import threading
from collections.abc import Callable, Iterator
from contextlib import contextmanager, suppress
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from core.codebook import Codebook
from core.errors import ProjectError

SCHEMA_VERSION = 2
APPLICATION_ID = 0x504C4354  # "PLCT": lets `file` and we ourselves recognise the format
SUFFIX = ".plaincount"

DEFAULT_SETTINGS: dict[str, Any] = {
    "min_cell": 5,  # small-cell threshold: counts below it are hidden (0 = off)
    "unstable_base": 30,  # percentages of groups smaller than this are flagged as unstable
    "missing_threshold": 5.0,  # % missing above which an item is marked
    "author": "",
    "checks": {},  # cleaning-check settings (core.checks.CheckSettings as JSON)
}

_SCHEMA = """
CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE instruments (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    codebook TEXT NOT NULL,
    created TEXT NOT NULL
);
CREATE TABLE waves (
    id INTEGER PRIMARY KEY,
    instrument_id INTEGER NOT NULL REFERENCES instruments(id),
    label TEXT NOT NULL,
    position INTEGER NOT NULL,
    source_name TEXT NOT NULL,
    source_bytes BLOB NOT NULL,
    source_sha256 TEXT NOT NULL,
    source_codec TEXT NOT NULL DEFAULT '',
    source_size INTEGER,
    raw_table BLOB NOT NULL,
    raw_sha256 TEXT NOT NULL,
    n_rows INTEGER NOT NULL,
    n_columns INTEGER NOT NULL,
    import_report TEXT NOT NULL,
    settings TEXT NOT NULL,
    created TEXT NOT NULL,
    UNIQUE (instrument_id, label)
);
CREATE TABLE ledger (
    id INTEGER PRIMARY KEY,
    wave_id INTEGER NOT NULL REFERENCES waves(id),
    action TEXT NOT NULL,
    respondent TEXT,
    row INTEGER,
    variables TEXT NOT NULL,
    old_value TEXT,
    new_value TEXT,
    check_name TEXT,
    reason TEXT NOT NULL,
    scope TEXT NOT NULL DEFAULT 'cell',
    batch TEXT,
    withdraws INTEGER,  -- entry withdrawn (positive) or re-activated (negative, redo)
    created TEXT NOT NULL,
    author TEXT NOT NULL
);
CREATE INDEX ledger_wave ON ledger(wave_id);
CREATE TABLE rules (
    id INTEGER PRIMARY KEY,
    instrument_id INTEGER NOT NULL REFERENCES instruments(id),
    text TEXT NOT NULL,
    active INTEGER NOT NULL DEFAULT 1,
    created TEXT NOT NULL
);
CREATE TABLE history (
    id INTEGER PRIMARY KEY,
    kind TEXT NOT NULL,
    label TEXT NOT NULL,
    payload TEXT NOT NULL,
    state TEXT NOT NULL DEFAULT 'done',
    created TEXT NOT NULL
);
CREATE TABLE outline (
    id INTEGER PRIMARY KEY,
    position INTEGER NOT NULL,
    title TEXT NOT NULL,
    spec TEXT NOT NULL,
    finding TEXT NOT NULL DEFAULT '',
    created TEXT NOT NULL
);
"""

# One function per schema step: MIGRATIONS[n] takes a version-n file to version n+1.
MIGRATIONS: dict[int, Callable[[sqlite3.Connection], None]] = {}


def _v1_to_v2(conn: sqlite3.Connection) -> None:
    # Version 2 may store the source file compressed; version-1 rows stay as they were.
    conn.execute("ALTER TABLE waves ADD COLUMN source_codec TEXT NOT NULL DEFAULT ''")
    conn.execute("ALTER TABLE waves ADD COLUMN source_size INTEGER")


MIGRATIONS[1] = _v1_to_v2

# Source files are kept zstd-compressed: survey exports shrink several-fold, so the project
# file stays small enough to e-mail and the import writes far less to disk.
SOURCE_CODEC = "zstd"


def now() -> str:
    return datetime.now(UTC).isoformat(timespec="seconds")


@dataclass(frozen=True)
class Instrument:
    id: int
    name: str


@dataclass(frozen=True)
class Wave:
    id: int
    instrument_id: int
    label: str
    position: int
    source_name: str
    source_sha256: str
    raw_sha256: str
    n_rows: int
    n_columns: int
    import_report: dict[str, Any]
    settings: dict[str, Any]
    created: str


@dataclass(frozen=True)
class Changes:
    """What one mutation touched, so views can refresh only those parts."""

    instrument_ids: frozenset[int] = frozenset()
    wave_ids: frozenset[int] = frozenset()
    variables: frozenset[str] = frozenset()
    codebook: bool = False
    ledger: bool = False
    rules: bool = False
    outline: bool = False
    structure: bool = False  # instruments or waves added or removed
    settings: bool = False
    version: int = 0


# Undo handlers by history kind: fn(project, payload, undo) -> Changes. Filled by the
# modules that own each kind (codebook edits here, ledger decisions in core.ledger).
UNDO_HANDLERS: dict[str, Callable[[Project, dict[str, Any], bool], Changes]] = {}
# Where each kind's handler lives, so undo works even before that module was imported.
HANDLER_MODULES = {"ledger": "core.ledger", "outline": "core.outline", "rules": "core.rules"}


def table_to_parquet(frame: pd.DataFrame) -> bytes:
    """Columnar, compressed and lossless for the dtypes a raw table uses."""
    sink = io.BytesIO()
    pq.write_table(pa.Table.from_pandas(frame, preserve_index=False), sink, compression="zstd")
    return sink.getvalue()


def table_from_parquet(blob: bytes) -> pd.DataFrame:
    return pq.read_table(pa.BufferReader(blob)).to_pandas()


def sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


class Project:
    """An open ``.plaincount`` file. Use :meth:`create` or :meth:`open`; close when done."""

    def __init__(self, path: Path, conn: sqlite3.Connection) -> None:
        self.path = path
        self._conn = conn
        self._lock = threading.RLock()
        self._raw_cache: dict[int, pd.DataFrame] = {}
        self._derived_cache: dict[tuple[Any, ...], Any] = {}
        self.listeners: list[Callable[[Changes], None]] = []

    # ----------------------------------------------------------- opening and closing
    @classmethod
    def create(cls, path: str | os.PathLike[str], name: str | None = None) -> Project:
        """Create a new, empty project file. Refuses to overwrite an existing file."""
        path = Path(path)
        if path.exists():
            raise ProjectError(f"{path.name} already exists; choose another name.")
        if not path.parent.exists():
            raise ProjectError(f"The folder {path.parent} does not exist.")
        tmp = path.with_name(path.name + ".creating")
        tmp.unlink(missing_ok=True)
        try:
            conn = sqlite3.connect(tmp, isolation_level=None)
            conn.execute(f"PRAGMA application_id = {APPLICATION_ID}")
            conn.executescript("BEGIN;" + _SCHEMA + "COMMIT;")
            settings = dict(DEFAULT_SETTINGS)
            with _tx(conn):
                conn.executemany(
                    "INSERT INTO meta(key, value) VALUES (?, ?)",
                    [
                        ("schema_version", str(SCHEMA_VERSION)),
                        ("name", name or path.stem),
                        ("created", now()),
                        ("version", "0"),
                        ("settings", json.dumps(settings)),
                    ],
                )
            conn.close()
        except sqlite3.Error as exc:
            tmp.unlink(missing_ok=True)
            raise ProjectError(f"Could not create {path.name}: {exc}.") from None
        os.replace(tmp, path)
        return cls.open(path)

    @classmethod
    def open(cls, path: str | os.PathLike[str]) -> Project:
        """Open an existing project, migrating older schema versions forward."""
        path = Path(path)
        if not path.exists():
            raise ProjectError(f"There is no file at {path}.")
        if path.is_dir():
            raise ProjectError(f"{path} is a folder, not a project file.")
        if not os.access(path, os.R_OK):
            raise ProjectError(f"{path.name} cannot be read: check its permissions.")
        if not os.access(path, os.W_OK) or not os.access(path.parent, os.W_OK):
            raise ProjectError(
                f"{path.name} is read-only (or its folder is). Plaincount saves every change "
                "at once, so it needs to write to the file. Copy it somewhere writable, or "
                "change its permissions, and open it again."
            )
        with open(path, "rb") as fh:
            head = fh.read(16)
        if head != b"SQLite format 3\x00":
            raise ProjectError(
                f"{path.name} is not a Plaincount project file. To bring in survey data, use "
                "Import instead."
            )
        try:
            conn = sqlite3.connect(path, isolation_level=None, check_same_thread=False, timeout=0.2)
            conn.execute("PRAGMA locking_mode = EXCLUSIVE")
            conn.execute("PRAGMA synchronous = NORMAL")
            conn.execute("PRAGMA foreign_keys = ON")
            # Take the write lock now and keep it: a second process is refused at once.
            conn.execute("BEGIN EXCLUSIVE")
            conn.execute("COMMIT")
        except sqlite3.OperationalError as exc:
            if "locked" in str(exc) or "busy" in str(exc):
                raise ProjectError(
                    f"{path.name} is open in another Plaincount window or program. Close it "
                    "there first; the file has not been changed."
                ) from None
            raise ProjectError(f"{path.name} cannot be opened: {exc}.") from None
        except sqlite3.DatabaseError:
            raise ProjectError(f"{path.name} is damaged or is not a Plaincount project.") from None
        try:
            version = _schema_version(conn, path)
            if version > SCHEMA_VERSION:
                raise ProjectError(
                    f"{path.name} was saved by a newer Plaincount (file version {version}; "
                    f"this program reads up to {SCHEMA_VERSION}). Update Plaincount to open "
                    "it; the file has not been changed."
                )
            # Only now switch to WAL: turning it on rewrites the file header, and a file that
            # is not ours (or is too new) must be left byte for byte as it was.
            conn.execute("PRAGMA journal_mode = WAL")
            while version < SCHEMA_VERSION:
                with _tx(conn):
                    MIGRATIONS[version](conn)
                    version += 1
                    conn.execute(
                        "UPDATE meta SET value = ? WHERE key = 'schema_version'", (str(version),)
                    )
        except BaseException:
            conn.close()
            raise
        return cls(path, conn)

    def close(self) -> None:
        with self._lock:
            if self._conn is not None:
                with suppress(sqlite3.Error):
                    self._conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
                self._conn.close()
                self._conn = None  # type: ignore[assignment]

    @property
    def closed(self) -> bool:
        return self._conn is None

    def __enter__(self) -> Project:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def save_copy(self, target: str | os.PathLike[str]) -> Path:
        """Write a consistent copy of the whole project to ``target`` (a version to keep)."""
        target = Path(target)
        if target.resolve() == self.path.resolve():
            raise ProjectError("Choose a different file name for the copy.")
        tmp = target.with_name(target.name + ".copying")
        tmp.unlink(missing_ok=True)
        with self._lock:
            dest = sqlite3.connect(tmp)
            try:
                self._conn.backup(dest)
                dest.execute("PRAGMA journal_mode = DELETE")
            finally:
                dest.close()
        os.replace(tmp, target)
        return target

    # ----------------------------------------------------------- transactions
    @contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """One atomic unit of change: all of it is committed, or none of it."""
        with self._lock:
            if self._conn is None:
                raise ProjectError("The project is closed.")
            with _tx(self._conn):
                yield self._conn
                self._conn.execute(
                    "UPDATE meta SET value = CAST(value AS INTEGER) + 1 WHERE key = 'version'"
                )

    def query(self, sql: str, params: tuple[Any, ...] | list[Any] = ()) -> list[sqlite3.Row]:
        with self._lock:
            if self._conn is None:
                raise ProjectError("The project is closed.")
            cur = self._conn.execute(sql, params)
            cur.row_factory = sqlite3.Row  # type: ignore[assignment]
            return cur.fetchall()

    def notify(self, changes: Changes) -> Changes:
        """Stamp ``changes`` with the new version and tell listeners (views) about it."""
        stamped = Changes(**{**changes.__dict__, "version": self.version})
        for listener in list(self.listeners):
            listener(stamped)
        return stamped

    @property
    def version(self) -> int:
        """Increases with every committed change; caches key on it."""
        return int(self._meta("version"))

    def _meta(self, key: str) -> str:
        rows = self.query("SELECT value FROM meta WHERE key = ?", (key,))
        if not rows:
            raise ProjectError(f"The project file lacks its {key!r} entry.")
        return rows[0][0]

    # ----------------------------------------------------------- name and settings
    @property
    def name(self) -> str:
        return self._meta("name")

    def settings(self) -> dict[str, Any]:
        return {**DEFAULT_SETTINGS, **json.loads(self._meta("settings"))}

    def update_settings(self, **changes: Any) -> Changes:
        unknown = set(changes) - set(DEFAULT_SETTINGS)
        if unknown:
            raise ProjectError(f"Unknown project settings: {', '.join(sorted(unknown))}.")
        merged = {**self.settings(), **changes}
        with self.transaction() as conn:
            conn.execute("UPDATE meta SET value = ? WHERE key = 'settings'", (json.dumps(merged),))
        return self.notify(Changes(settings=True))

    # ----------------------------------------------------------- instruments
    def instruments(self) -> list[Instrument]:
        rows = self.query("SELECT id, name FROM instruments ORDER BY id")
        return [Instrument(r["id"], r["name"]) for r in rows]

    def instrument(self, name_or_id: str | int) -> Instrument:
        col = "id" if isinstance(name_or_id, int) else "name"
        rows = self.query(f"SELECT id, name FROM instruments WHERE {col} = ?", (name_or_id,))
        if not rows:
            raise ProjectError(f"The project has no instrument {name_or_id!r}.")
        return Instrument(rows[0]["id"], rows[0]["name"])

    def add_instrument(self, name: str, codebook: Codebook | None = None) -> Instrument:
        name = name.strip()
        if not name:
            raise ProjectError("An instrument needs a name.")
        if any(i.name == name for i in self.instruments()):
            raise ProjectError(f"The project already has an instrument called {name!r}.")
        with self.transaction() as conn:
            cur = conn.execute(
                "INSERT INTO instruments(name, codebook, created) VALUES (?, ?, ?)",
                (name, (codebook or Codebook()).dumps(), now()),
            )
            inst = Instrument(int(cur.lastrowid), name)
        self.notify(Changes(instrument_ids=frozenset({inst.id}), structure=True))
        return inst

    def codebook(self, instrument_id: int) -> Codebook:
        key = ("codebook", instrument_id, self.version)
        if key not in self._derived_cache:
            rows = self.query("SELECT codebook FROM instruments WHERE id = ?", (instrument_id,))
            if not rows:
                raise ProjectError(f"The project has no instrument number {instrument_id}.")
            self._derived_cache[key] = Codebook.loads(rows[0][0])
        return self._derived_cache[key]

    def set_codebook(
        self,
        instrument_id: int,
        codebook: Codebook,
        label: str = "Change the codebook",
        record: bool = True,
    ) -> Changes:
        """Replace the codebook in one transaction, recording an undoable history step."""
        before = self.codebook(instrument_id)
        changed = {v.name for v in codebook if before.get(v.name) != v}
        changed |= {v.name for v in before if v.name not in codebook}
        with self.transaction() as conn:
            conn.execute(
                "UPDATE instruments SET codebook = ? WHERE id = ?",
                (codebook.dumps(), instrument_id),
            )
            if record:
                self._record_history(
                    conn,
                    "codebook",
                    label,
                    {
                        "instrument_id": instrument_id,
                        "before": before.to_json(),
                        "after": codebook.to_json(),
                    },
                )
        return self.notify(
            Changes(
                instrument_ids=frozenset({instrument_id}),
                wave_ids=frozenset(w.id for w in self.waves(instrument_id)),
                variables=frozenset(changed),
                codebook=True,
            )
        )

    # ----------------------------------------------------------- waves
    def waves(self, instrument_id: int | None = None) -> list[Wave]:
        sql = "SELECT * FROM waves"
        params: tuple[Any, ...] = ()
        if instrument_id is not None:
            sql += " WHERE instrument_id = ?"
            params = (instrument_id,)
        rows = self.query(
            sql.replace("*", _WAVE_COLUMNS) + " ORDER BY instrument_id, position", params
        )
        return [_wave(r) for r in rows]

    def wave(self, wave_id: int) -> Wave:
        rows = self.query(f"SELECT {_WAVE_COLUMNS} FROM waves WHERE id = ?", (wave_id,))
        if not rows:
            raise ProjectError(f"The project has no wave number {wave_id}.")
        return _wave(rows[0])

    def find_wave(self, label: str | None = None, instrument: str | int | None = None) -> Wave:
        """The wave with this label (and instrument); with no label, the only or latest wave."""
        waves = self.waves(self.instrument(instrument).id if instrument is not None else None)
        if label is not None:
            waves = [w for w in waves if w.label == label]
            if not waves:
                raise ProjectError(f"The project has no wave labelled {label!r}.")
            if len(waves) > 1:
                raise ProjectError(f"Several instruments have a wave {label!r}; name one.")
            return waves[0]
        if not waves:
            raise ProjectError("The project has no data yet: import a survey export first.")
        return waves[-1]

    def add_wave(
        self,
        instrument_id: int,
        label: str,
        source_name: str,
        source_bytes: bytes,
        raw: pd.DataFrame,
        import_report: dict[str, Any] | None = None,
        codebook: Codebook | None = None,
        raw_blob: bytes | None = None,
    ) -> Wave:
        """Store a new wave (and optionally the instrument's new codebook) atomically.

        ``raw_blob`` is ``table_to_parquet(raw)`` when the caller has already made it (import
        makes it on another thread while it infers the codebook).
        """
        label = label.strip()
        if not label:
            raise ProjectError("A wave needs a label, such as the year.")
        if any(w.label == label for w in self.waves(instrument_id)):
            raise ProjectError(f"This instrument already has a wave labelled {label!r}.")
        blob = raw_blob if raw_blob is not None else table_to_parquet(raw)
        packed = pa.compress(source_bytes, codec=SOURCE_CODEC, asbytes=True)
        with self.transaction() as conn:
            (position,) = conn.execute(
                "SELECT COALESCE(MAX(position), 0) + 1 FROM waves WHERE instrument_id = ?",
                (instrument_id,),
            ).fetchone()
            cur = conn.execute(
                "INSERT INTO waves(instrument_id, label, position, source_name, source_bytes, "
                "source_sha256, source_codec, source_size, raw_table, raw_sha256, n_rows, "
                "n_columns, import_report, settings, created) "
                "VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)",
                (
                    instrument_id,
                    label,
                    position,
                    source_name,
                    packed,
                    sha256(source_bytes),
                    SOURCE_CODEC,
                    len(source_bytes),
                    blob,
                    sha256(blob),
                    len(raw),
                    raw.shape[1],
                    json.dumps(import_report or {}, default=str),
                    json.dumps({"population": True}),
                    now(),
                ),
            )
            wave_id = int(cur.lastrowid)
            if codebook is not None:
                conn.execute(
                    "UPDATE instruments SET codebook = ? WHERE id = ?",
                    (codebook.dumps(), instrument_id),
                )
        self._raw_cache[wave_id] = raw
        self.notify(
            Changes(
                instrument_ids=frozenset({instrument_id}),
                wave_ids=frozenset({wave_id}),
                codebook=codebook is not None,
                structure=True,
            )
        )
        return self.wave(wave_id)

    def raw_table(self, wave_id: int) -> pd.DataFrame:
        """The wave's raw table exactly as imported, after checking its SHA-256.

        The returned frame is shared; never modify it (copy first).
        """
        if wave_id not in self._raw_cache:
            rows = self.query("SELECT raw_table, raw_sha256 FROM waves WHERE id = ?", (wave_id,))
            if not rows:
                raise ProjectError(f"The project has no wave number {wave_id}.")
            blob, digest = rows[0]
            if sha256(blob) != digest:
                raise ProjectError(
                    "The stored raw data of this wave no longer matches its recorded "
                    "fingerprint (SHA-256): the file has been damaged. Re-import the source "
                    "file into a new project."
                )
            self._raw_cache[wave_id] = table_from_parquet(blob)
        return self._raw_cache[wave_id]

    def source_file(self, wave_id: int) -> tuple[str, bytes]:
        """The original source file's name and bytes, exactly as imported (hash-checked)."""
        rows = self.query(
            "SELECT source_name, source_bytes, source_codec, source_size, source_sha256 "
            "FROM waves WHERE id = ?",
            (wave_id,),
        )
        if not rows:
            raise ProjectError(f"The project has no wave number {wave_id}.")
        name, stored, codec, size, digest = rows[0]
        data = bytes(stored)
        if codec:
            data = pa.decompress(data, decompressed_size=size, codec=codec, asbytes=True)
        if sha256(data) != digest:
            raise ProjectError(
                "The stored copy of this wave's source file no longer matches its recorded "
                "fingerprint (SHA-256): the project file has been damaged."
            )
        return name, data

    def update_wave_settings(self, wave_id: int, **changes: Any) -> Changes:
        merged = {**self.wave(wave_id).settings, **changes}
        with self.transaction() as conn:
            conn.execute(
                "UPDATE waves SET settings = ? WHERE id = ?", (json.dumps(merged), wave_id)
            )
        return self.notify(Changes(wave_ids=frozenset({wave_id}), settings=True))

    def cached(self, key: tuple[Any, ...], compute: Callable[[], Any]) -> Any:
        """Memoise derived data (working data, tables) on ``key`` plus the project version."""
        return self.memo((*key, self.version), compute)

    def memo(self, full: tuple[Any, ...], compute: Callable[[], Any]) -> Any:
        """Memoise on exactly ``full``: the caller's key must say what the value depends on."""
        with self._lock:
            if full not in self._derived_cache:
                if len(self._derived_cache) > 256:
                    self._derived_cache.clear()
                self._derived_cache[full] = compute()
            return self._derived_cache[full]

    # ----------------------------------------------------------- undo history
    def _record_history(
        self, conn: sqlite3.Connection, kind: str, label: str, payload: dict[str, Any]
    ) -> None:
        # A new action forgets what was undone after it, as every editor does.
        conn.execute("DELETE FROM history WHERE state = 'undone'")
        conn.execute(
            "INSERT INTO history(kind, label, payload, state, created) VALUES (?,?,?,?,?)",
            (kind, label, json.dumps(payload, default=str), "done", now()),
        )

    def record_history(self, kind: str, label: str, payload: dict[str, Any]) -> None:
        """For core modules that commit their own change first; see :data:`UNDO_HANDLERS`."""
        with self.transaction() as conn:
            self._record_history(conn, kind, label, payload)

    def history(self) -> list[dict[str, Any]]:
        """Every recorded action, oldest first, with its state ('done' or 'undone')."""
        rows = self.query("SELECT id, kind, label, state, created FROM history ORDER BY id")
        return [dict(r) for r in rows]

    def undo_label(self) -> str | None:
        rows = self.query("SELECT label FROM history WHERE state='done' ORDER BY id DESC LIMIT 1")
        return rows[0][0] if rows else None

    def redo_label(self) -> str | None:
        rows = self.query("SELECT label FROM history WHERE state='undone' ORDER BY id LIMIT 1")
        return rows[0][0] if rows else None

    def undo(self) -> Changes | None:
        return self._step("done", "undone", "DESC", undo=True)

    def redo(self) -> Changes | None:
        return self._step("undone", "done", "ASC", undo=False)

    def _step(self, state: str, new_state: str, order: str, undo: bool) -> Changes | None:
        with self._lock:
            rows = self.query(
                f"SELECT id, kind, payload FROM history WHERE state = ? ORDER BY id {order} "
                "LIMIT 1",
                (state,),
            )
            if not rows:
                return None
            hid, kind, payload = rows[0]
            if kind not in UNDO_HANDLERS and kind in HANDLER_MODULES:
                importlib.import_module(HANDLER_MODULES[kind])  # registers its handler
            handler = UNDO_HANDLERS.get(kind)
            if handler is None:
                raise ProjectError(f"This project records a step of unknown kind {kind!r}.")
            changes = handler(self, json.loads(payload), undo)
            with self.transaction() as conn:
                conn.execute("UPDATE history SET state = ? WHERE id = ?", (new_state, hid))
            return self.notify(changes)


def _undo_codebook(project: Project, payload: dict[str, Any], undo: bool) -> Changes:
    target = Codebook.from_json(payload["before" if undo else "after"])
    return project.set_codebook(payload["instrument_id"], target, record=False)


UNDO_HANDLERS["codebook"] = _undo_codebook

_WAVE_COLUMNS = (
    "id, instrument_id, label, position, source_name, source_sha256, raw_sha256, n_rows, "
    "n_columns, import_report, settings, created"
)


def _wave(row: sqlite3.Row) -> Wave:
    data = dict(row)
    data["import_report"] = json.loads(data["import_report"])
    data["settings"] = json.loads(data["settings"])
    return Wave(**data)


@contextmanager
def _tx(conn: sqlite3.Connection) -> Iterator[None]:
    conn.execute("BEGIN IMMEDIATE")
    try:
        yield
    except BaseException:
        conn.execute("ROLLBACK")
        raise
    conn.execute("COMMIT")


def _schema_version(conn: sqlite3.Connection, path: Path) -> int:
    try:
        row = conn.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    except sqlite3.DatabaseError:
        row = None
    if row is None:
        raise ProjectError(
            f"{path.name} is a database but not a Plaincount project; it has not been changed."
        )
    return int(row[0])
