"""Build the demo database from seed_data/demo/ through the same services the pages use."""

from __future__ import annotations

import copy
import json
from pathlib import Path

from sqlalchemy import Engine
from sqlmodel import Session, select

from .config import shipped
from .db import make_engine, migrate
from .models import Part, User
from .services import fixtures, parts, reports, review, revisions, users
from .services.documents import SLOT_KINDS, get_path, part_document, set_path

SEED = shipped("seed_data") / "demo"
DEMO_PASSWORD = "demo-pass-1"
DEMO_USERS = (("lee", "reviewer"), ("dana", "designer"), ("sam", "designer"), ("ari", "admin"))


def _merge(base: dict, changes: dict) -> dict:
    out = copy.deepcopy(base)
    for key, value in changes.items():
        out[key] = copy.deepcopy(value)
    return out


def resolve_parts(db: Session, document: dict) -> tuple[dict, dict[str, int]]:
    """Replace {"part": NAME} in each part slot with the library part's frozen copy."""
    document = copy.deepcopy(document)
    links = {}
    for slot, kind in SLOT_KINDS.items():
        ref = get_path(document, slot)
        if isinstance(ref, dict) and set(ref) == {"part"}:
            part = db.exec(
                select(Part).where(Part.kind.in_(parts.kinds_for(kind)), Part.name == ref["part"])
            ).one()
            set_path(document, slot, part_document(part))
            links[slot] = part.id
    return document, links


def load_seed(db: Session, seed_dir: Path = SEED) -> None:
    library = json.loads((seed_dir / "parts.json").read_text(encoding="utf-8"))
    for kind in parts.PART_MODELS:
        for entry in library.get(kind, []):
            parts.create_part(db, kind, entry["name"], entry["params"], entry.get("notes", ""))
    people = {name: users.create_user(db, name, DEMO_PASSWORD, role) for name, role in DEMO_USERS}
    scenario = json.loads((seed_dir / "scenario.json").read_text(encoding="utf-8"))
    reviews_file = seed_dir / "reviews.json"
    reviews = json.loads(reviews_file.read_text(encoding="utf-8")) if reviews_file.exists() else {}
    fixture = fixtures.create_fixture(db, scenario["fixture"]["name"], scenario["fixture"]["description"])
    for entry in scenario["channels"]:
        channel = fixtures.create_channel(db, fixture.id, entry["name"], entry["load"], entry["mains_load"])
        design = entry["base"]
        for step in entry["revisions"]:
            design = _merge(design, step["set"])
            document, links = resolve_parts(db, design)
            revision = revisions.create_revision(
                db,
                channel.id,
                document,
                people[step["author"]],
                step["change_note"],
                source="form",
                part_links=links,
            )
            for action in reviews.get(entry["name"], {}).get(revision.label, []):
                _review(db, revision, people[action["by"]], action)


def _review(db: Session, revision, person, action: dict) -> None:
    """One review step of the seed; "*marginal" / "*violation" waives the first such finding."""
    do = action["do"]
    if do == "hand_in":
        review.hand_in(db, revision.id, person, action.get("note", ""))
    elif do == "comment":
        review.comment(db, revision.id, person, action["text"], action.get("finding"))
    elif do == "send_back":
        review.send_back(db, revision.id, person, action["note"])
    elif do == "sign_off":
        review.sign_off(db, revision.id, person, action.get("note", ""))
    elif do == "waive":
        finding = action["finding"]
        if finding.startswith("*"):
            report = reports.report_for(db, revision).body
            finding = next(f["rule"] for f in report["findings"] if f["status"] == finding[1:])
        review.waive(db, revision.id, person, finding, action["justification"])
    else:
        raise ValueError(f"seed_data/demo/reviews.json: unknown action {do!r}")


def build_demo(database_url: str, fresh: bool = True, trail_key: str | None = None) -> Engine:
    """A fresh demo database (the SQLite file is replaced) with the seed scenario loaded; its
    trail is MACed with ``trail_key`` (default: the settings' key)."""
    if fresh and database_url.startswith("sqlite:///"):
        path = Path(database_url.removeprefix("sqlite:///"))
        for suffix in ("", "-wal", "-shm"):
            Path(str(path) + suffix).unlink(missing_ok=True)
    engine = make_engine(database_url)
    if trail_key is not None:
        from .services.trail import use_key

        use_key(engine, trail_key)
    migrate(engine, trail_key)
    with Session(engine, expire_on_commit=False) as db:
        if db.exec(select(User)).first() is None:
            load_seed(db)
    return engine
