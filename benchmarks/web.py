"""Web speed: the revision page and the home page against a trivial endpoint of the same server.

Stores 10,000 revisions (200 channels x 50 revisions; 100 distinct designs, so the report cache
holds 100 reports as it would after a team's history), serves with uvicorn, and measures each URL
at 50 concurrent connections: requests per second, p50 and p99. Uses wrk when installed,
otherwise an async httpx load generator. Prints ratios to the trivial endpoint.

    python benchmarks/web.py [--seconds 10] [--connections 50] [--database-url URL]

--database-url runs it on that database instead of a fresh SQLite file (PostgreSQL: give an
empty database of your own; its public schema is dropped and made anew).

Goals: revision page >= 40 % of the trivial endpoint's throughput, p99 under 60 ms; the home,
fixture, channel and parts pages and the API lists >= 25 %.
"""

from __future__ import annotations

import argparse
import asyncio
import copy
import json
import re
import shutil
import socket
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import httpx

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from sqlalchemy import text  # noqa: E402
from sqlmodel import Session, select  # noqa: E402

from app.web.config import normalise_database_url  # noqa: E402
from app.web.db import make_engine, migrate  # noqa: E402
from app.web.demo import DEMO_PASSWORD, load_seed, resolve_parts  # noqa: E402
from app.web.models import Channel, Fixture, Revision, User  # noqa: E402
from app.web.services.documents import content_hash  # noqa: E402
from app.web.services.reports import cached_report  # noqa: E402
from app.web.services.revisions import revision_label  # noqa: E402

CHANNELS, PER_CHANNEL, DESIGNS = 200, 50, 100


