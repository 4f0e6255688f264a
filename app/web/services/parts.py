"""The parts library: validated with the engine's own part models; used parts are archived."""

from __future__ import annotations

import csv
import io
from typing import get_args

from pydantic import BaseModel
from pydantic.fields import FieldInfo
from sqlalchemy import exists, func
from sqlmodel import Session, select

from app.engine.design import Coil, DesignError, Diode, Transistor, Tvs, Zener, parse_part

from ..models import PART_KINDS, Part, RevisionPart, utcnow
from .documents import set_path, typed_value
from .errors import InputProblems, check_text, get_or_not_found, split_problem

PART_MODELS = {"transistor": Transistor, "diode": Diode, "zener": Zener, "tvs": Tvs, "coil": Coil}
KIND_TITLES = {
    "transistor": "NPN transistor",
    "diode": "Diode",
    "zener": "Zener",
    "tvs": "TVS",
    "coil": "Coil",
}


def _nested_model(info: FieldInfo) -> type[BaseModel] | None:
    """The model of an optional nested block (a coil's ``contacts``), else None."""
    for arg in (info.annotation, *get_args(info.annotation)):
        if isinstance(arg, type) and issubclass(arg, BaseModel):
            return arg
    return None


def param_fields(kind: str) -> list[tuple[str, FieldInfo]]:
    """The parameter names of a kind, in the design file's spelling (``is`` for I_S), without name.
    A nested block's fields come as dotted names (``contacts.current``), one form field or CSV
    column each."""
    model = PART_MODELS[kind]
    out = []
    for attr, info in model.model_fields.items():
        if attr in ("name", "kind"):
            continue
        nested = _nested_model(info)
        if nested is not None:
            for sub, sub_info in nested.model_fields.items():
                out.append((f"{info.alias or attr}.{sub}", sub_info))
            continue
        out.append((info.alias or attr, info))
    return out


def flat_params(params: dict) -> dict:
    """A part's stored parameters with nested blocks as dotted names, for the form and the CSV."""
    out: dict = {}
    for key, value in params.items():
        if isinstance(value, dict):
            out.update({f"{key}.{sub}": v for sub, v in value.items()})
        else:
            out[key] = value
    return out


def _check_kind(kind: str) -> None:
    if kind not in PART_KINDS:
        raise InputProblems([("kind", f"{kind!r} is not a part kind; allowed: {', '.join(PART_KINDS)}")])


def clean_params(kind: str, params: dict) -> dict:
    """Drop empty values, keep what was typed; raise InputProblems naming each bad field."""
    _check_kind(kind)
    allowed = {name for name, _ in param_fields(kind)}
    kept: dict = {}
    problems = []
    for key, value in flat_params(params).items():
        if key not in allowed:
            problems.append((key, f"is not a {kind} parameter; allowed: {', '.join(sorted(allowed))}"))
            continue
        if value is None or (isinstance(value, str) and not value.strip()):
            continue
        set_path(kept, key, typed_value(value) if isinstance(value, str) else value)
    if problems:
        raise InputProblems(problems)
    return kept


def validate_part(kind: str, name: str, params: dict) -> dict:
    """Validate with the engine's model for the kind; return the cleaned parameters."""
    kept = clean_params(kind, params)
    problems = []
    try:
        name = check_text("name", name, 200, required=True)
    except InputProblems as exc:
        problems += exc.problems
        name = ""
    from .documents import part_document

    probe = Part(kind=kind, name=name or "unnamed", params=kept)
    try:
        parse_part(PART_MODELS[kind], part_document(probe))
    except DesignError as exc:
        problems += [split_problem(line) for line in exc.problems]
    if problems:
        raise InputProblems([(("name" if p == "(design)" else p), m) for p, m in problems])
    return kept


def _name_taken(db: Session, kind: str, name: str, except_id: int | None = None) -> bool:
    query = select(Part.id).where(Part.kind == kind, Part.name == name)
    if except_id is not None:
        query = query.where(Part.id != except_id)
    return db.exec(query).first() is not None


def create_part(db: Session, kind: str, name: str, params: dict, notes: str = "") -> Part:
    kept = validate_part(kind, name, params)
    notes = check_text("notes", notes, 5000)
    name = name.strip()
    if _name_taken(db, kind, name):
        raise InputProblems(
            [("name", f"a {kind} named {name!r} already exists; names are unique within a kind")]
        )
    part = Part(kind=kind, name=name, params=kept, notes=(notes or "").strip())
    db.add(part)
    db.commit()
    db.refresh(part)
    return part


