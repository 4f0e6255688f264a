"""The account reader (app/web/accounts.py): every request's account and data version, read in
batches on one thread. What it must keep true: each request gets its own account's row; a read
asked after a change is answered by a statement run after that change (so deactivation, a role
change and a new data version show on the very next request); a failure reaches every request
that waited; a request that goes away takes nothing down; the thread ends when idle."""

from __future__ import annotations

import asyncio
import threading
import time

import pytest
from sqlalchemy import event, text

from app.web.accounts import AccountReader
from app.web.trail_guard import data_version


def _ids(engine) -> dict[str, int]:
    with engine.connect() as connection:
        return {row.name: row.id for row in connection.execute(text("SELECT id, name FROM user_account"))}


class _Held:
    """Holds the reader's thread just after its first statement has run, until released, so
    reads asked meanwhile wait together (no timing guesswork), and that statement's answer is
    older than anything done meanwhile."""

    def __init__(self, reader: AccountReader):
        self.inside, self.go = threading.Event(), threading.Event()
        self.statements = 0
        query = reader._query

        def held(user_ids):
            self.statements += 1
            rows = query(user_ids)
            if self.statements == 1:
                self.inside.set()
                assert self.go.wait(10)
            return rows

        reader._query = held


@pytest.fixture
def account_statements(world):
    """Every account read the engine runs while the test does."""
    seen: list[str] = []

    def _seen(_conn, _cursor, statement, *_args):
        if "FROM user_account WHERE id IN" in statement:
            seen.append(statement)

    engine = world.state.engine
    event.listen(engine, "before_cursor_execute", _seen)
    yield seen
    event.remove(engine, "before_cursor_execute", _seen)


def _version(engine) -> int:
    with engine.connect() as connection:
        return data_version(connection)


def test_reads_waiting_together_are_answered_by_one_statement_each_with_its_own_account(
    world, account_statements
):
    engine = world.state.engine
    ids = _ids(engine)
    assert len(ids) >= 4  # the demo's lee, dana, sam and ari
    reader = AccountReader(engine)
    held = _Held(reader)
    missing = max(ids.values()) + 1000

    async def run():
        first = asyncio.ensure_future(reader.read(ids["lee"]))
        await asyncio.get_running_loop().run_in_executor(None, held.inside.wait, 10)
        asked = [name for name in ids for _ in range(5)]
        waiting = [asyncio.ensure_future(reader.read(ids[name])) for name in asked]
        nobody = asyncio.ensure_future(reader.read(missing))
        await asyncio.sleep(0)  # every read is queued before the thread is let go
        held.go.set()
        return await first, asked, await asyncio.gather(*waiting), await nobody

    first, asked, rows, nobody = asyncio.run(run())
    assert first.name == "lee"
    assert [row.name for row in rows] == asked
    assert all(row.id == ids[row.name] for row in rows)
    assert nobody is None
    # The first read alone, then the 20 + 1 that waited meanwhile in one statement.
    assert held.statements == 2
    assert len(account_statements) == 2
    version = _version(engine)
    assert {row.data_version for row in rows} == {version}


def test_a_read_asked_after_a_change_sees_the_change(world):
    """The read in flight is older than the change; the one asked after the commit is not (it is
    never answered from the statement that was running when it was asked)."""
    engine = world.state.engine
    ids = _ids(engine)
    reader = AccountReader(engine)
    held = _Held(reader)

    async def run():
        before = asyncio.ensure_future(reader.read(ids["dana"]))
        loop = asyncio.get_running_loop()
        await loop.run_in_executor(None, held.inside.wait, 10)

        def deactivate():
            with engine.begin() as connection:
                connection.execute(text("UPDATE user_account SET active = false WHERE name = 'dana'"))

        await loop.run_in_executor(None, deactivate)
        after = asyncio.ensure_future(reader.read(ids["dana"]))
        await asyncio.sleep(0)
        held.go.set()
        return await before, await after

    before, after = asyncio.run(run())
    assert bool(before.active) is True
    assert bool(after.active) is False
    assert after.data_version > before.data_version
    assert after.data_version == _version(engine)


def test_a_failed_read_reaches_every_request_that_waited(world):
    reader = AccountReader(world.state.engine)

    def broken(_user_ids):
        raise RuntimeError("database unreachable")

    reader._query = broken

    async def run():
        return await asyncio.gather(*(reader.read(n) for n in range(1, 6)), return_exceptions=True)

    answers = asyncio.run(run())
    assert len(answers) == 5
    assert all(isinstance(a, RuntimeError) and "unreachable" in str(a) for a in answers)


def test_a_request_that_went_away_takes_nothing_down(world):
    engine = world.state.engine
    ids = _ids(engine)
    reader = AccountReader(engine)
    held = _Held(reader)
    problems: list[dict] = []

    async def run():
        loop = asyncio.get_running_loop()
        loop.set_exception_handler(lambda _loop, context: problems.append(context))
        first = asyncio.ensure_future(reader.read(ids["lee"]))
        await loop.run_in_executor(None, held.inside.wait, 10)
        gone = asyncio.ensure_future(reader.read(ids["sam"]))
        stays = asyncio.ensure_future(reader.read(ids["ari"]))
        await asyncio.sleep(0)
        gone.cancel()
        held.go.set()
        return await first, await stays, gone

    first, stays, gone = asyncio.run(run())
    assert (first.name, stays.name) == ("lee", "ari")
    assert gone.cancelled()
    assert problems == []


def test_the_thread_ends_when_idle_and_starts_again_when_asked(world):
    engine = world.state.engine
    ids = _ids(engine)
    reader = AccountReader(engine, idle_seconds=0.05)
    assert asyncio.run(reader.read(ids["lee"])).name == "lee"
    deadline = time.monotonic() + 5
    while reader._thread is not None and time.monotonic() < deadline:
        time.sleep(0.01)
    assert reader._thread is None
    assert asyncio.run(reader.read(ids["ari"])).name == "ari"


@pytest.mark.parametrize("path", ["/", "/parts"])
def test_a_deactivated_account_is_refused_on_its_next_request(world, path):
    """Through the whole app: the batched read still ends a session at once."""
    from .conftest import sign_in

    client = sign_in(world, "dana")
    assert client.get(path).status_code == 200
    with world.state.engine.begin() as connection:
        connection.execute(text("UPDATE user_account SET active = false WHERE name = 'dana'"))
    answer = client.get(path)
    assert answer.status_code == 303
    assert answer.headers["location"].startswith("/sign-in")
