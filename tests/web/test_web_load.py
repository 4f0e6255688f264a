"""Up under load: 50 connections against one uvicorn worker (its own process) reading pages and
writing comments, while /healthz is asked four times a second. Every probe must answer within
2 s (it answers on the event loop: the loop is never held up), the pages must keep completing
every second (the worker threads and the connection pool never stall), and no request may end
in a server error or go unanswered for 10 s. On PostgreSQL this is the case that used to
deadlock (blocking database calls on the event loop); on SQLite, writes that held the event loop
while waiting for the write lock. Bounded: 8 s of load per database."""

from __future__ import annotations

import json
import threading
import time

import httpx
import pytest

from .conftest import K1, PASSWORD, PG_URL, revision_ids
from .serving import ServerProcess, signed_in_client, start_load

SECONDS, CONNECTIONS, PROBE_EVERY, PROBE_LIMIT = 8.0, 50, 0.25, 2.0


@pytest.fixture
def server(world, database_url, tmp_path):
    server = ServerProcess(database_url, tmp_path)
    server.start()
    yield server
    server.stop()


def test_healthz_answers_within_2_s_under_50_connections(world, server):
    rev = revision_ids(world, K1)[-1]
    lee = signed_in_client(server.base, "lee", PASSWORD)
    cookie = f"clampdown_session={lee.cookies['clampdown_session']}"
    gets = ["/", f"/revisions/{rev}", f"/revisions/{rev}/review", "/api/v1/fixtures", "/parts"]
    load = start_load(
        server.base,
        cookie,
        lee.headers["X-CSRF-Token"],
        SECONDS,
        CONNECTIONS,
        gets,
        f"/revisions/{rev}/comments",
    )
    probes: list[float] = []
    failures: list[str] = []

    def probe() -> None:
        with httpx.Client(timeout=PROBE_LIMIT) as client:
            time.sleep(1.0)  # let the load build up
            end = time.monotonic() + SECONDS - 1.5
            while time.monotonic() < end:
                start = time.monotonic()
                try:
                    status = client.get(server.base + "/healthz").status_code
                    if status != 200:
                        failures.append(f"/healthz answered {status}")
                except httpx.HTTPError as exc:
                    failures.append(f"/healthz: {type(exc).__name__} after {time.monotonic() - start:.1f} s")
                probes.append(time.monotonic() - start)
                time.sleep(PROBE_EVERY)

    thread = threading.Thread(target=probe)
    thread.start()
    out, _ = load.communicate(timeout=SECONDS + 60)
    thread.join()
    summary = json.loads(out)
    counts, per_second = summary["counts"], summary["per_second"]
    print(
        f"load: {counts}, answers per second {per_second}; /healthz probes {len(probes)}, worst {max(probes) * 1000:.0f} ms"
    )
    assert failures == []
    # database pages kept completing to the end (a stuck thread or connection pool stops them)
    assert all(n > 0 for n in per_second[2 : int(SECONDS)]), per_second
    assert len(probes) >= 10 and max(probes) < PROBE_LIMIT
    assert sum(counts.values()) > CONNECTIONS  # the load really ran
    assert not [k for k in counts if not k.isdigit() or int(k) >= 500], counts
    assert counts.get("303", 0) > 0  # comments were written during the load


@pytest.mark.skipif(bool(PG_URL), reason="the PostgreSQL case runs as [postgresql] above")
def test_the_postgresql_case_says_why_it_did_not_run():
    """Never passes: it only reports, as a skip, that the PostgreSQL case was not run."""
    pytest.skip(
        "no PostgreSQL for the load case: set CLAMPDOWN_TEST_DATABASE_URL to a reachable server "
        "(.ci/run does when psql reaches 127.0.0.1:5432); it ran on SQLite only"
    )
