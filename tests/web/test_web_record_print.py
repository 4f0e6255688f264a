"""The printed record reads right on paper: any design-name length keeps numbers beside their
parameters, every page carries "page N of M", the revision and the content hash, and the
record holds the nominal point, the turn-off, the alternatives and the review history, with
labels in words and units. The server PDF is offered only where this server can make it."""

import shutil
import subprocess

import pytest

from app.web.services import record

from .conftest import K1, channel_id, latest_document, revision_ids

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
PDFTOTEXT = shutil.which("pdftotext")
LONG = "KT-1 K1 contactor " + "W" * 120 + " with a name far longer than any column"


def _long_named(world, designer) -> int:
    document = latest_document(world, K1)
    document["name"] = LONG
    made = designer.post(f"/api/v1/channels/{channel_id(world, K1)}/revisions", json={"document": document})
    assert made.status_code == 201
    return made.json()["id"]


def _print(html: str, tmp_path) -> str:
    page = tmp_path / "record.html"
    page.write_text(html, encoding="utf-8")
    pdf = tmp_path / "record.pdf"
    subprocess.run(
        [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-sync",
         "--disable-background-networking", "--disable-component-update", f"--user-data-dir={tmp_path / 'p'}",
         f"--print-to-pdf={pdf}", "--no-pdf-header-footer", page.as_uri()],
        check=True, capture_output=True, timeout=120,
    )  # fmt: skip
    return subprocess.run(
        [PDFTOTEXT, "-layout", str(pdf), "-"], check=True, capture_output=True, text=True
    ).stdout


def test_the_record_holds_the_operating_point_turn_off_alternatives_and_history(world, reviewer):
    rev_b = revision_ids(world, K1)[1]
    page = reviewer.get(f"/revisions/{rev_b}/record").text
    for text in ("Nominal operating point", "Turn-off (nominal corner)", "Other clamps", "Review history of"):
        assert text in page, text
    assert "Supply, nominal (V)" in page and '<span class="key">supply.nominal</span>' in page
    assert "Formulas of the rules" in page and "IEC 60028" in page


def test_long_design_names_wrap_in_their_own_cell(world, designer):
    page = designer.get(f"/revisions/{_long_named(world, designer)}/record").text
    assert "table-layout: fixed" in page and "overflow-wrap: anywhere" in page
    style = page.split("<style>", 1)[1].split("</style>", 1)[0]
    assert "nowrap" not in style.split(".num", 1)[1].split("}", 1)[0]  # values may wrap


@pytest.mark.skipif(
    not (CHROMIUM and PDFTOTEXT), reason="needs chromium and pdftotext (Debian: chromium, poppler-utils)"
)
def test_every_printed_page_carries_page_n_of_m_the_revision_and_the_hash(world, designer, tmp_path):
    rid = _long_named(world, designer)
    html = designer.get(f"/revisions/{rid}/record").text
    content_hash = designer.get(f"/api/v1/revisions/{rid}").json()["content_hash"]
    pages = _print(html, tmp_path).split("\f")
    pages = [p for p in pages if p.strip()]
    assert len(pages) >= 2
    for number, text in enumerate(pages, start=1):
        assert f"page {number} of {len(pages)}" in text
        assert content_hash in text and "revision D" in text
    # every number still sits beside its own parameter, on the same printed line
    lines = "\n".join(pages).splitlines()
    assert any("Supply, nominal (V)" in line and "24 V" in line for line in lines)
    coil_lines = [line for line in lines if "Coil resistance at r_at" in line]
    assert any(line.rstrip().endswith("160") for line in coil_lines), coil_lines


def test_no_link_to_a_pdf_this_server_cannot_make(world, reviewer, monkeypatch):
    rev_b = revision_ids(world, K1)[1]
    monkeypatch.setattr(record, "pdf_available", lambda: False)
    for path in (f"/revisions/{rev_b}/review", f"/revisions/{rev_b}/record", f"/revisions/{rev_b}"):
        assert "record.pdf" not in reviewer.get(path).text, path
    assert "data-print" in reviewer.get(f"/revisions/{rev_b}/record").text
    monkeypatch.setattr(record, "pdf_available", lambda: True)
    assert f'href="/revisions/{rev_b}/record.pdf"' in reviewer.get(f"/revisions/{rev_b}/record").text
