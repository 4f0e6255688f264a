"""htmx works under the Content-Security-Policy (no inline script, no eval): headless Chromium
against a real server. The live preview updates when a field changes, typing in a part picker's
search asks the picker only (not the preview), the "show archived" box submits its form, and the
browser reports no policy violation. Skips, saying why, without Chromium or Playwright."""

from __future__ import annotations

import shutil

import pytest

from .conftest import K1, PASSWORD, channel_id
from .serving import ServerProcess

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
sync_api = pytest.importorskip("playwright.sync_api", reason="needs the playwright package")
pytestmark = pytest.mark.skipif(not CHROMIUM, reason="needs chromium (Debian: chromium)")

WATCH_CSP = """document.addEventListener("securitypolicyviolation", e =>
  (window.__violations = window.__violations || []).push(e.violatedDirective + " " + e.blockedURI));"""


def test_htmx_runs_under_the_policy(world, database_url, tmp_path):
    if database_url.startswith("postgresql"):
        pytest.skip("the browser check runs once, on SQLite")
    k1 = channel_id(world, K1)  # before Playwright, whose sync API runs an event loop in this thread
    server = ServerProcess(database_url, tmp_path)
    server.start()
    try:
        with sync_api.sync_playwright() as p:
            browser = p.chromium.launch(executable_path=CHROMIUM, args=["--no-sandbox"])
            page = browser.new_page()
            page.set_default_timeout(20_000)
            page.add_init_script(WATCH_CSP)
            console = []
            page.on("console", lambda m: console.append(m.text) if m.type in ("error", "warning") else None)
            requests: list[str] = []
            page.on("request", lambda r: requests.append(f"{r.method} {r.url.split('?')[0]}"))

            page.goto(server.base + "/sign-in")
            page.fill("input[name=name]", "dana")
            page.fill("input[name=password]", PASSWORD)
            page.click("button[type=submit]")
            page.wait_for_url(server.base + "/")

            page.goto(f"{server.base}/channels/{k1}/new")
            page.wait_for_function("window.htmx !== undefined")
            preview = f"POST {server.base}/channels/{k1}/preview"

            # a picker search asks the picker, and the preview form does not hear it
            with page.expect_response(lambda r: "/parts/picker" in r.url):
                page.locator("input[name=q]").first.type("diode")
            page.wait_for_timeout(800)  # longer than the preview's 500 ms delay
            assert preview not in requests

            # a field change updates the preview through htmx
            with page.expect_response(lambda r: r.url.endswith("/preview") and r.status == 200):
                page.fill("input[name='change_note']", "browser check")
            assert preview in requests

            page.goto(server.base + "/parts")
            with page.expect_navigation():
                page.check("input[name=archived]")
            assert "archived=true" in page.url

            violations = page.evaluate("window.__violations || []")
            browser.close()
        assert violations == []
        assert not [c for c in console if "Content Security Policy" in c or "htmx" in c.lower()], console
    finally:
        server.stop()
