"""The results store: one SQLite file in WAL mode, plus a certificate directory beside it.

Tables

``results``
    one row per item (primary key: the item key of :func:`exactsyn.batch.task.item_key`):
    spec, library, objective, encoding, status (``done`` / ``timeout`` / ``failed``)
    with its reason, optimum or the interval ``[lower_bound, upper_bound]``, circuit
    (JSON gates), certificate location (relative to the store's folder), timings,
    solver statistics, tool version, worker, finish time.
``batches``
    one row per batch (a set of functions with one library and encoding), its
    description as JSON.
``members``
    which items make up a batch and with which weight (a class representative weighs
    its class size; see :mod:`exactsyn.batch.sets`).

Crash safety.  A row is written only when its item has completed, in one transaction
(``BEGIN IMMEDIATE`` … ``COMMIT``); SQLite's write-ahead log makes a transaction all or
nothing, also when the writing process is killed with SIGKILL (``synchronous=NORMAL``
keeps that guarantee against process death; only a power cut may lose the last
commits, never half of one).  The certificate directory is written first under a
temporary name and renamed into place, then the row is committed; a kill in between
leaves a certificate without a row, and the item is simply solved again on resume.
Only one process — the one running the batch — writes.
"""

from __future__ import annotations

import json
import shutil
import sqlite3
import time
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn.batch.task import Outcome
from exactsyn.errors import ExactsynError

FORMAT = "exactsyn-results"
SCHEMA_VERSION = 1

COLUMNS = (
    "key",
    "status",
    "reason",
    "source",
    "source_kind",
    "lines",
    "outputs",
    "care",
    "library",
    "preset",
    "max_controls",
    "objective",
    "encoding",
    "solver",
    "optimum",
    "lower_bound",
    "upper_bound",
    "circuit",
    "certificate",
    "verified",
    "seconds",
    "wall_seconds",
    "verify_seconds",
    "conflicts",
    "steps",
    "tool_version",
    "worker",
    "finished",
)

_SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (name TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS results (
    key TEXT PRIMARY KEY,
    status TEXT NOT NULL CHECK (status IN ('done', 'timeout', 'failed')),
    reason TEXT, source TEXT, source_kind TEXT,
    lines INTEGER, outputs TEXT, care TEXT,
    library TEXT, preset TEXT, max_controls INTEGER, objective TEXT, encoding TEXT, solver TEXT,
    optimum INTEGER, lower_bound INTEGER, upper_bound INTEGER, circuit TEXT,
    certificate TEXT, verified INTEGER,
    seconds REAL, wall_seconds REAL, verify_seconds REAL, conflicts INTEGER, steps TEXT,
    tool_version TEXT, worker TEXT, finished TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS batches (
    id TEXT PRIMARY KEY, description TEXT NOT NULL, created TEXT NOT NULL, updated TEXT NOT NULL,
    items INTEGER NOT NULL, weight INTEGER NOT NULL
);
CREATE TABLE IF NOT EXISTS members (
    batch TEXT NOT NULL, key TEXT NOT NULL, weight INTEGER NOT NULL, source TEXT,
    PRIMARY KEY (batch, key)
) WITHOUT ROWID;
"""


def _now() -> str:
    return time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime())


@dataclass(frozen=True)
class Member:
    key: str
    weight: int
    source: str = ""


@dataclass(frozen=True)
class BatchInfo:
    id: str
    description: dict[str, Any]
    created: str
    updated: str
    items: int
    weight: int


@dataclass(frozen=True)
class StatusCounts:
    """Items of one batch by status (``missing``: no row yet), unweighted and weighted."""

    items: dict[str, int]
    weight: dict[str, int]
    certificates: int

    def of(self, status: str) -> int:
        return self.items.get(status, 0)


class Store:
    """An open results store.  Use as a context manager, or call :meth:`close`."""

    def __init__(self, path: str | Path, *, create: bool = True) -> None:
        self.path = Path(path)
        if not create and not self.path.is_file():
            raise ExactsynError(f"no results store at {self.path}")
        if self.path.exists() and not self.path.is_file():
            raise ExactsynError(f"results store {self.path} is not a file")
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self._db = sqlite3.connect(self.path, timeout=60, isolation_level=None)
            self._db.row_factory = sqlite3.Row
            self._db.execute("PRAGMA busy_timeout = 60000")
            mode = self._db.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            self._db.execute("PRAGMA synchronous = NORMAL")
            self._init()
        except sqlite3.DatabaseError as e:
            raise ExactsynError(f"{self.path} is not a usable results store: {e}") from None
        except OSError as e:
            raise ExactsynError(f"cannot open results store {self.path}: {e.strerror}") from None
        if str(mode).lower() != "wal":
            raise ExactsynError(f"results store {self.path}: the file system does not allow WAL mode")

    # ------------------------------------------------------------ life cycle
    def _init(self) -> None:
        tables = {r[0] for r in self._db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        if tables and "meta" not in tables:
            raise ExactsynError(f"{self.path} is an SQLite file but not an exactsyn results store")
        if "meta" in tables:
            meta = dict(self._db.execute("SELECT name, value FROM meta").fetchall())
            if meta.get("format") != FORMAT:
                raise ExactsynError(f"{self.path} is an SQLite file but not an exactsyn results store")
            if meta.get("schema_version") != str(SCHEMA_VERSION):
                raise ExactsynError(f"results store schema {meta.get('schema_version')} is not supported")
            return
        with self.transaction():
            for statement in _SCHEMA.split(";"):
                if statement.strip():
                    self._db.execute(statement)
            self._db.executemany(
                "INSERT OR IGNORE INTO meta (name, value) VALUES (?, ?)",
                [("format", FORMAT), ("schema_version", str(SCHEMA_VERSION)), ("created", _now())],
            )

    def close(self) -> None:
        self._db.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def transaction(self) -> _Transaction:
        return _Transaction(self._db)

    @property
    def cert_root(self) -> Path:
        """``<store>.certs/`` beside the store file."""
        return self.path.with_name(self.path.name + ".certs")

    def certificate_path(self, location: str) -> Path:
        """The directory of a stored certificate location (relative to the store's folder)."""
        return self.path.parent / location

    # ------------------------------------------------------------ batches
    def register_batch(
        self,
        batch_id: str,
        description: dict[str, Any],
        members: Iterable[Member],
        failures: Iterable[dict[str, Any]] = (),
        forget: Iterable[str] = (),
    ) -> None:
        """Record a batch and its members in one transaction (idempotent on re-runs).

        ``failures`` are rows of items that failed before any work (an unreadable spec
        file); ``forget`` are keys of such rows that no longer apply (the file reads now).
        """
        rows = list(members)
        with self.transaction():
            now = _now()
            old = self._db.execute("SELECT created FROM batches WHERE id = ?", (batch_id,)).fetchone()
            self._db.execute(
                "INSERT OR REPLACE INTO batches (id, description, created, updated, items, weight) "
                "VALUES (?, ?, ?, ?, ?, ?)",
                (
                    batch_id,
                    json.dumps(description, sort_keys=True),
                    old[0] if old else now,
                    now,
                    len(rows),
                    sum(m.weight for m in rows),
                ),
            )
            self._db.execute("DELETE FROM members WHERE batch = ?", (batch_id,))
            self._db.executemany(
                "INSERT INTO members (batch, key, weight, source) VALUES (?, ?, ?, ?)",
                [(batch_id, m.key, m.weight, m.source) for m in rows],
            )
            for key in forget:
                self._db.execute("DELETE FROM results WHERE key = ? AND status = 'failed'", (key,))
            for row in failures:
                self._put(row)

    def batches(self) -> list[BatchInfo]:
        """Every batch, the most recently run last."""
        out = []
        for r in self._db.execute("SELECT * FROM batches ORDER BY updated, created, id"):
            out.append(
                BatchInfo(r["id"], json.loads(r["description"]), r["created"], r["updated"], r["items"], r["weight"])
            )
        return out

    def batch(self, prefix: str | None = None) -> BatchInfo:
        """The batch whose id starts with ``prefix``, or the most recently run one."""
        all_batches = self.batches()
        if not all_batches:
            raise ExactsynError(f"results store {self.path} holds no batch yet")
        if prefix is None:
            return all_batches[-1]
        hits = [b for b in all_batches if b.id.startswith(prefix)]
        if len(hits) != 1:
            what = "no batch" if not hits else f"{len(hits)} batches"
            raise ExactsynError(f"{what} in {self.path} with an id starting {prefix!r}")
        return hits[0]

    def member_states(self, batch_id: str) -> dict[str, tuple[str | None, str | None, int | None]]:
        """``key -> (status, certificate, verified)`` (None where unknown) for every member of a batch."""
        cur = self._db.execute(
            "SELECT m.key, r.status, r.certificate, r.verified FROM members m LEFT JOIN results r ON r.key = m.key "
            "WHERE m.batch = ?",
            (batch_id,),
        )
        return {k: (s, c, v) for k, s, c, v in cur}

    def counts(self, batch_id: str) -> StatusCounts:
        items: dict[str, int] = {}
        weight: dict[str, int] = {}
        cur = self._db.execute(
            "SELECT coalesce(r.status, 'missing'), count(*), sum(m.weight), count(r.certificate) "
            "FROM members m LEFT JOIN results r ON r.key = m.key WHERE m.batch = ? GROUP BY 1",
            (batch_id,),
        )
        certs = 0
        for status, n, w, c in cur:
            items[status], weight[status] = n, w
            certs += c
        return StatusCounts(items, weight, certs)

    def batch_rows(self, batch_id: str) -> Iterator[dict[str, Any]]:
        """Every member of a batch with its weight and its result columns (None if missing)."""
        cols = ", ".join(f"r.{c}" for c in COLUMNS if c != "key")
        cur = self._db.execute(
            f"SELECT m.key AS key, m.weight AS weight, m.source AS member_source, {cols} "
            "FROM members m LEFT JOIN results r ON r.key = m.key WHERE m.batch = ? ORDER BY m.key",
            (batch_id,),
        )
        for r in cur:
            yield dict(r)

    # ------------------------------------------------------------ results
    def get(self, key: str) -> dict[str, Any] | None:
        r = self._db.execute("SELECT * FROM results WHERE key = ?", (key,)).fetchone()
        return None if r is None else dict(r)

    def record(self, outcome: Outcome) -> None:
        """Store a completed item: certificate directory first, then its row in one transaction.

        A ``check`` outcome updates only the verification columns (and the status, if
        the certificate was rejected) of the existing row.
        """
        row = dict(outcome.row)
        if outcome.work == "check":
            cols = [c for c in row if c in COLUMNS and c != "key"]
            if not cols:
                return
            with self.transaction():
                self._db.execute(
                    f"UPDATE results SET {', '.join(f'{c} = ?' for c in cols)} WHERE key = ?",
                    [row[c] for c in cols] + [outcome.key],
                )
            return
        final = self.cert_root / outcome.key
        if outcome.files:
            self._write_certificate(outcome.key, outcome.files)
            row["certificate"] = str(final.relative_to(self.path.parent))
        else:
            row["certificate"] = None
        with self.transaction():
            self._put(row)
        if not outcome.files and final.exists():
            shutil.rmtree(final, ignore_errors=True)

    def _put(self, row: dict[str, Any]) -> None:
        row = dict(row)
        row.setdefault("finished", _now())
        unknown = set(row) - set(COLUMNS)
        if unknown:
            raise ValueError(f"unknown result columns {sorted(unknown)}")
        cols = [c for c in COLUMNS if c in row]
        self._db.execute(
            f"INSERT OR REPLACE INTO results ({', '.join(cols)}) VALUES ({', '.join('?' * len(cols))})",
            [row[c] for c in cols],
        )

    def _write_certificate(self, key: str, files: tuple[tuple[str, bytes], ...]) -> None:
        root = self.cert_root
        final, tmp, old = root / key, root / f".{key}.tmp", root / f".{key}.old"
        try:
            shutil.rmtree(tmp, ignore_errors=True)
            tmp.mkdir(parents=True)
            for name, data in files:
                if Path(name).name != name:
                    raise ExactsynError(f"certificate file name {name!r} must be a plain name")
                (tmp / name).write_bytes(data)
            if final.exists():
                shutil.rmtree(old, ignore_errors=True)
                final.rename(old)
            tmp.rename(final)
            shutil.rmtree(old, ignore_errors=True)
        except OSError as e:
            raise ExactsynError(f"cannot write certificate {final}: {e.strerror}") from None

    def read_certificate(self, location: str) -> tuple[tuple[str, bytes], ...] | None:
        """The files of a stored certificate, or None if it is not (fully) on disk."""
        d = self.certificate_path(location)
        try:
            files = tuple((p.name, p.read_bytes()) for p in sorted(d.iterdir()) if p.is_file())
        except OSError:
            return None
        return files if any(name == "result.json" for name, _ in files) else None

    def integrity(self) -> str:
        return str(self._db.execute("PRAGMA integrity_check").fetchone()[0])


class _Transaction:
    """``BEGIN IMMEDIATE`` … ``COMMIT``, rolled back on any exception."""

    def __init__(self, db: sqlite3.Connection) -> None:
        self._db = db

    def __enter__(self) -> None:
        self._db.execute("BEGIN IMMEDIATE")

    def __exit__(self, exc_type: object, *rest: object) -> None:
        if exc_type is None:
            self._db.execute("COMMIT")
        else:
            self._db.execute("ROLLBACK")
