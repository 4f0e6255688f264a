"""Durability under kill -9: a real uvicorn server (its own process) takes concurrent review
actions (comments, each appended to the hash-chained trail under its lock) from two reviewers,
an admin and the author, and is killed with SIGKILL mid-stream at a random moment, three times.
Every action the server acknowledged (its 303 arrived) must be in the trail afterwards, and
`clampdown trail verify` must pass. Actions cut off by the kill may or may not be stored; none
may be half-stored (verify would fail). Bounded: three cycles of about a second each."""

from __future__ import annotations

import json
import os
import random
import subprocess
import sys
import threading
import time

import httpx
import pytest
from sqlmodel import Session, select

from app.web.models import TrailEntry
from app.web.services import users

from .conftest import K1, PASSWORD, TRAIL_KEY, revision_ids
from .serving import ROOT, ServerProcess, signed_in_client

CYCLES = 3
ACTORS = ("lee", "kai", "ari", "dana")  # two reviewers, an admin and the author


@pytest.fixture
def kai(world):
    with Session(world.state.engine) as db:
        users.create_user(db, "kai", PASSWORD, "reviewer")


def _act_until_killed(
    base, name, rev, cycle, stop: threading.Event, acked: list[str], started: threading.Barrier
):
    client = signed_in_client(base, name, PASSWORD)
    i = 0
    while not stop.is_set():
        i += 1
        text = f"kill9 cycle {cycle} {name} {i}"
        try:
            answer = client.post(f"/revisions/{rev}/comments", data={"text": text})
        except httpx.HTTPError:
            return  # the server is gone; this one was never acknowledged
        assert answer.status_code == 303, answer.text
        acked.append(text)
        if i == 1:
            started.wait(60)  # every actor is under way before the kill is timed


def test_every_acknowledged_action_survives_kill_minus_9(world, kai, database_url, tmp_path):
    rev = revision_ids(world, K1)[-1]  # in review in the demo
    chance = random.Random(9)
    acked: list[str] = []
    for cycle in range(CYCLES):
        server = ServerProcess(database_url, tmp_path)
        server.start()
        stop = threading.Event()
        started = threading.Barrier(len(ACTORS) + 1)
        threads = [
            threading.Thread(
                target=_act_until_killed, args=(server.base, name, rev, cycle, stop, acked, started)
            )
            for name in ACTORS
        ]
        try:
            for thread in threads:
                thread.start()
            started.wait(60)
            time.sleep(0.2 + chance.random() * 0.8)  # then kill at a moment nobody chose
            server.kill9()
        finally:
            stop.set()
            for thread in threads:
                thread.join(30)
            server.stop()
    with Session(world.state.engine) as db:
        stored = {
            json.loads(detail)["text"]
            for detail in db.exec(
                select(TrailEntry.detail).where(TrailEntry.revision_id == rev, TrailEntry.action == "comment")
            )
        }
    lost = [text for text in acked if text not in stored]
    print(f"kill -9: {CYCLES} cycles, {len(acked)} actions acknowledged, {len(lost)} lost")
    assert len(acked) >= CYCLES * len(ACTORS)  # actions really ran in every cycle
    assert lost == []
    env = {
        **os.environ,
        "CLAMPDOWN_DATABASE_URL": database_url,
        "CLAMPDOWN_DATA_DIR": str(tmp_path),
        "CLAMPDOWN_TRAIL_KEY": TRAIL_KEY,
    }
    verify = subprocess.run(
        [sys.executable, "-c", "import sys; from app.cli import main; sys.exit(main())", "trail", "verify"],
        cwd=ROOT,
        env=env,
        capture_output=True,
        text=True,
    )
    assert verify.returncode == 0, verify.stdout + verify.stderr
