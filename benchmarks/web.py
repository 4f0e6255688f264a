"""Web speed: each page and API list against a trivial endpoint of the same server, same run.

Stores 10,000 revisions (200 channels x 50 revisions; 100 distinct designs, so the report cache
holds 100 reports as it would after a team's history), starts the app under uvicorn as a
separate process, exactly as a deployment runs it (`uvicorn app.web.asgi:app`), signs in, and
drives every URL with wrk: the same settings for each (50 connections, 2 threads, a fixed
duration, after a 2 s warm-up of every URL in turn and of that URL again), the signed-in session
cookie passed with -H 'Cookie: ...'. The
trivial endpoint (/healthz) is measured first and last in the same run, and each URL's
throughput is given as a ratio to their mean. Errors are counted and shown: non-2xx answers
and wrk's socket errors (connect, read, write, timeout); a page that errors under load is a bug.

    python benchmarks/web.py [--seconds 10] [--connections 50] [--threads 2] [--workers 1]
                             [--database-url URL] [--skip-sqlite]

It runs on a fresh SQLite file, then also on --database-url when given (PostgreSQL: give an
empty database of your own; its public schema is dropped and made anew); --skip-sqlite runs
the given database alone. Each run prints req/s, p50, p99, errors and the ratio per URL, and a
last table puts the databases side by side.

wrk and the server share the machine's cores (the output says how many): the ratios compare
pages served under the same load, not absolute capacity. Without wrk (`apt-get install wrk`),
an async httpx client drives the load instead, with a warning: that client tops out at a few
hundred requests per second, so the ratios are then bounded by the client, not the server.

Goals (issue #12): revision page >= 40 % of the trivial endpoint's throughput; the fixture,
channel and parts pages and the API lists >= 25 %; no errors.
"""

from __future__ import annotations

import argparse
import asyncio
import copy
import json
import os
import re
import shutil
import socket
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
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


@dataclass
class Measured:
    rps: float
    p50: float  # ms
    p99: float  # ms
    requests: int
    errors: int  # non-2xx answers (and, from wrk, 3xx too) plus socket errors
    detail: str  # what the errors were


def _ms(text: str) -> float:
    number, unit = re.match(r"([\d.]+)(us|ms|s|m)", text).groups()
    return float(number) * {"us": 0.001, "ms": 1.0, "s": 1000.0, "m": 60000.0}[unit]


def parse_wrk(out: str) -> Measured:
    """wrk's summary: Requests/sec, the latency distribution, 'Non-2xx or 3xx responses: N' and
    'Socket errors: connect N, read N, write N, timeout N' (both lines only when non-zero)."""
    rps = float(re.search(r"Requests/sec:\s+([\d.]+)", out).group(1))
    requests = int(re.search(r"(\d+) requests in", out).group(1))
    p50 = _ms(re.search(r"^\s+50%\s+(\S+)", out, re.M).group(1))
    p99 = _ms(re.search(r"^\s+99%\s+(\S+)", out, re.M).group(1))
    errors, detail = 0, []
    if found := re.search(r"Non-2xx or 3xx responses:\s+(\d+)", out):
        errors += int(found.group(1))
        detail.append(f"{found.group(1)} non-2xx")
    if found := re.search(r"Socket errors: connect (\d+), read (\d+), write (\d+), timeout (\d+)", out):
        for kind, count in zip(
            ("connect", "read", "write", "timeout"), map(int, found.groups()), strict=True
        ):
            if count:
                errors += count
                detail.append(f"{count} {kind}")
    return Measured(rps, p50, p99, requests, errors, ", ".join(detail))


def with_wrk(url: str, cookie: str, seconds: int, connections: int, threads: int) -> Measured:
    out = subprocess.run(
        [
            "wrk",
            f"-t{threads}",
            f"-c{connections}",
            f"-d{seconds}s",
            "--latency",
            "-H",
            f"Cookie: {cookie}",
            url,
        ],
        capture_output=True,
        text=True,
        check=True,
    ).stdout
    return parse_wrk(out)


def with_httpx(url: str, cookie: str, seconds: int, connections: int, threads: int) -> Measured:
    async def run() -> Measured:
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
                        failures.append(type(exc).__name__)
                        continue
                    if not response.is_success:
                        failures.append(f"HTTP {response.status_code}")
                    latencies.append((time.perf_counter() - start) * 1000)

            started = time.perf_counter()
            await asyncio.gather(*(worker() for _ in range(connections)))
            elapsed = time.perf_counter() - started
        latencies.sort() or latencies.append(float("nan"))
        kinds = {kind: failures.count(kind) for kind in sorted(set(failures))}
        return Measured(
            len(latencies) / elapsed,
            statistics.median(latencies),
            latencies[max(0, int(len(latencies) * 0.99) - 1)],
            len(latencies),
            len(failures),
            ", ".join(f"{n} {kind}" for kind, n in kinds.items()),
        )

    return asyncio.run(run())


def urls(ids: dict[str, int]) -> list[tuple[str, str]]:
    return [
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
    ]


def serve(url: str, workdir: Path, port: int, workers: int) -> subprocess.Popen:
    """The app under uvicorn in its own process, as `uvicorn app.web.asgi:app` deploys it."""
    env = {"CLAMPDOWN_DATA_DIR": str(workdir), "CLAMPDOWN_DATABASE_URL": url, "PATH": "/usr/bin:/bin"}
    command = [sys.executable, "-m", "uvicorn", "app.web.asgi:app", "--port", str(port)]
    command += ["--log-level", "warning", "--no-access-log", "--workers", str(workers)]
    return subprocess.Popen(command, cwd=ROOT, env=env)


