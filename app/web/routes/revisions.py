"""Revision pages: read, download, the new-revision form with its live preview, and upload."""

from __future__ import annotations

import json

from fastapi import APIRouter, Request
from fastapi.responses import Response
from markupsafe import Markup

from app.engine import ENGINE_VERSION, DesignError

from ..deps import DB, DbRoute, PostedForm, RevisionAuthor, Viewer
from ..permissions import can
from ..services import findings_view, fixtures, pictures, record, revision_form, revisions
from ..services.documents import canonical_json, load_json_file
from ..services.errors import InputProblems
from ..services.parts import search_parts
from ..services.reports import WEB_MAX_SAMPLES, evaluate_document, tighten_for, windows_for, yield_for
from ..templating import Kept, kept_response, redirect_done, render, viewer_key
from .pages import channel_context

router = APIRouter(include_in_schema=False, route_class=DbRoute)


@router.get("/revisions/{revision_id}")
async def revision_page(request: Request, user: Viewer, revision_id: int, sort: str = ""):
    # The page shows the revision, its report, its trail, its author and the revision to compare
    # with (which depends on other revisions): the data version changes with any of them, the
    # engine version with the report (kept_response adds both to the key). The actions offered
    # depend on who looks and carry the session's CSRF token (viewer_key); so does the sort order.
    can_edit = can(user, "create_revision")
    sort = findings_view.sort_key(sort)

    def build(db) -> Kept:
        token = request.app.state.signer.csrf_token(request.state.session)
        context = record.page_context(db, revision_id, user, sort=sort, store=request.app.state.pictures)
        body = request.app.state.templates.get_template("partials/_revision_body.html").render(
            **context, can_edit=can_edit, user=user, csrf_token=token
        )
        title = f"{context['view'].channel.name} rev {context['view'].revision.label}"
        return Kept.of(render(request, "revision.html", title=title, body=Markup(body)))

    return await kept_response(request, ("revision", revision_id, sort, *viewer_key(request, user)), build)


@router.get("/revisions/{revision_id}/tighten")
def tighten_page(request: Request, db: DB, user: Viewer, revision_id: int):
    """Which tolerance moves each rule's margin, and by how much when halved."""
    view = revisions.revision_view(db, revision_id)
    r = view.revision
    key = ("tighten", r.content_hash, r.profile_version_id, ENGINE_VERSION)
    entries = request.app.state.fragments.kept(key, lambda: tighten_for(db, r))
    return render(
        request,
        "tighten.html",
        title=f"{view.channel.name} rev {view.revision.label}: what to tighten",
        view=view,
        entries=entries,
    )


@router.get("/revisions/{revision_id}/yield")
def yield_page(
    request: Request, db: DB, user: Viewer, revision_id: int, samples: int = 10_000, seed: int = 1
):
    """The Monte Carlo yield, on demand: kept per content, profile version, engine, samples, seed."""
    view = revisions.revision_view(db, revision_id)
    r = view.revision
    key = ("yield", r.content_hash, r.profile_version_id, ENGINE_VERSION, samples, seed)
    result = request.app.state.fragments.kept(key, lambda: yield_for(db, r, samples, seed))
    return render(
        request,
        "yield.html",
        title=f"{view.channel.name} rev {r.label}: Monte Carlo yield",
        view=view,
        result=result,
        max_samples=WEB_MAX_SAMPLES,
    )


@router.get("/revisions/{revision_id}/windows")
def revision_windows(request: Request, db: DB, user: Viewer, revision_id: int):
    """The design window, asked for from the revision page: the partial for htmx, else a page.
    It depends on the content, the profile version and the engine alone, so it is kept by them."""
    revision = revisions.get_revision(db, revision_id)
    key = ("windows", revision.content_hash, revision.profile_version_id, ENGINE_VERSION)
    template = request.app.state.templates.get_template("partials/_windows.html")
    body = request.app.state.fragments.kept(
        key, lambda: Markup(template.render(windows=windows_for(db, revision)))
    )
    if request.headers.get("HX-Request"):
        return render(request, "partials/_fragment.html", body=body)
    channel = fixtures.get_channel(db, revision.channel_id)
    return render(
        request,
        "revision_windows.html",
        title=f"{channel.name} rev {revision.label}: design window",
        revision=revision,
        channel=channel,
        body=body,
    )


@router.get("/revisions/{revision_id}/pictures/{name}.svg")
def revision_picture(request: Request, db: DB, user: Viewer, revision_id: int, name: str):
    """One picture of the revision as SVG. A draft's document can be replaced under the same id,
    so the browser revalidates every time (no-cache) against an ETag of what it was drawn from."""
    revision = revisions.get_revision(db, revision_id)
    pictures.check_name(name)
    tag = f'"{revision.content_hash[:20]}-{ENGINE_VERSION}-{revision.profile_version_id or 0}-{name}"'
    headers = {"ETag": tag, "Cache-Control": "private, no-cache"}
    if request.headers.get("if-none-match") == tag:  # the browser has it: nothing to draw or send
        return Response(status_code=304, headers=headers)
    drawn = pictures.picture(db, revision, request.app.state.pictures, name)
    return Response(drawn.svg, media_type="image/svg+xml", headers=headers)


