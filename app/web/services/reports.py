"""Reports, cached per design content hash and engine version."""

from __future__ import annotations

from sqlalchemy.exc import IntegrityError
from sqlmodel import Session, select

from app.engine import ENGINE_VERSION, DesignError, evaluate, parse_design

from ..models import Report
from .documents import finite_json
from .errors import InputProblems, split_problem


def count(report: dict, status: str) -> int:
    return sum(1 for finding in report["findings"] if finding["status"] == status)


def evaluate_document(document: dict) -> dict:
    """The same report `clampdown check --format json` prints for this document, with any
    number that is not finite given as null (JSON has no infinity). A design the engine refuses
    is InputProblems naming the field."""
    try:
        return finite_json(evaluate(parse_design(document)))
    except DesignError as exc:
        raise InputProblems([split_problem(line) for line in exc.problems]) from None


def cached_report(db: Session, content_hash: str, document: dict) -> Report:
    """The stored report for this content and engine version; evaluated and stored on a miss."""
    found = db.exec(
        select(Report).where(Report.content_hash == content_hash, Report.engine_version == ENGINE_VERSION)
    ).first()
    if found is not None:
        return found
    body = evaluate_document(document)
    report = Report(
        content_hash=content_hash,
        engine_version=ENGINE_VERSION,
        verdict=body["verdict"],
        violations=count(body, "violation"),
        marginals=count(body, "marginal"),
        body=body,
    )
    try:
        with db.begin_nested():
            db.add(report)
    except IntegrityError:  # another request stored it first
        return db.exec(
            select(Report).where(Report.content_hash == content_hash, Report.engine_version == ENGINE_VERSION)
        ).one()
    db.commit()
    return report
