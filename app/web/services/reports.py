"""Reports, cached per design content hash, engine version and derating profile version."""

from __future__ import annotations

from sqlalchemy.exc import IntegrityError
from sqlmodel import Session, select

from app.engine import ENGINE_VERSION, DesignError, evaluate, parse_design
from app.engine.profile import DEFAULT_PROFILE, Profile

from ..models import Report
from .documents import finite_json
from .errors import InputProblems, split_problem


def count(report: dict, status: str) -> int:
    return sum(1 for finding in report["findings"] if finding["status"] == status)


def evaluate_document(document: dict, profile: Profile = DEFAULT_PROFILE) -> dict:
    """The same report `clampdown check --format json [--profile FILE]` prints for this document,
    with any number that is not finite given as null (JSON has no infinity). A design the engine
    refuses is InputProblems naming the field."""
    try:
        return finite_json(evaluate(parse_design(document), profile))
    except DesignError as exc:
        raise InputProblems([split_problem(line) for line in exc.problems]) from None


def profile_key(profile_version_id: int | None) -> str:
    """The report cache's key for a profile version: "" is the built-in default."""
    return "" if profile_version_id is None else str(profile_version_id)


def _lookup(content_hash: str, key: str):
    return select(Report).where(
        Report.content_hash == content_hash,
        Report.engine_version == ENGINE_VERSION,
        Report.profile_key == key,
    )


def cached_report(
    db: Session, content_hash: str, document: dict, profile_version_id: int | None = None
) -> Report:
    """The stored report for this content, engine version and profile version; evaluated and
    stored on a miss."""
    from .profiles import engine_profile

    key = profile_key(profile_version_id)
    found = db.exec(_lookup(content_hash, key)).first()
    if found is not None:
        return found
    body = evaluate_document(document, engine_profile(db, profile_version_id))
    report = Report(
        content_hash=content_hash,
        engine_version=ENGINE_VERSION,
        profile_key=key,
        verdict=body["verdict"],
        violations=count(body, "violation"),
        marginals=count(body, "marginal"),
        body=body,
    )
    try:
        with db.begin_nested():
            db.add(report)
    except IntegrityError:  # another request stored it first
        return db.exec(_lookup(content_hash, key)).one()
    db.commit()
    return report


def report_for(db: Session, revision) -> Report:
    """A revision's report, judged by the profile version it records (None: the built-in default)."""
    return cached_report(db, revision.content_hash, revision.document, revision.profile_version_id)


def tighten_for(db: Session, revision) -> list[dict]:
    """What to tighten for a revision (app/engine/tighten.py), judged by the profile version it
    records; asked for, never part of the stored report."""
    from app.engine.tighten import what_to_tighten

    from .profiles import engine_profile

    report = report_for(db, revision).body
    return what_to_tighten(
        parse_design(revision.document), engine_profile(db, revision.profile_version_id), report
    )


def windows_for(db: Session, revision) -> list[dict]:
    """The design window of a revision (app/engine/window.py), judged by the same profile version
    as its report. It evaluates the design a few hundred times: asked for, never part of the
    stored report."""
    from app.engine.window import design_windows

    from .profiles import engine_profile

    profile = engine_profile(db, revision.profile_version_id)
    try:
        return finite_json(design_windows(parse_design(revision.document), profile))
    except DesignError as exc:
        raise InputProblems([split_problem(line) for line in exc.problems]) from None


# The most samples the web app draws for one request: about a second of one worker's time.
WEB_MAX_SAMPLES = 100_000


def yield_for(db: Session, revision, samples: int, seed: int) -> dict:
    """The Monte Carlo yield of a revision (app/engine/montecarlo.py), judged by the profile
    version it records; asked for, never part of the stored report."""
    from app.engine.montecarlo import monte_carlo

    from .profiles import engine_profile

    if not 1 <= samples <= WEB_MAX_SAMPLES:
        raise InputProblems([("samples", f"from 1 to {WEB_MAX_SAMPLES}")])
    if not 0 <= seed < 2**63:
        raise InputProblems([("seed", "from 0 to 2**63 − 1")])
    profile = engine_profile(db, revision.profile_version_id)
    try:
        return finite_json(monte_carlo(parse_design(revision.document), profile, samples, seed))
    except DesignError as exc:
        raise InputProblems([split_problem(line) for line in exc.problems]) from None
