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
commits, never half of one).

Certificates.  A certificate directory is written under a hidden temporary name of its
own (``.<key>.<host>.<pid>.<token>.tmp``) outside any transaction; then, inside the
row's transaction, it is renamed to a name no row uses yet (``<key>``, or
``<key>.<token>`` when that exists) and the row pointing to it is committed.  A row
therefore always points to a complete directory, and the directory it pointed to
before is removed only after the commit.  A kill at any moment leaves at worst a
directory no row points to; :meth:`Store.sweep` (run when a batch starts, under the
write lock) removes those, and the temporary directories of processes that no longer
run on this host.

Claims.  Several processes may run batches on one store at once (the same batch or
different ones) and share the work: before an item goes to a worker, its process claims it
in the ``claims`` table (one transaction: the item still needs work, and no live claim of
another process is on it), so no item is computed twice.  A claim is a lease: its process
renews it every quarter of :data:`LEASE_SECONDS` and gives it back when the item is stored
(in the row's transaction) or the process stops; the claim of a process killed with
SIGKILL is taken over when it expires, or at once on the same host, where a dead process
id is seen.  Should a lease run out while its item is still being solved (a process stalled
for a minute), the item may be solved twice; the write lock orders the commits, the later
row and its certificate win, and nothing is lost.  This holds for processes on one machine
with the store on a local disk: SQLite's locks and write-ahead log do not work over a
network file system, so several machines share one batch through the Dask engine
(``--engine dask --scheduler ADDRESS``) run by one process that owns the store.
"""

from __future__ import annotations

import contextlib
import json
import os
import secrets
import shutil
import socket
import sqlite3
import threading
import time
from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal
from urllib.parse import quote

from exactsyn.batch.task import Outcome
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import path_problem

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

# Claims of items being solved (added to stores of the first schema version as they are opened
# for writing; a version that does not know the table ignores it).
_CLAIMS = """
CREATE TABLE IF NOT EXISTS claims (key TEXT PRIMARY KEY, owner TEXT NOT NULL, expires REAL NOT NULL) WITHOUT ROWID
"""

#: A claim lasts this long unless its process renews it (every LEASE_SECONDS / 4 while it runs).
LEASE_SECONDS = 60.0


State = tuple[str | None, str | None, int | None]
"""An item's stored ``(status, certificate, verified)``, ``None`` where there is no row."""


def _host() -> str:
    """This host's name as it may appear in a file name."""
    return "".join(c if c.isalnum() or c == "-" else "-" for c in socket.gethostname())[:40] or "host"


def _alive(pid: int) -> bool:
    """Is process ``pid`` running on this host?"""
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _live(owner: str, expires: float) -> bool:
    """Is a claim still held: not expired, and (on this host) its process still running?"""
    if expires <= time.time():
        return False
    host, _, rest = owner.partition(":")
    pid = rest.partition(":")[0]
    return host != _host() or not pid.isdigit() or _alive(int(pid))


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
    """An open results store.  Use as a context manager, or call :meth:`close`.

    ``create=False`` needs an existing store; ``readonly=True`` (the commands that only read:
    ``table``, ``report``) opens it read-only, so it is never created or changed.
    """

    def __init__(self, path: str | Path, *, create: bool = True, readonly: bool = False) -> None:
        self.path = Path(path)
        self.readonly = readonly
        self.owner = f"{_host()}:{os.getpid()}:{secrets.token_hex(4)}"  # whose claims are whose
        if self.path.exists() and not self.path.is_file():
            raise ExactsynError(f"results store {self.path} is not a file")
        if (readonly or not create) and not self.path.is_file():
            raise ExactsynError(f"no results store at {self.path}")
        if readonly and self.path.stat().st_size == 0:
            raise ExactsynError(f"{self.path} is an empty file, not a results store ('exactsyn batch' makes one)")
        if not readonly:
            self._check_folder()
        try:
            mode = self._open_with_retries(readonly)
        except sqlite3.DatabaseError as e:
            raise ExactsynError(f"{self.path} is not a usable results store: {e}") from None
        except OSError as e:
            raise ExactsynError(f"cannot open results store {self.path}: {path_problem(self.path, e)}") from None
        if str(mode).lower() != "wal":
            raise ExactsynError(f"results store {self.path}: the file system does not allow WAL mode")

    def _open_with_retries(self, readonly: bool) -> str:
        """Connect, switch to WAL and create the tables; returns the journal mode.

        Two processes opening a new store at once can get "database is locked" from the
        switch to WAL or the first schema write without SQLite's busy handler being asked
        (it is not, where waiting could deadlock); such an open is retried from the start
        for up to a minute."""
        deadline = time.monotonic() + 60
        attempt = 0
        while True:
            try:
                self._db = self._connect()
                self._db.row_factory = sqlite3.Row
                self._db.execute("PRAGMA busy_timeout = 60000")
                mode = "wal" if readonly else self._db.execute("PRAGMA journal_mode = WAL").fetchone()[0]
                self._db.execute("PRAGMA synchronous = NORMAL")
                self._init()
                return str(mode)
            except sqlite3.OperationalError as e:
                if "locked" not in str(e) or time.monotonic() > deadline:
                    raise
                with contextlib.suppress(sqlite3.Error):
                    self._db.close()
                attempt += 1
                time.sleep(min(0.5, 0.02 * attempt))

    def _check_folder(self) -> None:
        """The store's folder must exist and be writable (SQLite keeps its log files beside the store)."""
        folder = self.path.parent
        if not folder.is_dir():
            raise ExactsynError(
                f"cannot use results store {self.path}: the folder {folder} does not exist (create it first)"
            )
        probe = folder / f".{self.path.name}.probe-{os.getpid()}-{secrets.token_hex(4)}"
        try:  # a real write: permission bits do not tell (an administrator, a read-only mount)
            probe.touch(exist_ok=False)
            probe.unlink()
        except OSError as e:
            raise ExactsynError(
                f"cannot use results store {self.path}: its folder {folder} is not writable "
                f"({path_problem(folder, e)}; SQLite writes its log files beside the store, and certificates "
                "go there too); choose a store in a writable folder"
            ) from None

    def _connect(self) -> sqlite3.Connection:
        if not self.readonly:
            return sqlite3.connect(self.path, timeout=60, isolation_level=None)
        uri = f"file:{quote(str(self.path.resolve()))}?mode=ro"
        if not os.access(self.path.parent, os.W_OK):
            uri += "&immutable=1"  # no log files can be made there, so no writer can be at work either
        return sqlite3.connect(uri, uri=True, timeout=60, isolation_level=None)

    # ------------------------------------------------------------ life cycle
    def _init(self) -> None:
        tables = {r[0] for r in self._db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        if tables and "meta" not in tables:
            raise ExactsynError(f"{self.path} is an SQLite file but not an exactsyn results store")
        if not tables and self.readonly:
            raise ExactsynError(f"{self.path} holds no results store ('exactsyn batch' makes one)")
        if "meta" in tables:
            meta = dict(self._db.execute("SELECT name, value FROM meta").fetchall())
            if meta.get("format") != FORMAT:
                raise ExactsynError(f"{self.path} is an SQLite file but not an exactsyn results store")
            if meta.get("schema_version") != str(SCHEMA_VERSION):
                raise ExactsynError(f"results store schema {meta.get('schema_version')} is not supported")
            if not self.readonly and "claims" not in tables:
                self._db.execute(_CLAIMS)
            return
        with self.transaction():
            for statement in [*_SCHEMA.split(";"), _CLAIMS]:
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
        return _Transaction(self._db, self.path)

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
        """Store a completed item: its certificate and its row together (module docstring).

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
                self._db.execute("DELETE FROM claims WHERE key = ?", (outcome.key,))
            return
        staged = self._stage_certificate(outcome.key, outcome.files) if outcome.files else None
        placed: Path | None = None
        previous: str | None = None
        try:
            with self.transaction():
                old = self._db.execute("SELECT certificate FROM results WHERE key = ?", (outcome.key,)).fetchone()
                previous = old[0] if old else None
                if staged is not None:
                    placed = self._place(outcome.key, staged)
                    row["certificate"] = str(placed.relative_to(self.path.parent))
                else:
                    row["certificate"] = None
                self._put(row)
                self._db.execute("DELETE FROM claims WHERE key = ?", (outcome.key,))
        except BaseException:
            for d in (staged, placed):
                if d is not None:
                    shutil.rmtree(d, ignore_errors=True)
            raise
        if previous and previous != row["certificate"]:
            shutil.rmtree(self.certificate_path(previous), ignore_errors=True)

    def _stage_certificate(self, key: str, files: tuple[tuple[str, bytes], ...]) -> Path:
        """Write the files to a hidden directory of this process (outside any transaction)."""
        root = self.cert_root
        tmp = root / f".{key}.{_host()}.{os.getpid()}.{secrets.token_hex(4)}.tmp"
        try:
            tmp.mkdir(parents=True)
            for name, data in files:
                if Path(name).name != name or name.startswith("."):
                    raise ExactsynError(f"certificate file name {name!r} must be a plain name")
                (tmp / name).write_bytes(data)
        except OSError as e:
            shutil.rmtree(tmp, ignore_errors=True)
            raise ExactsynError(
                f"cannot write certificate of item {key[:16]} under {root}: {path_problem(tmp, e)}; "
                "the results stored so far are kept, re-run the same command to resume"
            ) from None
        return tmp

    def _place(self, key: str, staged: Path) -> Path:
        """Rename a staged directory to a name no row uses (inside the row's transaction)."""
        final = self.cert_root / key
        if final.exists():
            final = self.cert_root / f"{key}.{secrets.token_hex(4)}"
        try:
            staged.rename(final)
        except OSError as e:
            raise ExactsynError(f"cannot write certificate {final}: {path_problem(final, e)}") from None
        return final

    # ------------------------------------------------------------ claims
    def claim(self, keys: Sequence[str], needs_work: Callable[[str, State], bool]) -> dict[str, str]:
        """Claim items for this process, in one transaction: per key ``claimed``, ``finished`` (its
        row says no work is left) or ``held`` (another process has a live claim on it).

        ``needs_work(key, (status, certificate, verified))`` is asked about each item's stored
        row.  A claim is live until it expires (:data:`LEASE_SECONDS` after it was made or last
        renewed) or, on this host, until its process ends; a dead process's claim is taken over.
        """
        answers: dict[str, str] = {}
        with self.transaction():
            expires = time.time() + LEASE_SECONDS
            for key in keys:
                row = self._db.execute(
                    "SELECT status, certificate, verified FROM results WHERE key = ?", (key,)
                ).fetchone()
                if not needs_work(key, tuple(row) if row else (None, None, None)):
                    answers[key] = "finished"
                    continue
                held = self._db.execute("SELECT owner, expires FROM claims WHERE key = ?", (key,)).fetchone()
                if held is not None and held[0] != self.owner and _live(held[0], held[1]):
                    answers[key] = "held"
                    continue
                self._db.execute(
                    "INSERT OR REPLACE INTO claims (key, owner, expires) VALUES (?, ?, ?)", (key, self.owner, expires)
                )
                answers[key] = "claimed"
        return answers

    def release_claims(self) -> None:
        """Give back every claim of this process (the items it had not finished)."""
        with self.transaction():
            self._db.execute("DELETE FROM claims WHERE owner = ?", (self.owner,))

    def claims_kept(self) -> ClaimKeeper:
        """A context in which this process's claims are renewed, and given back at its end."""
        return ClaimKeeper(self)

    def sweep(self) -> int:
        """Remove certificate directories no row points to, and stale temporary ones; their count.

        Runs under the write lock, so no other process is between placing a directory
        and committing its row.  Temporary directories of processes still running on this
        host (or of other hosts) are kept.
        """
        root = self.cert_root
        if not root.is_dir():
            return 0
        removed = 0
        with self.transaction():
            used = {
                self.certificate_path(str(r[0])).resolve()
                for r in self._db.execute("SELECT certificate FROM results WHERE certificate IS NOT NULL")
            }
            for entry in root.iterdir():
                parts = entry.name.split(".")
                if entry.name.startswith(".") and entry.name.endswith(".tmp") and len(parts) == 6:
                    host, pid = parts[2], parts[3]
                    if host != _host() or not pid.isdigit() or _alive(int(pid)):
                        continue
                elif entry.name.startswith("."):
                    pass  # a temporary or old directory of the earlier single-writer scheme
                elif not entry.is_dir() or entry.resolve() in used:
                    continue
                shutil.rmtree(entry, ignore_errors=True)
                removed += 1
        return removed

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


class ClaimKeeper:
    """Renews the claims of one store's process every ``LEASE_SECONDS / 4`` from a thread of its own
    (with its own connection), and gives them all back when the block ends, also on Ctrl-C."""

    def __init__(self, store: Store) -> None:
        self.store = store
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._renew, name="exactsyn-claims", daemon=True)

    def __enter__(self) -> ClaimKeeper:
        self._thread.start()
        return self

    def __exit__(self, *exc: object) -> None:
        self._stop.set()
        self._thread.join(10)
        self.store.release_claims()

    def _renew(self) -> None:
        db = sqlite3.connect(self.store.path, timeout=60, isolation_level=None)
        try:
            while not self._stop.wait(LEASE_SECONDS / 4):
                try:
                    db.execute(
                        "UPDATE claims SET expires = ? WHERE owner = ?", (time.time() + LEASE_SECONDS, self.store.owner)
                    )
                except sqlite3.Error:
                    pass  # busy: the next round renews, well before the lease ends
        finally:
            db.close()


class _Transaction:
    """``BEGIN IMMEDIATE`` … ``COMMIT``, rolled back on any exception.

    An SQLite failure (a full disk, a read-only file, a lock held too long) becomes one
    :class:`ExactsynError` naming the store; what was committed before stays committed.
    """

    def __init__(self, db: sqlite3.Connection, path: Path) -> None:
        self._db = db
        self._path = path

    def __enter__(self) -> None:
        try:
            self._db.execute("BEGIN IMMEDIATE")
        except sqlite3.Error as e:
            raise self._fail(e) from None

    def __exit__(self, exc_type: object, exc: object, tb: object) -> Literal[False]:
        if exc_type is None:
            try:
                self._db.execute("COMMIT")
            except sqlite3.Error as e:
                self._rollback()
                raise self._fail(e) from None
            return False
        self._rollback()
        if isinstance(exc, sqlite3.Error):
            raise self._fail(exc) from None
        return False

    def _rollback(self) -> None:
        try:
            self._db.execute("ROLLBACK")
        except sqlite3.Error:
            pass  # nothing was begun, or SQLite rolled back already

    def _fail(self, e: sqlite3.Error) -> ExactsynError:
        return ExactsynError(
            f"cannot write results store {self._path}: {e}; the results stored before are kept, "
            "re-run the same command to resume"
        )
