"""The rule for database work (DEVELOPERS.md): a route or dependency that touches the database is
a plain function, run in a worker thread; nothing uses the database on the event loop's thread.

Two checks: a walk over every route's dependency tree (no coroutine function receives the
database session), and the engine itself refusing a connection on the event loop's thread, which
every other web test exercises as it runs."""

from __future__ import annotations

import inspect

import pytest
from fastapi import APIRouter, FastAPI
from fastapi.routing import APIRoute
from fastapi.testclient import TestClient
from sqlalchemy import text

from app.web.db import DatabaseOnEventLoop
from app.web.deps import DB, DbRoute, Viewer, get_db

from .conftest import sign_in


def _routes(routes):
    for route in routes:
        original = getattr(route, "original_router", None)
        if original is not None:
            yield from _routes(original.routes)
        elif isinstance(route, APIRoute):
            yield route


def _is_async(call) -> bool:
    call = inspect.unwrap(call)
    return inspect.iscoroutinefunction(call) or inspect.isasyncgenfunction(call)


def async_database_users(app: FastAPI) -> list[str]:
    """Every endpoint or dependency that is a coroutine function and receives the session."""
    found: list[str] = []

    def visit(dependant, where: str) -> None:
        takes_db = any(sub.call is get_db for sub in dependant.dependencies)
        if takes_db and dependant.call is not None and _is_async(dependant.call):
            found.append(f"{where}: {getattr(inspect.unwrap(dependant.call), '__name__', dependant.call)}")
        for sub in dependant.dependencies:
            visit(sub, where)

    for route in _routes(app.router.routes):
        visit(route.dependant, f"{sorted(route.methods)} {route.path}")
    return found


def test_no_coroutine_route_or_dependency_receives_the_database(app):
    routes = list(_routes(app.router.routes))
    assert len(routes) > 40  # the walk reaches the included routers
    assert async_database_users(app) == []


def test_the_walk_finds_a_route_that_breaks_the_rule(app):
    router = APIRouter()

    @router.get("/bad")
    async def bad(db: DB):  # the kind of route the rule forbids
        return {}

    async def bad_dependency(db: DB):
        return None

    from fastapi import Depends

    @router.get("/bad-dep", dependencies=[Depends(bad_dependency)])
    def uses_bad_dependency():
        return {}

    app.include_router(router)
    found = async_database_users(app)
    assert any("/bad" in f and "bad" in f for f in found), found
    assert any("bad_dependency" in f for f in found), found


def test_the_engine_refuses_work_on_the_event_loop_thread(world):
    router = APIRouter(route_class=DbRoute)

    @router.get("/on-the-loop")
    async def on_the_loop(user: Viewer):
        with world.state.engine.connect() as connection:  # blocking I/O on the loop
            connection.execute(text("select 1"))
        return {}

    world.include_router(router)
    client = sign_in(world, "lee")
    with pytest.raises(DatabaseOnEventLoop):
        client.get("/on-the-loop")
    # the same query from a plain-function route (a worker thread) is fine
    assert client.get("/api/v1/engine").status_code == 200


def test_the_pool_holds_a_connection_for_every_worker_thread(app):
    settings = app.state.settings
    assert app.state.engine.pool.size() >= settings.threads
    with TestClient(app) as client:
        client.get("/healthz")
        import anyio.to_thread

        limiter = client.portal.call(anyio.to_thread.current_default_thread_limiter)
        assert limiter.total_tokens == settings.threads


def test_routes_release_their_connection_before_the_response(world):
    """A request holds a pooled connection only inside a worker-thread call: after any page,
    every connection is back in the pool."""
    client = sign_in(world, "lee")
    pool = world.state.engine.pool
    for path in ("/", "/parts", "/api/v1/fixtures", "/api/v1/session"):
        assert client.get(path).status_code == 200
        assert pool.checkedout() == 0, path


def test_every_route_that_receives_the_session_closes_it_in_its_own_thread(app):
    """A route taking the session must be a DbRoute (its plain-function endpoint closes the
    session as it returns); otherwise the session would be closed later, on the event loop."""
    takers = [
        r for r in _routes(app.router.routes) if any(d.call is get_db for d in r.dependant.dependencies)
    ]
    assert len(takers) > 30
    assert [r.path for r in takers if not isinstance(r, DbRoute) or _is_async(r.endpoint)] == []