def update_part(db: Session, part_id: int, name: str, params: dict, notes: str = "") -> Part:
    """Change a library part. Stored revisions keep their own frozen copies, so none changes."""
    part = get_part(db, part_id)
    kept = validate_part(part.kind, name, params)
    notes = check_text("notes", notes, 5000)
    name = name.strip()
    if _name_taken(db, part.kind, name, except_id=part.id):
        raise InputProblems(
            [("name", f"a {part.kind} named {name!r} already exists; names are unique within a kind")]
        )
    part.name, part.params, part.notes, part.updated_at = name, kept, (notes or "").strip(), utcnow()
    db.add(part)
    db.commit()
    db.refresh(part)
    return part


def get_part(db: Session, part_id: int) -> Part:
    return get_or_not_found(db, Part, part_id, "part")


def is_used(db: Session, part_id: int) -> bool:
    return bool(db.exec(select(exists().where(RevisionPart.part_id == part_id))).one())


def remove_part(db: Session, part_id: int) -> str:
    """Delete an unused part; archive one that any revision used. Returns "deleted" or "archived"."""
    part = get_part(db, part_id)
    if is_used(db, part_id):
        part.archived, part.updated_at = True, utcnow()
        db.add(part)
        outcome = "archived"
    else:
        db.delete(part)
        outcome = "deleted"
    db.commit()
    return outcome


def restore_part(db: Session, part_id: int) -> Part:
    part = get_part(db, part_id)
    part.archived, part.updated_at = False, utcnow()
    db.add(part)
    db.commit()
    db.refresh(part)
    return part


def search_parts(
    db: Session, kind: str | None = None, q: str = "", include_archived: bool = False, limit: int = 200
) -> list[Part]:
    query = select(Part)
    if kind:
        _check_kind(kind)
        query = query.where(Part.kind == kind)
    if q.strip():
        text = q.strip().lower().replace("\x00", "")
        query = query.where(func.lower(Part.name).contains(text, autoescape=True))
    if not include_archived:
        query = query.where(Part.archived == False)  # noqa: E712
    return list(db.exec(query.order_by(Part.kind, Part.name).limit(limit)))


# ---------------------------------------------------------------- CSV


def export_csv(db: Session, kind: str) -> str:
    """One row per part of the kind; columns: name, notes, then the parameter names."""
    _check_kind(kind)
    columns = ["name", "notes"] + [name for name, _ in param_fields(kind)]
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    for part in search_parts(db, kind, include_archived=True, limit=100000):
        flat = flat_params(part.params)
        writer.writerow({"name": part.name, "notes": part.notes, **{k: flat.get(k, "") for k in columns[2:]}})
    return out.getvalue()


def import_csv(db: Session, kind: str, text: str) -> dict[str, int]:
    """Create new parts and update same-named ones, all or nothing: one bad row stores none."""
    _check_kind(kind)
    reader = csv.DictReader(io.StringIO(text))
    allowed = {"name", "notes"} | {name for name, _ in param_fields(kind)}
    if not reader.fieldnames or "name" not in reader.fieldnames:
        raise InputProblems([("file", "the first row must name the columns, including name")])
    unknown = [c for c in reader.fieldnames if c not in allowed]
    if unknown:
        raise InputProblems(
            [("file", f"unknown columns {', '.join(unknown)}; allowed: {', '.join(sorted(allowed))}")]
        )
    rows, problems, seen = [], [], set()
    for number, row in enumerate(reader, start=2):
        name = (row.get("name") or "").strip()
        params = {k: v for k, v in row.items() if k not in ("name", "notes") and k is not None}
        try:
            kept = validate_part(kind, name, params)
            check_text("notes", row.get("notes"), 5000)
        except InputProblems as exc:
            problems += [(f"row {number}.{path}", message) for path, message in exc.problems]
            continue
        if name.lower() in seen:
            problems.append((f"row {number}.name", f"{name!r} appears twice in the file"))
        seen.add(name.lower())
        rows.append((name, kept, (row.get("notes") or "").strip()))
    if problems:
        raise InputProblems(problems)
    created = updated = 0
    for name, kept, notes in rows:
        existing = db.exec(select(Part).where(Part.kind == kind, Part.name == name)).first()
        if existing:
            existing.params, existing.notes, existing.updated_at = kept, notes, utcnow()
            db.add(existing)
            updated += 1
        else:
            db.add(Part(kind=kind, name=name, params=kept, notes=notes))
            created += 1
    db.commit()
    return {"created": created, "updated": updated}
