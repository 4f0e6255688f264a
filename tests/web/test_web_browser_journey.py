"""The review journey in a real browser (Playwright driving Debian's Chromium; nothing is
downloaded): a designer builds a revision in the form with engineering notation and hands it in;
the reviewer comments, accepts a finding with a waiver and sends it back with a reason; the
designer revises and hands in again; the reviewer signs off; the printed record, made into a PDF
by the browser, holds the signature when read back with pdftotext.

Runs once, on SQLite (the database layer has its own PostgreSQL runs); skips, saying why, where
Chromium or pdftotext is missing."""

from __future__ import annotations

import re
import shutil
import socket
import subprocess
import threading
import time

import pytest
import uvicorn

from .conftest import PASSWORD, channel_id, revision_ids

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
PDFTOTEXT = shutil.which("pdftotext")
K2 = "K2 vent fan relay"

pytestmark = pytest.mark.skipif(
    not (CHROMIUM and PDFTOTEXT),
    reason="needs the system Chromium (Debian: chromium) and pdftotext (poppler-utils); no browser is downloaded",
)


sync_api = pytest.importorskip("playwright.sync_api", reason="needs the playwright package")


def _off_the_loop(function, *args):
    """Run a database read in a worker thread: Playwright's sync API keeps an event loop running
    on this thread, and the app's engine refuses database use on an event loop's thread."""
    from concurrent.futures import ThreadPoolExecutor

    with ThreadPoolExecutor(max_workers=1) as pool:
        return pool.submit(function, *args).result()


@pytest.fixture
def browser():
    """The system Chromium, started for this test and closed after it (no session-long event loop
    left on the test thread)."""
    with sync_api.sync_playwright() as p:
        launched = p.chromium.launch(executable_path=CHROMIUM, args=["--no-sandbox"], timeout=30_000)
        yield launched
        launched.close()


@pytest.fixture
def live(world):
    if world.state.engine.dialect.name != "sqlite":
        pytest.skip("the browser journey runs once, on SQLite")
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    server = uvicorn.Server(
        uvicorn.Config(world, host="127.0.0.1", port=port, log_level="warning", lifespan="off")
    )
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    for _ in range(500):
        if server.started:
            break
        time.sleep(0.01)
    assert server.started, "uvicorn did not start"
    yield f"http://127.0.0.1:{port}"
    server.should_exit = True
    thread.join(timeout=10)


