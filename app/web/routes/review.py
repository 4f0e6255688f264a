"""Review pages and actions: the review page, the workflow's actions, compare, the printed record.

Each action route reads its form, calls one service function and redirects back to the review
page; the service decides (through app.signoff.workflow) and owns the transaction. Refusals
arrive as InputProblems (403 for who, 409 for when) and render as the error page."""

from __future__ import annotations

import json
from typing import Annotated

from fastapi import APIRouter, File, Form, Request, UploadFile
from fastapi.responses import RedirectResponse, Response

from ..deps import DB, DbRoute, Viewer
from ..services import record, review
from ..services.errors import InputProblems
from ..templating import render

router = APIRouter(include_in_schema=False, route_class=DbRoute)


def _back(revision_id: int) -> RedirectResponse:
    return RedirectResponse(f"/revisions/{revision_id}/review", status_code=303)


# The action routes are plain functions, so FastAPI runs them in its thread pool: a request
# waiting for the trail's lock never holds up the event loop or the other requests.
Text = Annotated[str, Form()]


@router.get("/revisions/{revision_id}/review")
def review_page(request: Request, db: DB, user: Viewer, revision_id: int):
    return render(request, "review.html", **record.page_context(db, revision_id, user))


@router.post("/revisions/{revision_id}/hand-in")
def hand_in(db: DB, user: Viewer, revision_id: int, note: Text = ""):
    review.hand_in(db, revision_id, user, note)
    return _back(revision_id)


@router.post("/revisions/{revision_id}/comments")
def comment(db: DB, user: Viewer, revision_id: int, text: Text = "", finding: Text = ""):
    review.comment(db, revision_id, user, text, finding)
    return _back(revision_id)


@router.post("/revisions/{revision_id}/waivers")
def waive(db: DB, user: Viewer, revision_id: int, finding: Text = "", justification: Text = ""):
    review.waive(db, revision_id, user, finding, justification)
    return _back(revision_id)


@router.post("/revisions/{revision_id}/send-back")
def send_back(db: DB, user: Viewer, revision_id: int, note: Text = ""):
    review.send_back(db, revision_id, user, note)
    return _back(revision_id)


@router.post("/revisions/{revision_id}/sign-off")
def sign_off(db: DB, user: Viewer, revision_id: int, note: Text = ""):
    review.sign_off(db, revision_id, user, note)
    return _back(revision_id)


MAX_UPLOAD = 1_000_000


@router.post("/revisions/{revision_id}/replace")
def replace(
    db: DB,
    user: Viewer,
    revision_id: int,
    file: Annotated[UploadFile | None, File()] = None,
    change_note: Text = "",
):
    """The author uploads a new design file in place of a draft's."""
    if file is None or not file.filename:
        raise InputProblems([("file", "choose a design file (JSON, clampdown-design/1)")])
    raw = file.file.read(MAX_UPLOAD + 1)
    if len(raw) > MAX_UPLOAD:
        raise InputProblems([("file", f"larger than {MAX_UPLOAD // 1000} kB; a design file is a few kB")])
    try:
        document = json.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputProblems([("file", f"not JSON ({exc})")]) from None
    review.replace_draft(db, revision_id, user, document, change_note)
    return _back(revision_id)


@router.get("/channels/{channel_id}/compare")
def compare_page(
    request: Request, db: DB, user: Viewer, channel_id: int, old: int | None = None, new: int | None = None
):
    return render(request, "compare.html", **record.compare_context(db, channel_id, old, new))


@router.get("/revisions/{revision_id}/record")
def record_page(request: Request, db: DB, user: Viewer, revision_id: int):
    return render(request, "record.html", **record.record_context(db, revision_id), pdf=False)


@router.get("/revisions/{revision_id}/record.pdf")
def record_pdf(request: Request, db: DB, user: Viewer, revision_id: int):
    context = record.record_context(db, revision_id)
    html = request.app.state.templates.get_template("record.html").render(**context, pdf=True)
    pdf = record.render_pdf(html, base_url=str(request.base_url))
    if pdf is None:
        return render(
            request,
            "error.html",
            status_code=501,
            title="PDF not available here",
            lines=[
                'This server cannot make PDFs (WeasyPrint is not installed: pip install ".[pdf]", '
                "which needs the Pango library).",
                f"Open the printed record (/revisions/{revision_id}/record) and use the browser's "
                "Print → Save as PDF; the page is laid out for A4 and Letter.",
            ],
        )
    name = f"record-{context['view'].channel.id}-rev-{context['view'].revision.label}.pdf"
    return Response(
        pdf, media_type="application/pdf", headers={"Content-Disposition": f'attachment; filename="{name}"'}
    )
