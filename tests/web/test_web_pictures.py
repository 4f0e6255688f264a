"""The pictures on the pages: the revision page, the review page and the printed record show
the stage, its turn-off and its margins with their captions; each is drawn once per content,
engine and profile; the live form's preview redraws the schematic and the turn-off."""

from __future__ import annotations

import base64
import re
import xml.etree.ElementTree as ET

import pytest

from app.web.services import pictures

from .conftest import K2, channel_id, form_values, revision_ids

NAMES = ("schematic", "turnoff", "margins")


@pytest.fixture(autouse=True)
def _fresh_store(monkeypatch, world):
    """Each test starts with nothing drawn, and counts what it draws."""
    store = pictures.PictureStore()
    world.state.pictures = store
    drawn = []
    real = pictures.draw

    def counting(*args, **kwargs):
        drawn.append(kwargs.get("which", args[2] if len(args) > 2 else None))
        return real(*args, **kwargs)

    monkeypatch.setattr(pictures, "draw", counting)
    return drawn


def svg_words(svg: str | bytes) -> str:
    root = ET.fromstring(svg)  # well-formed XML, or this raises
    assert root.tag.endswith("svg")
    return " ".join(" ".join(root.itertext()).split())


def test_revision_page_shows_three_pictures_with_captions(reviewer, world):
    rev = revision_ids(world, K2)[-1]
    page = reviewer.get(f"/revisions/{rev}").text
    for name in NAMES:
        assert f'src="/revisions/{rev}/pictures/{name}.svg"' in page
    assert "The stage as designed." in page and "Turn-off over time." in page
    assert "Margins over temperature." in page
    # The captions carry the key numbers: the release time and the smallest margin.
    assert re.search(r"drop-out current [\d.]+ mA in [\d.]+ [mµ]s", page)
    assert "Smallest:" in page


def test_each_picture_is_served_as_well_formed_svg(reviewer, world):
    rev = revision_ids(world, K2)[-1]
    for name in NAMES:
        answer = reviewer.get(f"/revisions/{rev}/pictures/{name}.svg")
        assert answer.status_code == 200
        assert answer.headers["content-type"].startswith("image/svg+xml")
        svg_words(answer.content)
    assert reviewer.get(f"/revisions/{rev}/pictures/other.svg").status_code == 404


def test_a_picture_asked_again_with_its_etag_is_not_sent_again(reviewer, world):
    rev = revision_ids(world, K2)[-1]
    first = reviewer.get(f"/revisions/{rev}/pictures/schematic.svg")
    again = reviewer.get(
        f"/revisions/{rev}/pictures/schematic.svg", headers={"If-None-Match": first.headers["etag"]}
    )
    assert again.status_code == 304 and again.content == b""


def test_pictures_are_drawn_once_per_content_whatever_happens_on_the_trail(
    _fresh_store, reviewer, designer, world
):
    rev = revision_ids(world, K2)[-1]
    reviewer.get(f"/revisions/{rev}")
    for name in NAMES:
        reviewer.get(f"/revisions/{rev}/pictures/{name}.svg")
    assert len(_fresh_store) == 1
    # A comment changes the page body (new data version) but not the pictures.
    assert reviewer.post(f"/revisions/{rev}/comments", data={"text": "looks right"}).status_code == 303
    reviewer.get(f"/revisions/{rev}")
    reviewer.get(f"/revisions/{rev}/review")
    designer.get(f"/revisions/{rev}")
    assert len(_fresh_store) == 1


def test_review_page_shows_the_pictures(reviewer, world):
    rev = revision_ids(world, K2)[-1]
    page = reviewer.get(f"/revisions/{rev}/review").text
    for name in NAMES:
        assert f'src="/revisions/{rev}/pictures/{name}.svg"' in page


def test_printed_record_carries_its_pictures_inline(reviewer, world):
    rev = revision_ids(world, K2)[-1]
    page = reviewer.get(f"/revisions/{rev}/record").text
    uris = re.findall(r'src="data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)"', page)
    assert len(uris) == 3
    words = [svg_words(base64.b64decode(u)) for u in uris]
    assert "R_b" in words[0] and "V(BR)CEO rating" in words[1] and "0 % = derated limit" in words[2]