def _signed_in(browser, base: str, name: str):
    context = browser.new_context(base_url=base)
    context.set_default_timeout(15_000)
    page = context.new_page()
    page.goto("/sign-in")
    page.fill("#name", name)
    page.fill("#password", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_url(re.compile(r"/$"))
    return page


def _build_and_hand_in(page, channel: int, r_series: str, note: str) -> int:
    """In the new-revision form (pre-filled from the channel's latest), set the base resistor in
    engineering notation, save, and hand the new revision in from its review page."""
    page.goto(f"/channels/{channel}/new")
    page.fill("#f-base-r_series", r_series)
    page.fill("#change_note", f"base resistor {r_series}")
    page.click("form[action$='/revisions'] button[type=submit]")
    # The page an action lands on says what happened (a signed ?done= message).
    page.wait_for_url(re.compile(r"/revisions/\d+(\?done=[^/]*)?$"))
    rev = int(re.search(r"/revisions/(\d+)", page.url).group(1))
    page.goto(f"/revisions/{rev}/review")
    page.fill("form[action$='/hand-in'] textarea[name=note]", note)
    page.click("form[action$='/hand-in'] button[type=submit]")
    page.wait_for_url(re.compile(rf"/revisions/{rev}/review(\?done=[^/]*)?$"))
    return rev


def test_a_revision_goes_from_the_form_through_send_back_to_a_signed_record(world, live, browser, tmp_path):
    k2 = _off_the_loop(channel_id, world, K2)
    dana, lee = _signed_in(browser, live, "dana"), _signed_in(browser, live, "lee")

    # 1k8 leaves the transistor short of the profile's overdrive of 2 (marginal, not a violation).
    first = _build_and_hand_in(dana, k2, "1k8", "first try at the fan relay")
    assert _off_the_loop(revision_ids, world, K2)[-1] == first
    lee.goto(f"/revisions/{first}/review")
    assert "Past derating" in lee.content()
    lee.fill("form[action$='/comments'] textarea#c-text", "Why 1k8 rather than the 1k2 of rev A?")
    lee.click("form[action$='/comments']:has(#c-text) button[type=submit]")
    waiver = lee.locator(
        "details", has=lee.locator("form[action$='/waivers'] input[value='drive.saturation']")
    )
    waiver.locator("summary").click()
    waiver.locator("textarea[name=justification]").fill(
        "Overdrive 1.9 at the cold corner only; accepted for now"
    )
    waiver.locator("button[type=submit]").click()
    lee.wait_for_url(re.compile(rf"/revisions/{first}/review(\?done=[^/]*)?$"))
    lee.fill(
        "form[action$='/send-back'] textarea[name=note]", "Go back to 1k2: keep overdrive ≥ 2 at every corner"
    )
    lee.click("form[action$='/send-back'] button[type=submit]")
    lee.wait_for_url(re.compile(rf"/revisions/{first}/review(\?done=[^/]*)?$"))
    assert "Why 1k8 rather than the 1k2 of rev A?" in lee.content()

    # The designer sees why: first on the home page's "sent back to me", then on the revision.
    dana.goto("/")
    assert "Go back to 1k2" in dana.content()
    dana.goto(f"/revisions/{first}")
    assert "Go back to 1k2: keep overdrive ≥ 2 at every corner" in dana.content()

    second = _build_and_hand_in(dana, k2, "1k2", "back to 1k2 as asked")
    assert second != first
    # The reviewer compares the new revision with the one sent back: the base resistor changed.
    lee.goto(f"/channels/{k2}/compare?old={first}&new={second}")
    compared = " ".join(lee.inner_text("main").split())
    assert "1k8" in compared and "1k2" in compared
    lee.goto(f"/revisions/{second}/review")
    lee.fill("form[action$='/sign-off'] textarea[name=note]", "Fan relay drive approved")
    lee.click("form[action$='/sign-off'] button[type=submit]")
    lee.wait_for_url(re.compile(rf"/revisions/{second}/review(\?done=[^/]*)?$"))

    lee.goto(f"/revisions/{second}/record")
    pdf = tmp_path / "record.pdf"
    lee.emulate_media(media="print")
    pdf.write_bytes(lee.pdf(format="A4"))
    text = subprocess.run(
        [PDFTOTEXT, "-layout", str(pdf), "-"], check=True, capture_output=True, text=True
    ).stdout
    flat = " ".join(text.split())
    assert "Signed off lee (reviewer)" in flat
    assert K2 in flat
    # The notes and the channel's review history are on the document a lead files, and every
    # page says which page of how many it is.
    assert "Fan relay drive approved" in flat and "back to 1k2 as asked" in flat
    assert "Go back to 1k2" in flat, flat[flat.find("history") : flat.find("history") + 1500]
    assert re.search(r"page 1 of \d+", flat, re.IGNORECASE), flat[:400]
    for page in (dana, lee):
        page.context.close()
    # What the clicks did, as the trail recorded it.
    assert _off_the_loop(_actions, world, first) == [
        "save",
        "hand_in",
        "comment",
        "waive",
        "send_back",
        "supersede",
    ]
    assert _off_the_loop(_actions, world, second) == ["save", "hand_in", "sign_off"]


def _actions(app, rev: int) -> list[str]:
    from sqlmodel import Session, select

    from app.web.models import TrailEntry

    with Session(app.state.engine) as db:
        return list(
            db.exec(select(TrailEntry.action).where(TrailEntry.revision_id == rev).order_by(TrailEntry.seq))
        )