def build(url: str) -> dict[str, int]:
    """Demo data plus 10,000 revisions; returns the ids of a revision, its channel and fixture."""
    engine = make_engine(url)
    if engine.dialect.name == "postgresql":
        with engine.begin() as connection:  # start from an empty schema
            connection.execute(text("DROP SCHEMA public CASCADE; CREATE SCHEMA public"))
    migrate(engine)
    with Session(engine, expire_on_commit=False) as db:
        load_seed(db)
        author = db.exec(select(User).where(User.name == "dana")).one()
        base = json.loads((ROOT / "seed_data/demo/scenario.json").read_text(encoding="utf-8"))["channels"][0][
            "base"
        ]
        base = {**base, "clamp": {"kind": "diode", "diode": {"part": "Demo rectifier 1 A (illustrative)"}}}
        template, _ = resolve_parts(db, base)
        designs = []
        for i in range(DESIGNS):
            document = copy.deepcopy(template)
            document["base"]["r_series"] = 150 + 2 * i
            designs.append((document, content_hash(document)))
            cached_report(db, designs[-1][1], document)
        fixtures = [Fixture(name=f"Bench fixture {f}") for f in range(CHANNELS // 10)]
        db.add_all(fixtures)
        db.flush()
        channels = [
            Channel(fixture_id=fixtures[c // 10].id, name=f"K{c} bench relay") for c in range(CHANNELS)
        ]
        db.add_all(channels)
        db.flush()
        rows = []
        for c, channel in enumerate(channels):
            for n in range(1, PER_CHANNEL + 1):
                document, digest = designs[(c * PER_CHANNEL + n) % DESIGNS]
                rows.append(
                    Revision(
                        channel_id=channel.id,
                        number=n,
                        label=revision_label(n),
                        document=document,
                        content_hash=digest,
                        author_id=author.id,
                        change_note=f"step {n}",
                    )
                )
        db.add_all(rows)
        db.commit()
        total = db.exec(select(Revision.id)).all()
        print(f"stored {len(total)} revisions in {len(channels) + 4} channels", flush=True)
        middle = rows[len(rows) // 2]
        channel = db.get(Channel, middle.channel_id)
        return {"revision": middle.id, "channel": channel.id, "fixture": channel.fixture_id}


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def sign_in(base: str) -> str:
    with httpx.Client(base_url=base) as client:
        token = client.get("/api/v1/session").json()["csrf_token"]
        answer = client.post(
            "/api/v1/session",
            json={"name": "lee", "password": DEMO_PASSWORD},
            headers={"X-CSRF-Token": token},
        )
        answer.raise_for_status()
        return f"clampdown_session={client.cookies['clampdown_session']}"


def _ms(text: str) -> float:
    number, unit = re.match(r"([\d.]+)(us|ms|s|m)", text).groups()
    return float(number) * {"us": 0.001, "ms": 1.0, "s": 1000.0, "m": 60000.0}[unit]


def with_wrk(url: str, cookie: str, seconds: int, connections: int) -> tuple[float, float, float]:
    out = subprocess.run(
        ["wrk", "-t2", f"-c{connections}", f"-d{seconds}s", "--latency", "-H", f"Cookie: {cookie}", url],
        capture_output=True,
        text=True,
        check=True,
    ).stdout
    rps = float(re.search(r"Requests/sec:\s+([\d.]+)", out).group(1))
    p50 = _ms(re.search(r"^\s+50%\s+(\S+)", out, re.M).group(1))
    p99 = _ms(re.search(r"^\s+99%\s+(\S+)", out, re.M).group(1))
    if "Non-2xx" in out:
        raise SystemExit(f"{url} answered errors:\n{out}")
    return rps, p50, p99


def with_httpx(url: str, cookie: str, seconds: int, connections: int) -> tuple[float, float, float]:
    async def run():
        latencies: list[float] = []
        failures: list[str] = []
        deadline = time.perf_counter() + seconds
        limits = httpx.Limits(max_connections=connections)
        async with httpx.AsyncClient(headers={"Cookie": cookie}, limits=limits) as client:

            async def worker():
                while time.perf_counter() < deadline:
                    start = time.perf_counter()
                    try:
                        response = await client.get(url)
                    except httpx.TransportError as exc:  # counted and shown, never hidden
                        failures.append(f"{type(exc).__name__}")
                        continue
                    response.raise_for_status()
                    latencies.append((time.perf_counter() - start) * 1000)

            started = time.perf_counter()
            await asyncio.gather(*(worker() for _ in range(connections)))
            elapsed = time.perf_counter() - started
        latencies.sort()
        if failures:
            print(
                f"  {url}: {len(failures)} connection failures ({', '.join(sorted(set(failures)))})",
                flush=True,
            )
        return (
            len(latencies) / elapsed,
            statistics.median(latencies),
            latencies[int(len(latencies) * 0.99) - 1],
        )

    return asyncio.run(run())


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seconds", type=int, default=10)
    parser.add_argument("--connections", type=int, default=50)
    parser.add_argument("--workers", type=int, default=1, help="uvicorn worker processes")
    parser.add_argument("--database-url", default="", help="an empty database to use instead of SQLite")
    args = parser.parse_args()
    workdir = Path(tempfile.mkdtemp(prefix="clampdown-bench-"))
    url = (
        normalise_database_url(args.database_url)
        if args.database_url
        else f"sqlite:///{workdir / 'bench.sqlite3'}"
    )
    ids = build(url)
    port = free_port()
    env = {"CLAMPDOWN_DATA_DIR": str(workdir), "CLAMPDOWN_DATABASE_URL": url, "PATH": "/usr/bin:/bin"}
    server = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "uvicorn",
            "app.web.asgi:app",
            "--port",
            str(port),
            "--log-level",
            "warning",
            "--no-access-log",
            "--workers",
            str(args.workers),
        ],
        cwd=ROOT,
        env=env,
    )
    base = f"http://127.0.0.1:{port}"
    try:
        for _ in range(100):
            try:
                if httpx.get(base + "/healthz").status_code == 200:
                    break
            except httpx.HTTPError:
                time.sleep(0.1)
        cookie = sign_in(base)
        measure = with_wrk if shutil.which("wrk") else with_httpx
        tool = "wrk" if measure is with_wrk else "httpx (async)"
        print(
            f"load: {tool}, {args.connections} connections, {args.seconds} s per URL, {args.workers} uvicorn worker(s)",
            flush=True,
        )
        results = {}
        for name, path in (
            ("trivial", "/healthz"),
            ("revision page", f"/revisions/{ids['revision']}"),
            # One of its pictures, as the browser fetches it after the page (drawn once, kept).
            ("its turn-off svg", f"/revisions/{ids['revision']}/pictures/turnoff.svg"),
            ("home page", "/"),
            ("fixture page", f"/fixtures/{ids['fixture']}"),
            ("channel page", f"/channels/{ids['channel']}"),
            ("parts page", "/parts"),
            ("api fixtures", "/api/v1/fixtures"),
            ("api parts", "/api/v1/parts"),
            ("api channel", f"/api/v1/channels/{ids['channel']}"),
        ):
            measure(base + path, cookie, 2, args.connections)  # warm up
            results[name] = measure(base + path, cookie, args.seconds, args.connections)
        trivial = results["trivial"][0]
        print(f"{'url':15} {'req/s':>9} {'p50 ms':>8} {'p99 ms':>8} {'vs trivial':>11}")
        for name, (rps, p50, p99) in results.items():
            print(f"{name:15} {rps:9.0f} {p50:8.1f} {p99:8.1f} {rps / trivial:10.0%}")
        rps, _, p99 = results["revision page"]
        print(f"goal: revision page >= 40 % of trivial ({rps / trivial:.0%}) and p99 < 60 ms ({p99:.1f} ms)")
        lists = {
            name: r[0] / trivial for name, r in results.items() if name not in ("trivial", "revision page")
        }
        slowest = min(lists, key=lists.get)
        print(
            f"goal: every other page and API list >= 25 % of trivial (lowest: {slowest} {lists[slowest]:.0%})"
        )
    finally:
        server.terminate()
        server.wait(10)
        shutil.rmtree(workdir, ignore_errors=True)


if __name__ == "__main__":
    main()
