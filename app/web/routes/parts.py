"""The parts library pages: list and search, create, edit, remove, CSV import and export, and the
picker the new-revision form swaps in through htmx."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import RedirectResponse, Response

from app.engine.design import PART_DETAILS

from ..deps import DB, DbRoute, LibraryEditor, PostedForm, Viewer
from ..models import PART_KINDS
from ..services import parts
from ..services.documents import SLOT_KINDS
from ..services.errors import InputProblems
from ..templating import Kept, kept_response, redirect_done, render, viewer_key

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _kind(kind: str | None) -> str | None:
    if kind in (None, ""):
        return None
    if kind not in PART_KINDS:
        raise InputProblems([("kind", f"{kind!r} is not a part kind; allowed: {', '.join(PART_KINDS)}")], 400)
    return kind


@router.get("/parts")
async def parts_page(request: Request, user: Viewer, kind: str = "", q: str = "", archived: bool = False):
    """The list, or its table alone for htmx; kept whole per viewer (the edit and remove forms
    depend on the role and carry the CSRF token), query and data version (migration 0007 makes
    every change to the part table bump it)."""
    checked = _kind(kind)
    partial = bool(request.headers.get("HX-Request"))

    def build(db) -> Kept:
        found = parts.search_parts(db, checked, q, include_archived=archived)
        return Kept.of(
            render(
                request,
                "partials/_parts_table.html" if partial else "parts.html",
                parts=found,
                kind=kind,
                q=q,
                archived=archived,
                kinds=PART_KINDS,
                titles=parts.KIND_TITLES,
                import_errors=[],
                imported=None,
            )
        )

    key = ("parts-page", kind, q, archived, partial, *viewer_key(request, user))
    return await kept_response(request, key, build)


@router.get("/parts/picker")
def part_picker(request: Request, db: DB, user: Viewer, slot: str, q: str = ""):
    if slot not in SLOT_KINDS:
        raise InputProblems([("slot", f"{slot!r} is not a part slot; allowed: {', '.join(SLOT_KINDS)}")], 400)
    selected = request.query_params.get(slot, "")
    found = parts.search_parts(db, SLOT_KINDS[slot], q, limit=50)
    if selected.isdigit() and int(selected) <= 2**31 - 1 and all(str(p.id) != selected for p in found):
        chosen = db.get(parts.Part, int(selected))
        if chosen is not None and chosen.kind in parts.kinds_for(SLOT_KINDS[slot]):
            found.insert(0, chosen)
    return render(
        request, "partials/_part_picker.html", slot=slot, options=found, selected=selected, errors={}
    )


def _form(kind: str, part=None, values=None, errors=None, status_code=200, request=None):
    return render(
        request,
        "part_form.html",
        status_code=status_code,
        kind=kind,
        part=part,
        fields=parts.param_fields(kind),
        values=values or {},
        errors=errors or {},
        title=parts.KIND_TITLES[kind],
    )


@router.get("/parts/new")
def new_part_page(request: Request, user: LibraryEditor, kind: str = "transistor"):
    return _form(_kind(kind) or "transistor", request=request)


def _values(form, kind: str) -> dict[str, str]:
    names = ["name", "notes", *PART_DETAILS] + [name for name, _ in parts.param_fields(kind)]
    return {name: str(form.get(name, "")) for name in names}


def _params(values: dict[str, str]) -> dict[str, str]:
    return {k: v for k, v in values.items() if k not in ("name", "notes", *PART_DETAILS)}


def _details(values: dict[str, str]) -> dict[str, str]:
    return {k: values[k] for k in PART_DETAILS}


@router.post("/parts")
def create_part(request: Request, db: DB, user: LibraryEditor, form: PostedForm):
    kind = _kind(str(form.get("kind", ""))) or "transistor"
    values = _values(form, kind)
    try:
        part = parts.create_part(db, kind, values["name"], _params(values), values["notes"], _details(values))
    except InputProblems as exc:
        return _form(
            kind, values=values, errors=dict(exc.problems), status_code=exc.status_code, request=request
        )
    return redirect_done(request, f"/parts/{part.id}", f"Part “{part.name}” added to the library.")


@router.get("/parts/export.csv")
def export_parts(db: DB, user: Viewer, kind: str):
    kind = _kind(kind) or "transistor"
    return Response(
        parts.export_csv(db, kind),
        media_type="text/csv; charset=utf-8",
        headers={"Content-Disposition": f'attachment; filename="parts-{kind}.csv"'},
    )


@router.post("/parts/import")
def import_parts(request: Request, db: DB, user: LibraryEditor, form: PostedForm):
    kind = _kind(str(form.get("kind", ""))) or "transistor"
    upload = form.get("file")
    problems: list[str] = []
    imported = None
    status = 422
    limit = request.app.state.settings.csv_import_max_bytes
    if upload is None or isinstance(upload, str) or not upload.filename:
        problems.append("file: choose a CSV file whose first row names the columns")
    else:
        raw = upload.file.read(limit + 1)  # a plain-function route: read in this worker thread
        if len(raw) > limit:  # refused whole: a file cut at the limit would store a cut last row
            status = 413
            problems.append(
                f"file: larger than the limit of {limit:,} bytes (CLAMPDOWN_CSV_IMPORT_MAX_BYTES); "
                "nothing was imported; split the file"
            )
        else:
            try:
                imported = parts.import_csv(db, kind, raw.decode("utf-8-sig"))
            except UnicodeDecodeError:
                problems.append("file: not UTF-8 text")
            except InputProblems as exc:
                problems += [f"{p}: {m}" for p, m in exc.problems]
    found = parts.search_parts(db, kind)
    return render(
        request,
        "parts.html",
        status_code=status if problems else 200,
        parts=found,
        kind=kind,
        q="",
        archived=False,
        kinds=PART_KINDS,
        titles=parts.KIND_TITLES,
        import_errors=problems,
        imported=imported,
    )


@router.get("/parts/{part_id}")
def part_page(request: Request, db: DB, user: Viewer, part_id: int, saved: bool = False):
    """One part for everyone signed in: its details, parameters, notes and the revisions that froze it."""
    part = parts.get_part(db, part_id)
    return render(
        request,
        "part.html",
        part=part,
        title=parts.KIND_TITLES[part.kind],
        fields=parts.param_fields(part.kind),
        used_by=parts.used_by(db, part_id),
        saved=saved,
    )


@router.get("/parts/{part_id}/edit")
def edit_part_page(request: Request, db: DB, user: LibraryEditor, part_id: int):
    part = parts.get_part(db, part_id)
    values = {
        "name": part.name,
        "notes": part.notes,
        **{k: getattr(part, k) for k in PART_DETAILS},
        **{k: str(v) for k, v in parts.flat_params(part.params).items()},
    }
    return _form(part.kind, part=part, values=values, request=request)


@router.post("/parts/{part_id}")
def update_part(request: Request, db: DB, user: LibraryEditor, part_id: int, form: PostedForm):
    part = parts.get_part(db, part_id)
    values = _values(form, part.kind)
    try:
        saved = parts.update_part(
            db, part_id, values["name"], _params(values), values["notes"], _details(values)
        )
    except InputProblems as exc:
        return _form(
            part.kind,
            part=part,
            values=values,
            errors=dict(exc.problems),
            status_code=exc.status_code,
            request=request,
        )
    name = saved.name
    return redirect_done(
        request, f"/parts/{part_id}", f"Part “{name}” saved; revisions keep the copies they froze."
    )


@router.post("/parts/{part_id}/remove")
def remove_part(db: DB, user: LibraryEditor, part_id: int):
    kind = parts.get_part(db, part_id).kind
    outcome = parts.remove_part(db, part_id)
    return RedirectResponse(f"/parts?kind={kind}&removed={outcome}", status_code=303)


@router.post("/parts/{part_id}/restore")
def restore_part(db: DB, user: LibraryEditor, part_id: int):
    part = parts.restore_part(db, part_id)
    return RedirectResponse(f"/parts?kind={part.kind}", status_code=303)