def test_live_preview_redraws_schematic_and_turn_off_with_the_values(designer, world):
    cid = channel_id(world, K2)
    values = form_values(world, K2)
    first = designer.post(f"/channels/{cid}/preview", data=values).text
    changed = designer.post(f"/channels/{cid}/preview", data={**values, "base.r_series": "2k7"}).text
    for page in (first, changed):
        assert page.count('src="data:image/svg+xml;base64,') == 2  # schematic and turn-off
        assert "The stage as designed." in page and "Turn-off over time." in page
    schematic = svg_words(
        base64.b64decode(re.search(r'src="data:image/svg\+xml;base64,([^"]+)"', changed)[1])
    )
    assert "R_b 2.7 kΩ" in schematic
    assert "R_b 2.7 kΩ" not in first


def test_preview_with_a_bad_value_shows_no_pictures(designer, world):
    cid = channel_id(world, K2)
    page = designer.post(
        f"/channels/{cid}/preview", data={**form_values(world, K2), "base.r_series": "-5"}
    ).text
    assert "data:image/svg+xml" not in page
    assert "base.r_series" in page


def test_pdf_download_carries_the_pictures(reviewer, world, tmp_path):
    import shutil
    import subprocess

    from app.web.services import record

    if not record.pdf_available() or shutil.which("pdftotext") is None:
        pytest.skip("needs WeasyPrint (pip install '.[pdf]', with Pango) and pdftotext (poppler-utils)")
    rev = revision_ids(world, K2)[-1]
    answer = reviewer.get(f"/revisions/{rev}/record.pdf")
    assert answer.status_code == 200 and answer.content.startswith(b"%PDF")
    pdf = tmp_path / "record.pdf"
    pdf.write_bytes(answer.content)
    text = " ".join(
        subprocess.run(
            ["pdftotext", str(pdf), "-"], capture_output=True, text=True, check=True
        ).stdout.split()
    )
    assert (
        "The stage as designed." in text
        and "Turn-off over time." in text
        and "Margins over temperature." in text
    )
    # The drawings themselves, as vector text in the PDF: a label of the schematic and of each chart.
    assert "R_b" in text and "V(BR)CEO rating" in text and "derated limit" in text


def test_the_store_draws_again_for_other_content_and_keeps_a_bounded_number(_fresh_store, world):
    """The picture cache's key holds the content hash (and the engine version and profile):
    new content is drawn anew, the same content is not; the oldest entries leave first."""
    from types import SimpleNamespace

    from app.web.services.documents import content_hash

    from .conftest import latest_document

    store = pictures.PictureStore(size=2)
    documents = [latest_document(world, K2)]
    documents.append({**documents[0], "name": "another name"})
    documents.append({**documents[0], "name": "a third name"})
    revs = [
        SimpleNamespace(content_hash=content_hash(d), document=d, profile_version_id=None) for d in documents
    ]
    which = ("schematic",)
    first = pictures.for_revision(None, revs[0], store, which)
    assert pictures.for_revision(None, revs[0], store, which) is first
    assert len(_fresh_store) == 1
    pictures.for_revision(None, revs[1], store, which)
    assert len(_fresh_store) == 2
    pictures.for_revision(None, revs[2], store, which)  # the first one leaves
    pictures.for_revision(None, revs[0], store, which)
    assert len(_fresh_store) == 4


def test_the_page_shows_captions_without_waiting_for_the_plots(reviewer, world):
    """The page needs the captions only; each SVG is drawn when its URL is first asked for."""
    rev = revision_ids(world, K2)[-1]
    assert "Turn-off over time." in reviewer.get(f"/revisions/{rev}").text
    (kept,) = world.state.pictures._items.values()
    assert [p.drawn for p in kept.values()] == [False, False, False]
    reviewer.get(f"/revisions/{rev}/pictures/turnoff.svg")
    assert [p.drawn for p in kept.values()] == [False, True, False]
