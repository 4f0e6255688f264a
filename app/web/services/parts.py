"""The parts library: validated with the engine's own part models; used parts are archived."""

from __future__ import annotations

import csv
import io
from typing import get_args

from pydantic import BaseModel
from pydantic.fields import FieldInfo
from sqlalchemy import exists, func
from sqlmodel import Session, select

from app.engine.design import PART_DETAILS, Coil, DesignError, Diode, Tvs, Zener, parse_part
from app.engine.switches import part_kinds

from ..models import PART_KINDS, Channel, Part, Revision, RevisionPart, utcnow
from .documents import _NUMBER, set_path, typed_value
from .errors import InputProblems, check_text, commit_or_conflict, get_or_not_found, split_problem

# Switch parts from the engine's switch registry: transistor (NPN), nmos, darlington_array.
PART_MODELS = {
    **{part: kind.model for part, kind in part_kinds().items()},
    "diode": Diode,
    "zener": Zener,
    "tvs": Tvs,
    "coil": Coil,
}
KIND_TITLES = {
    **{part: kind.title for part, kind in part_kinds().items()},
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
        if attr in ("name", "kind") or attr in PART_DETAILS:
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


def kinds_for(slot_kind: str) -> tuple[str, ...]:
    """The part kinds a slot takes: "switch" takes every switch part kind, else the one kind."""
    return tuple(part_kinds()) if slot_kind == "switch" else (slot_kind,)


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


DETAIL_LIMITS = {"maker_part": 100, "package": 60, "datasheet": 500}  # the columns' lengths


def clean_details(details: dict | None) -> dict[str, str]:
    """Maker part number, package and datasheet link as typed (text, never numbers), trimmed;
    raises InputProblems naming each bad one (the engine's part model checks the link)."""
    details = details or {}
    problems = [
        (key, f"is not a part detail; allowed: {', '.join(PART_DETAILS)}")
        for key in details
        if key not in PART_DETAILS
    ]
    out = {}
    for key in PART_DETAILS:
        value = details.get(key)
        try:
            out[key] = check_text(key, "" if value is None else str(value), DETAIL_LIMITS[key])
        except InputProblems as exc:
            problems += exc.problems
    if problems:
        raise InputProblems(problems)
    return out


def validate_part(kind: str, name: str, params: dict, details: dict | None = None) -> dict:
    """Validate with the engine's model for the kind; return the cleaned parameters."""
    kept = clean_params(kind, params)
    problems = []
    try:
        details = clean_details(details)
    except InputProblems as exc:
        problems += exc.problems
        details = {}
    try:
        name = check_text("name", name, 200, required=True)
    except InputProblems as exc:
        problems += exc.problems
        name = ""
    from .documents import part_document

    probe = Part(kind=kind, name=name or "unnamed", params=kept, **details)
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


def create_part(
    db: Session, kind: str, name: str, params: dict, notes: str = "", details: dict | None = None
) -> Part:
    kept = validate_part(kind, name, params, details)
    details = clean_details(details)
    notes = check_text("notes", notes, 5000)
    name = name.strip()
    if _name_taken(db, kind, name):
        raise InputProblems(
            [("name", f"a {kind} named {name!r} already exists; names are unique within a kind")], 409
        )
    part = Part(kind=kind, name=name, params=kept, notes=(notes or "").strip(), **details)
    db.add(part)
    commit_or_conflict(db, "name", f"a {kind} named {name!r} already exists; names are unique within a kind")
    db.refresh(part)
    return part


def update_part(
    db: Session, part_id: int, name: str, params: dict, notes: str = "", details: dict | None = None
) -> Part:
    """Change a library part. Stored revisions keep their own frozen copies, so none changes.
    Details left out (None) stay as they are."""
    part = get_part(db, part_id)
    if details is None:
        details = {key: getattr(part, key) for key in PART_DETAILS}
    kept = validate_part(part.kind, name, params, details)
    details = clean_details(details)
    notes = check_text("notes", notes, 5000)
    name = name.strip()
    if _name_taken(db, part.kind, name, except_id=part.id):
        raise InputProblems(
            [("name", f"a {part.kind} named {name!r} already exists; names are unique within a kind")], 409
        )
    part.name, part.params, part.notes, part.updated_at = name, kept, (notes or "").strip(), utcnow()
    for key, value in details.items():
        setattr(part, key, value)
    db.add(part)
    commit_or_conflict(
        db, "name", f"a {part.kind} named {name!r} already exists; names are unique within a kind"
    )
    db.refresh(part)
    return part


def get_part(db: Session, part_id: int) -> Part:
    return get_or_not_found(db, Part, part_id, "part")


def is_used(db: Session, part_id: int) -> bool:
    return bool(db.exec(select(exists().where(RevisionPart.part_id == part_id))).one())


def used_by(db: Session, part_id: int) -> list[tuple[Revision, Channel, str]]:
    """(revision, channel, slot) of every revision that froze a copy of the part, newest first."""
    rows = db.exec(
        select(Revision, Channel, RevisionPart.slot)
        .join(RevisionPart, RevisionPart.revision_id == Revision.id)
        .join(Channel, Channel.id == Revision.channel_id)
        .where(RevisionPart.part_id == part_id)
        .order_by(Revision.id.desc())
        .limit(200)
    )
    return [tuple(row) for row in rows]


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
        kinds = kinds_for(kind)
        for one in kinds:
            _check_kind(one)
        query = query.where(Part.kind.in_(kinds))
    if q.strip():
        text = q.strip().lower().replace("\x00", "")
        query = query.where(func.lower(Part.name).contains(text, autoescape=True))
    if not include_archived:
        query = query.where(Part.archived == False)  # noqa: E712
    return list(db.exec(query.order_by(Part.kind, Part.name).limit(limit)))


# ---------------------------------------------------------------- CSV

# Spreadsheets run a cell that starts with one of these as a formula (OWASP, "CSV Injection").
# Export prefixes such a cell with an apostrophe, and also a cell that already starts with one,
# so that import can strip exactly one leading apostrophe and read back what was stored. Plain
# numbers ("-40", "+1.5e3") stay as they are: as formulas they only evaluate to themselves.
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
ESCAPE = "'"


def neutralise_cell(value) -> str:
    text = "" if value is None else str(value)
    if text.startswith(ESCAPE) or (text.startswith(FORMULA_STARTS) and not _NUMBER.fullmatch(text)):
        return ESCAPE + text
    return text


def restore_cell(text: str | None) -> str | None:
    """The inverse of neutralise_cell for a cell read from an exported file."""
    if text is not None and text.startswith(ESCAPE):
        return text[1:]
    return text


def export_csv(db: Session, kind: str) -> str:
    """One row per part of the kind; columns: name, notes, the details, then the parameter names.
    Cells that a spreadsheet would run as formulas are neutralised (see neutralise_cell)."""
    _check_kind(kind)
    columns = ["name", "notes", *PART_DETAILS] + [name for name, _ in param_fields(kind)]
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    for part in search_parts(db, kind, include_archived=True, limit=100000):
        details = {key: getattr(part, key) for key in PART_DETAILS}
        flat = flat_params(part.params)
        params = {k: flat.get(k, "") for k in columns[2 + len(PART_DETAILS) :]}
        row = {"name": part.name, "notes": part.notes, **details, **params}
        writer.writerow({k: neutralise_cell(v) for k, v in row.items()})
    return out.getvalue()


def _rows(text: str):
    """(line number, fields) of each record; InputProblems naming the row for what the CSV
    reader refuses (a field over its length limit, a NUL character, a broken quote)."""
    reader = csv.reader(io.StringIO(text, newline=""))
    while True:
        try:
            fields = next(reader)
        except StopIteration:
            return
        except csv.Error as exc:
            row = reader.line_num
            message = str(exc)
            if "field larger than field limit" in message:
                message = f"a field is longer than {csv.field_size_limit():,} characters, the most a CSV field may hold here"
            raise InputProblems([(f"row {row}", f"cannot be read as CSV: {message}")]) from None
        yield reader.line_num, fields


def import_csv(db: Session, kind: str, text: str) -> dict[str, int]:
    """Create new parts and update same-named ones, all or nothing: one bad row stores none.
    A row with more or fewer fields than the header names is refused (a cut row never stores)."""
    _check_kind(kind)
    rows_read = _rows(text)
    header = next(rows_read, None)
    allowed = {"name", "notes", *PART_DETAILS} | {name for name, _ in param_fields(kind)}
    fieldnames = [name.strip() for name in header[1]] if header else []
    if not fieldnames or "name" not in fieldnames:
        raise InputProblems([("file", "the first row must name the columns, including name")])
    unknown = [c for c in fieldnames if c not in allowed]
    if unknown:
        raise InputProblems(
            [("file", f"unknown columns {', '.join(unknown)}; allowed: {', '.join(sorted(allowed))}")]
        )
    rows, problems, seen = [], [], set()
    for number, fields in rows_read:
        if not fields:
            continue  # a blank line
        if len(fields) != len(fieldnames):
            problems.append(
                (f"row {number}", f"has {len(fields)} fields; the first row names {len(fieldnames)} columns")
            )
            continue
        row = {k: restore_cell(v) for k, v in zip(fieldnames, fields, strict=True)}
        name = (row.get("name") or "").strip()
        params = {k: v for k, v in row.items() if k not in ("name", "notes", *PART_DETAILS) and k is not None}
        details = {k: row[k] for k in PART_DETAILS if row.get(k) is not None}
        try:
            kept = validate_part(kind, name, params, details)
            details = clean_details(details)
            check_text("notes", row.get("notes"), 5000)
        except InputProblems as exc:
            problems += [(f"row {number}.{path}", message) for path, message in exc.problems]
            continue
        if name.lower() in seen:
            problems.append((f"row {number}.name", f"{name!r} appears twice in the file"))
        seen.add(name.lower())
        rows.append((name, kept, (row.get("notes") or "").strip(), details))
    if problems:
        raise InputProblems(problems)
    created = updated = 0
    for name, kept, notes, details in rows:
        existing = db.exec(select(Part).where(Part.kind == kind, Part.name == name)).first()
        if existing:
            existing.params, existing.notes, existing.updated_at = kept, notes, utcnow()
            for key, value in details.items():  # a column the file leaves out keeps its value
                if key in fieldnames:
                    setattr(existing, key, value)
            db.add(existing)
            updated += 1
        else:
            db.add(Part(kind=kind, name=name, params=kept, notes=notes, **details))
            created += 1
    commit_or_conflict(
        db, "file", "another import or edit stored one of these names at the same moment; try again"
    )
    return {"created": created, "updated": updated}
