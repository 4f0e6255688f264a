"""The printed record on a long trail: the first view verifies the whole trail, later views use
the kept verification until something verified changes. The comments go to one revision; the
record timed is another's (a few entries), so the times show the verification, not the page's
own length. Prints both times and their ratio against /healthz.

    python benchmarks/record_view.py [--comments 3000]
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
warnings.filterwarnings("ignore")

from fastapi.testclient import TestClient  # noqa: E402
from sqlmodel import Session, select  # noqa: E402

from app.web.config import Settings  # noqa: E402
from app.web.demo import DEMO_PASSWORD, build_demo  # noqa: E402
from app.web.main import create_app  # noqa: E402
from app.web.models import Revision, User  # noqa: E402
from app.web.services import review  # noqa: E402


def main() -> int:
    parser = argparse.ArgumentParser()
    parser.add_argument("--comments", type=int, default=3000)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        url = f"sqlite:///{tmp}/bench.sqlite3"
        settings = Settings(data_dir=tmp, database_url=url, secret_key="bench", trail_key="bench-trail")
        engine = build_demo(url, trail_key="bench-trail")
        with Session(engine, expire_on_commit=False) as db:
            lee = db.exec(select(User).where(User.name == "lee")).one()
            busy = db.exec(
                select(Revision).where(Revision.state == "in_review").order_by(Revision.id)
            ).first()
            for n in range(args.comments):
                review.comment(db, busy.id, lee, f"remark number {n}")
            rev = db.exec(select(Revision).where(Revision.id != busy.id).order_by(Revision.id)).first()
        app = create_app(settings, engine=engine)
        client = TestClient(app)
        token = client.get("/api/v1/session").json()["csrf_token"]
        client.post(
            "/api/v1/session",
            json={"name": "lee", "password": DEMO_PASSWORD},
            headers={"X-CSRF-Token": token},
        )
        start = time.perf_counter()
        first = client.get(f"/revisions/{rev.id}/record")
        cold = time.perf_counter() - start
        assert "trail intact" in first.text, first.text[:500]
        warm = []
        for _ in range(20):
            start = time.perf_counter()
            client.get(f"/revisions/{rev.id}/record")
            warm.append(time.perf_counter() - start)
        kept = statistics.median(warm)
        health = []
        for _ in range(20):
            start = time.perf_counter()
            client.get("/healthz")
            health.append(time.perf_counter() - start)
        health = statistics.median(health)
        print(f"trail entries: {args.comments + 27}")
        print(f"record, first view (verifies the trail): {cold * 1000:.0f} ms")
        print(f"record, later views (kept verification), median of 20: {kept * 1000:.0f} ms")
        print(f"ratio first/later: {cold / kept:.1f}; /healthz for reference: {health * 1000:.1f} ms")
        engine.dispose()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
