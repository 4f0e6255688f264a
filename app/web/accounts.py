"""The signed-in account and the data version, read for many requests at once on one thread.

Every request that carries a session cookie needs its account (active? which role? is the
session still current?) and the database's data version (the key of every kept answer). Read
one request at a time in the thread pool, each read costs a thread hand-off and a statement,
and under load those hand-offs fight the event loop for the interpreter lock. Here the event
loop hands each read to one thread of the reader's own, which takes every read waiting and
answers them all with one statement (``WHERE id IN (...)``) and one call back into each waiting
loop.

A read is never answered from an older statement: the thread takes the waiting reads first and
runs the statement after, so every answer was read after its request asked. Deactivating an
account, changing its role or ending its sessions therefore takes effect on the next request, as
before, and a page kept under the version read here is never older than that version.

The thread starts at the first read and ends after IDLE_SECONDS without one, so an application
that stops serving (or a test's) leaves no thread behind for long.
"""

from __future__ import annotations

import asyncio
import threading
from collections import defaultdict

from sqlalchemy import Engine, bindparam, text

from .trail_guard import DATA_VERSION_SQL

IDLE_SECONDS = 5.0

_STATEMENTS = {
    dialect: text(
        "SELECT id, name, role, active, session_generation, "
        f"{version} AS data_version FROM user_account WHERE id IN :ids"
    ).bindparams(bindparam("ids", expanding=True))
    for dialect, version in DATA_VERSION_SQL.items()
}


class AccountReader:
    """``await reader.read(user_id)``: that account's row (id, name, role, active,
    session_generation, data_version), or None when there is no such account."""

    def __init__(self, engine: Engine, idle_seconds: float = IDLE_SECONDS):
        self._engine = engine
        self._idle_seconds = idle_seconds
        self._lock = threading.Lock()
        self._asked = threading.Condition(self._lock)
        self._waiting: list[tuple[int, asyncio.Future]] = []
        self._thread: threading.Thread | None = None

    async def read(self, user_id: int):
        future = asyncio.get_running_loop().create_future()
        with self._lock:
            self._waiting.append((user_id, future))
            if self._thread is None:
                self._thread = threading.Thread(target=self._serve, name="clampdown-accounts", daemon=True)
                self._thread.start()
            else:
                self._asked.notify()
        return await future

    def read_here(self, user_id: int):
        """The same read on the calling thread (a worker thread, never the event loop)."""
        return self._query([user_id]).get(user_id)

    def _serve(self) -> None:
        while True:
            with self._lock:
                if not self._waiting:
                    self._asked.wait(self._idle_seconds)
                if not self._waiting:
                    self._thread = None
                    return
                batch, self._waiting = self._waiting, []
            self._answer(batch)

    def _answer(self, batch: list[tuple[int, asyncio.Future]]) -> None:
        rows, error = None, None
        try:
            rows = self._query(sorted({user_id for user_id, _ in batch}))
        except Exception as exc:  # every waiting request sees the failure, as its own read would
            error = exc
        by_loop: dict[asyncio.AbstractEventLoop, list] = defaultdict(list)
        for user_id, future in batch:
            by_loop[future.get_loop()].append((user_id, future))
        for loop, waiting in by_loop.items():
            try:
                loop.call_soon_threadsafe(_deliver, waiting, rows, error)
            except RuntimeError:  # that loop has closed: nobody is waiting there any more
                pass

    def _query(self, user_ids: list[int]) -> dict:
        # One statement reads every account and the version consistently, so it needs no
        # transaction of its own: autocommit spares PostgreSQL a BEGIN and a ROLLBACK.
        with self._engine.connect().execution_options(isolation_level="AUTOCOMMIT") as connection:
            statement = _STATEMENTS[connection.dialect.name]
            return {row.id: row for row in connection.execute(statement, {"ids": user_ids})}


def _deliver(waiting: list[tuple[int, asyncio.Future]], rows: dict | None, error: Exception | None) -> None:
    for user_id, future in waiting:
        if future.done():  # the request was cancelled (the client went away)
            continue
        if error is not None:
            future.set_exception(error)
        else:
            future.set_result(rows.get(user_id))
