"""The printed record, rendered to PDF by headless Chromium and read back with pdftotext: the
signatures, the waiver and the hashes are on paper. WeasyPrint's download, where installed."""

import shutil
import subprocess

import pytest

from .conftest import K1, revision_ids

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
PDFTOTEXT = shutil.which("pdftotext")


def _k5_signed(world):
    from .conftest import channel_id

    return revision_ids(world, "K5 door-heat warning lamp relay")[-1], channel_id(world, K1)


@pytest.mark.skipif(
    not (CHROMIUM and PDFTOTEXT), reason="needs chromium and pdftotext (Debian: chromium, poppler-utils)"
)
def test_the_printed_record_prints_with_signature_waiver_and_hashes(world, reviewer, tmp_path):
    from sqlmodel import Session, select

    from app.web.models import TrailEntry

    rev, _ = _k5_signed(world)
    html = reviewer.get(f"/revisions/{rev}/record").text
    assert "<header" not in html and "/static/app.css" not in html  # no navigation chrome
    page = tmp_path / "record.html"
    page.write_text(html, encoding="utf-8")
    pdf = tmp_path / "record.pdf"
    subprocess.run(
        [
            CHROMIUM,
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            f"--user-data-dir={tmp_path / 'profile'}",
            f"--print-to-pdf={pdf}",
            "--no-pdf-header-footer",
            page.as_uri(),
        ],
        check=True,
        capture_output=True,
        timeout=120,
    )
    text = subprocess.run(
        [PDFTOTEXT, "-layout", str(pdf), "-"], check=True, capture_output=True, text=True
    ).stdout
    flat = " ".join(text.split())
    with Session(world.state.engine) as db:
        signature = db.exec(
            select(TrailEntry).where(TrailEntry.revision_id == rev, TrailEntry.action == "sign_off")
        ).one()
    assert "Signed off lee (reviewer)" in flat
    assert "Past derating only at the hottest, lowest-supply corner" in flat  # the waiver's justification
    # Hashes wrap across lines in the PDF; joined, each is there whole.
    joined = "".join(text.split())
    for digest in (signature.hash, signature.content_hash, signature.report_hash):
        assert digest in joined
    assert "trail intact" in flat
    assert "does not replace datasheets, measurement" in flat


def test_download_pdf_gives_a_pdf_or_points_to_the_browser(world, reviewer):
    rev, _ = _k5_signed(world)
    response = reviewer.get(f"/revisions/{rev}/record.pdf")
    try:
        import weasyprint  # noqa: F401
    except (ImportError, OSError):
        # No server PDF: the route sends the reader to the printed record, never to an error page,
        # and neither the record nor the review page offers the download.
        assert response.status_code == 303
        assert response.headers["location"] == f"/revisions/{rev}/record"
        page = reviewer.get(response.headers["location"])
        assert page.status_code == 200 and "Print → Save as PDF" in page.text
        assert "record.pdf" not in page.text
        assert "record.pdf" not in reviewer.get(f"/revisions/{rev}/review").text
        assert reviewer.get("/revisions/999999/record.pdf").status_code == 404
        return
    assert response.status_code == 200
    assert response.content.startswith(b"%PDF")
    assert response.headers["content-type"] == "application/pdf"
