"""Two reviewers decide on the same revision at the same moment, over real HTTP against a
uvicorn server: exactly one decision wins, the other is refused, and the trail stays whole."""

import socket
import threading
import time

import httpx
import pytest
import uvicorn
from sqlmodel import Session, select

from app.web.models import Revision, TrailEntry
from app.web.services import trail, users

from .conftest import K1, PASSWORD, revision_ids


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture
def server(world):
    port = _free_port()
    config = uvicorn.Config(world, host="127.0.0.1", port=port, log_level="warning", lifespan="off")
    srv = uvicorn.Server(config)
    thread = threading.Thread(target=srv.run, daemon=True)
    thread.start()
    for _ in range(500):  # wait for the socket, not for a fixed time
        if srv.started:
            break
        time.sleep(0.01)
    assert srv.started, "uvicorn did not start"
    yield f"http://127.0.0.1:{port}"
    srv.should_exit = True
    thread.join(timeout=10)


def _client(base: str, name: str) -> httpx.Client:
    client = httpx.Client(base_url=base, follow_redirects=False, timeout=60)
    token = client.get("/api/v1/session").json()["csrf_token"]
    assert (
        client.post("/sign-in", data={"name": name, "password": PASSWORD, "csrf_token": token}).status_code
        == 303
    )
    client.headers["X-CSRF-Token"] = client.get("/api/v1/session").json()["csrf_token"]
    return client


@pytest.mark.parametrize("round_", range(3))
def test_sign_off_and_send_back_at_once_only_one_succeeds(world, server, round_):
    with Session(world.state.engine) as db:
        users.create_user(db, "kai", PASSWORD, "reviewer")
    rev = revision_ids(world, K1)[-1]  # in review in the demo
    lee, kai = _client(server, "lee"), _client(server, "kai")
    barrier = threading.Barrier(2)
    results = {}

    def act(name, client, path, data):
        barrier.wait()
        results[name] = client.post(f"/revisions/{rev}/{path}", data=data).status_code

    threads = [
        threading.Thread(target=act, args=("sign", lee, "sign-off", {})),
        threading.Thread(target=act, args=("back", kai, "send-back", {"note": "not yet"})),
    ]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert sorted(results.values()) == [303, 409], results
    with Session(world.state.engine) as db:
        state = db.get(Revision, rev).state
        decisions = db.exec(
            select(TrailEntry.action).where(
                TrailEntry.revision_id == rev, TrailEntry.action.in_(["sign_off", "send_back"])
            )
        ).all()
        assert trail.verify_all(db).ok
    assert len(decisions) == 1
    assert state == {"sign_off": "signed_off", "send_back": "returned"}[decisions[0]]
    winner = "sign" if decisions[0] == "sign_off" else "back"
    assert results[winner] == 303