def run_database(label: str, url: str, workdir: Path, args, measure) -> dict[str, Measured]:
    print(f"\n== {label}", flush=True)
    ids = build(url)
    port = args.port or free_port()
    server = serve(url, workdir, port, args.workers)
    base = f"http://127.0.0.1:{port}"
    try:
        for _ in range(200):
            try:
                if httpx.get(base + "/healthz").status_code == 200:
                    break
            except httpx.HTTPError:
                time.sleep(0.1)
        cookie = sign_in(base)
        results: dict[str, Measured] = {}

        def one(path: str) -> Measured:
            measure(base + path, cookie, 2, args.connections, args.threads)  # warm up
            return measure(base + path, cookie, args.seconds, args.connections, args.threads)

        # Every URL once under load before any is measured, so none pays for being the first
        # to fill the server's thread pool, caches and heap.
        for path in ["/healthz", *(path for _, path in urls(ids))]:
            measure(base + path, cookie, 2, args.connections, args.threads)
        first = one("/healthz")
        for name, path in urls(ids):
            results[name] = one(path)
            print(f"  {name}: {results[name].rps:.0f} req/s", flush=True)
        last = one("/healthz")
        trivial = Measured(
            (first.rps + last.rps) / 2,
            (first.p50 + last.p50) / 2,
            max(first.p99, last.p99),
            first.requests + last.requests,
            first.errors + last.errors,
            "; ".join(d for d in (first.detail, last.detail) if d),
        )
        results = {"trivial": trivial, **results}
        print(
            f"trivial endpoint: {first.rps:.0f} req/s first, {last.rps:.0f} req/s last (ratios use the mean)"
        )
        print(f"{'url':17} {'req/s':>8} {'p50 ms':>8} {'p99 ms':>8} {'errors':>7} {'vs trivial':>11}")
        for name, m in results.items():
            print(
                f"{name:17} {m.rps:8.0f} {m.p50:8.1f} {m.p99:8.1f} {m.errors:7d} {m.rps / trivial.rps:10.0%}"
            )
            if m.errors:
                print(f"{'':17} errors: {m.detail} of {m.requests} requests")
        return results
    finally:
        server.terminate()
        server.wait(10)


GOALS = {"revision page": 0.40} | {
    name: 0.25
    for name in ("fixture page", "channel page", "parts page", "api fixtures", "api parts", "api channel")
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--seconds", type=int, default=10, help="measured seconds per URL (after 2 s warm-up)"
    )
    parser.add_argument("--connections", type=int, default=50)
    parser.add_argument("--threads", type=int, default=2, help="wrk threads")
    parser.add_argument("--workers", type=int, default=1, help="uvicorn worker processes")
    parser.add_argument("--port", type=int, default=0, help="server port (default: a free one)")
    parser.add_argument("--database-url", default="", help="an empty database to run on after SQLite")
    parser.add_argument("--skip-sqlite", action="store_true", help="run on --database-url alone")
    args = parser.parse_args()
    if shutil.which("wrk"):
        measure, tool = with_wrk, f"wrk -t{args.threads} -c{args.connections} -d{args.seconds}s"
    else:
        measure, tool = with_httpx, f"httpx (async), {args.connections} connections, {args.seconds} s"
        print(
            "WARNING: wrk is not installed (Debian/Ubuntu: apt-get install wrk); falling back to an "
            "async httpx client, which tops out at a few hundred requests per second: the ratios "
            "below are bounded by the client, not the server.",
            flush=True,
        )
    print(
        f"load: {tool} per URL after a 2 s warm-up; server: uvicorn, {args.workers} worker(s), the "
        f"same for every URL. {os.cpu_count()} CPU cores, shared by the load generator and the "
        "server: compare ratios, not absolute figures.",
        flush=True,
    )
    runs: list[tuple[str, str]] = []
    workdir = Path(tempfile.mkdtemp(prefix="clampdown-bench-"))
    try:
        if not args.skip_sqlite:
            runs.append(("SQLite", f"sqlite:///{workdir / 'bench.sqlite3'}"))
        if args.database_url:
            url = normalise_database_url(args.database_url)
            runs.append((make_engine(url).dialect.name, url))
        if not runs:
            raise SystemExit("nothing to run: --skip-sqlite needs --database-url")
        results = {label: run_database(label, url, workdir, args, measure) for label, url in runs}
    finally:
        shutil.rmtree(workdir, ignore_errors=True)
    print("\n== side by side: req/s (ratio to the trivial endpoint) [errors]")
    labels = list(results)
    print(f"{'url':17} " + " ".join(f"{label:>24}" for label in labels) + "   goal")
    for name in results[labels[0]]:
        cells = []
        for label in labels:
            m, trivial = results[label][name], results[label]["trivial"].rps
            cells.append(
                f"{f'{m.rps:.0f} ({m.rps / trivial:.0%})' + (f' [{m.errors}]' if m.errors else ''):>24}"
            )
        goal = f">= {GOALS[name]:.0%}" if name in GOALS else ""
        print(f"{name:17} " + " ".join(cells) + f"   {goal}")
    missed = [
        f"{name} on {label} ({results[label][name].rps / results[label]['trivial'].rps:.0%} < {goal:.0%})"
        for label in labels
        for name, goal in GOALS.items()
        if results[label][name].rps / results[label]["trivial"].rps < goal
    ]
    errored = [f"{name} on {label}" for label in labels for name, m in results[label].items() if m.errors]
    print("goals: " + ("all met" if not missed else "missed: " + "; ".join(missed)))
    print("errors under load: " + ("none" if not errored else "; ".join(errored)))


if __name__ == "__main__":
    main()
