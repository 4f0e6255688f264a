"""A real uvicorn server in its own process (one worker) over the test database, for the load
and kill -9 tests, and a load generator run in another process so it does not share the test
process's interpreter lock with the /healthz probe."""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import httpx

ROOT = Path(__file__).resolve().parents[2]


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class ServerProcess:
    def __init__(self, database_url: str, data_dir: Path):
        self.database_url, self.data_dir = database_url, data_dir
        self.port = free_port()
        self.base = f"http://127.0.0.1:{self.port}"
        self.process: subprocess.Popen | None = None

    def start(self) -> None:
        from .conftest import TRAIL_KEY

        env = {
            **os.environ,
            "CLAMPDOWN_DATABASE_URL": self.database_url,
            "CLAMPDOWN_DATA_DIR": str(self.data_dir),
            "CLAMPDOWN_SECRET_KEY": "test-key",
            # The same trail key as the test's app, so entries from both verify as one chain.
            "CLAMPDOWN_TRAIL_KEY": TRAIL_KEY,
        }
        self.process = subprocess.Popen(
            [sys.executable, "-m", "uvicorn", "app.web.asgi:app", "--port", str(self.port)]
            + ["--workers", "1", "--log-level", "warning", "--no-access-log"],
            cwd=ROOT,
            env=env,
        )
        deadline = time.monotonic() + 30
        while time.monotonic() < deadline:
            assert self.process.poll() is None, "the server exited while starting"
            try:
                if httpx.get(self.base + "/healthz", timeout=1).status_code == 200:
                    return
            except httpx.HTTPError:
                time.sleep(0.05)
        raise AssertionError("the server did not answer /healthz within 30 s")

    def kill9(self) -> None:
        assert self.process is not None
        self.process.send_signal(signal.SIGKILL)
        self.process.wait(10)

    def stop(self) -> None:
        if self.process is not None and self.process.poll() is None:
            self.process.terminate()
            try:
                self.process.wait(10)
            except subprocess.TimeoutExpired:
                self.process.kill()
                self.process.wait(10)


def signed_in_client(base: str, name: str, password: str) -> httpx.Client:
    client = httpx.Client(base_url=base, follow_redirects=False, timeout=30)
    token = client.get("/api/v1/session").json()["csrf_token"]
    answer = client.post("/sign-in", data={"name": name, "password": password, "csrf_token": token})
    assert answer.status_code == 303, answer.text
    client.headers["X-CSRF-Token"] = client.get("/api/v1/session").json()["csrf_token"]
    return client


def start_load(
    base: str, cookie: str, csrf: str, seconds: float, connections: int, gets: list[str], post: str
):
    """Start the load generator (this module run as a script); its JSON summary comes on stdout."""
    spec = {
        "base": base,
        "cookie": cookie,
        "csrf": csrf,
        "seconds": seconds,
        "connections": connections,
        "gets": gets,
        "post": post,
    }
    return subprocess.Popen(
        [sys.executable, __file__, json.dumps(spec)], cwd=ROOT, stdout=subprocess.PIPE, text=True
    )


def _load(spec: dict) -> dict:
    """``connections`` clients loop for ``seconds``: GETs of the pages in turn, every fifth
    request a comment POST (a write). Counts answers by status (or by the error's name; a
    request unanswered after 10 s is a ReadTimeout), and answers completed in each second."""
    import asyncio

    async def run() -> dict:
        counts: dict[str, int] = {}
        started = time.monotonic()
        deadline = started + spec["seconds"]
        per_second = [0] * (int(spec["seconds"]) + 1)
        limits = httpx.Limits(max_connections=spec["connections"])
        headers = {"Cookie": spec["cookie"], "X-CSRF-Token": spec["csrf"]}
        async with httpx.AsyncClient(
            base_url=spec["base"], headers=headers, limits=limits, timeout=10
        ) as client:

            async def worker(n: int) -> None:
                i = n
                while time.monotonic() < deadline:
                    i += 1
                    try:
                        if i % 5 == 0:
                            answer = await client.post(spec["post"], data={"text": f"load comment {n}-{i}"})
                        else:
                            answer = await client.get(spec["gets"][i % len(spec["gets"])])
                        key = str(answer.status_code)
                    except httpx.HTTPError as exc:
                        key = type(exc).__name__
                    counts[key] = counts.get(key, 0) + 1
                    second = int(time.monotonic() - started)
                    if second < len(per_second):
                        per_second[second] += 1

            await asyncio.gather(*(worker(n) for n in range(spec["connections"])))
        return {"counts": counts, "per_second": per_second}

    return asyncio.run(run())


if __name__ == "__main__":
    print(json.dumps(_load(json.loads(sys.argv[1]))))