@router.get("/revisions/{revision_id}/design.json")
def download_design(db: DB, user: Viewer, revision_id: int):
    """The stored document, byte for byte what was hashed apart from indentation."""
    revision = revisions.get_revision(db, revision_id)
    channel = fixtures.get_channel(db, revision.channel_id)
    filename = f"channel-{channel.id}-rev-{revision.label}.json"
    body = json.dumps(revision.document, indent=2, ensure_ascii=False) + "\n"
    return Response(
        body,
        media_type="application/json",
        headers={
            "Content-Disposition": f'attachment; filename="{filename}"',
            "X-Content-SHA256": revision.content_hash,
        },
    )


def _form_context(db, channel_id: int, values: dict[str, str], errors: dict[str, list[str]]) -> dict:
    channel = fixtures.get_channel(db, channel_id)
    pickers = {
        slot: search_parts(db, revision_form.SLOT_KINDS[slot], "", limit=50)
        for slot in revision_form.PART_SLOTS
    }
    return {
        "channel": channel,
        "fixture": fixtures.get_fixture(db, channel.fixture_id),
        "sections": revision_form.SECTIONS,
        "values": values,
        "errors": errors,
        "pickers": pickers,
        "slot_kinds": revision_form.SLOT_KINDS,
        "applies": revision_form.applies,
    }


def _preview(db, values: dict[str, str], store=None) -> tuple[dict | None, dict[str, list[str]], dict]:
    """(report, problems by field, pictures): the pictures only when a store is given (the live
    preview draws the schematic and the turn-off as the values change)."""
    try:
        document, _ = revision_form.build_document(db, values)
    except InputProblems as exc:
        return None, revision_form.problems_by_field(exc.problems), {}
    report = evaluate_document(document)
    drawn = pictures.for_document(document, store) if store is not None else {}
    return report, {}, drawn


@router.get("/channels/{channel_id}/new")
def new_revision_page(request: Request, db: DB, user: RevisionAuthor, channel_id: int):
    channel = fixtures.get_channel(db, channel_id)
    latest = revisions.latest_revision(db, channel_id)
    if latest is not None:
        values = revision_form.values_from_document(db, latest.document, revisions.part_links(db, latest.id))
    else:
        values = {path: "" for path in revision_form.FIELDS}
        values.update({"name": channel.name, "drive.kind": "logic", "clamp.kind": "diode"})
    values["change_note"] = ""
    report, errors, drawn = (
        _preview(db, values, request.app.state.pictures) if latest is not None else (None, {}, {})
    )
    return render(
        request,
        "revision_new.html",
        latest=latest,
        report=report,
        pictures=drawn,
        **_form_context(db, channel_id, values, errors),
    )


@router.post("/channels/{channel_id}/preview")
def preview(request: Request, db: DB, user: RevisionAuthor, channel_id: int, form: PostedForm):
    values = revision_form.values_from_form(form)
    report, errors, drawn = _preview(db, values, request.app.state.pictures)
    context = _form_context(db, channel_id, values, errors)
    refresh_fields = request.headers.get("HX-Trigger-Name") in ("drive.kind", "clamp.kind")
    return render(
        request,
        "partials/_preview_swap.html",
        report=report,
        pictures=drawn,
        refresh_fields=refresh_fields,
        **context,
    )


@router.post("/channels/{channel_id}/revisions")
def save_revision(request: Request, db: DB, user: RevisionAuthor, channel_id: int, form: PostedForm):
    values = revision_form.values_from_form(form)
    values["change_note"] = str(form.get("change_note", "")).strip()
    try:
        document, links = revision_form.build_document(db, values)
        revision = revisions.create_revision(
            db, channel_id, document, user, values["change_note"], source="form", part_links=links
        )
    except InputProblems as exc:
        report, _, drawn = _preview(db, values, request.app.state.pictures)
        context = _form_context(db, channel_id, values, revision_form.problems_by_field(exc.problems))
        return render(
            request,
            "revision_new.html",
            status_code=422,
            latest=None,
            report=report,
            pictures=drawn,
            **context,
        )
    return redirect_done(request, f"/revisions/{revision.id}", _saved(revision))


def _saved(revision) -> str:
    return f"Rev {revision.label} saved as a draft. Hand it in when it is ready for review."


MAX_UPLOAD = 1_000_000


@router.post("/channels/{channel_id}/upload")
def upload_revision(request: Request, db: DB, user: RevisionAuthor, channel_id: int, form: PostedForm):
    upload = form.get("file")
    change_note = str(form.get("change_note", ""))
    problems: list[str] = []
    document = None
    if upload is None or isinstance(upload, str) or not upload.filename:
        problems.append("file: choose a design file (JSON, clampdown-design/1)")
    else:
        raw = upload.file.read(MAX_UPLOAD + 1)
        if len(raw) > MAX_UPLOAD:
            problems.append(f"file: larger than {MAX_UPLOAD // 1000} kB; a design file is a few kB")
        else:
            try:
                document = load_json_file(raw)
            except InputProblems as exc:
                problems += [f"{p}: {m}" for p, m in exc.problems]
    if document is not None:
        try:
            revision = revisions.create_revision(db, channel_id, document, user, change_note, source="upload")
            return redirect_done(request, f"/revisions/{revision.id}", _saved(revision))
        except InputProblems as exc:
            problems += [f"{p}: {m}" for p, m in exc.problems]
        except DesignError as exc:  # pragma: no cover - create_revision converts these
            problems += exc.problems
    return render(
        request,
        "channel.html",
        status_code=422,
        **channel_context(request, db, channel_id),
        upload_errors=problems,
    )


__all__ = ["canonical_json", "router"]
