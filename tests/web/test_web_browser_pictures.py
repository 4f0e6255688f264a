"""The pictures in a real browser (Playwright driving Debian's Chromium; nothing downloaded): on
the revision page and on the printed record every picture loads and draws (its pixels are not
blank), the screenshots are kept, and the record printed to PDF by the browser carries the
captions. Set CLAMPDOWN_SCREENSHOTS to a folder to keep the screenshots after the run."""

from __future__ import annotations

import os
import re
import subprocess
from pathlib import Path

import numpy as np
from matplotlib import image

from .conftest import K2, revision_ids
from .test_web_browser_journey import (  # noqa: F401  (the fixtures browser and live, and the same skip)
    PDFTOTEXT,
    _off_the_loop,
    _signed_in,
    browser,
    live,
    pytestmark,
)

NAMES = ("schematic", "turnoff", "margins")


def _folder(tmp_path: Path) -> Path:
    folder = Path(os.environ.get("CLAMPDOWN_SCREENSHOTS") or tmp_path)
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def _ink(png: Path) -> float:
    """The share of pixels that are not near-white: a drawn picture has lines and text."""
    pixels = image.imread(str(png))[..., :3]
    return float(np.mean(pixels.min(axis=-1) < 0.8))


INK_JS = """async selector => {
    const img = document.querySelector(selector);
    await img.decode();
    const canvas = document.createElement('canvas');
    canvas.width = img.naturalWidth; canvas.height = img.naturalHeight;
    const g = canvas.getContext('2d');
    g.fillStyle = 'white'; g.fillRect(0, 0, canvas.width, canvas.height);
    g.drawImage(img, 0, 0);
    const d = g.getImageData(0, 0, canvas.width, canvas.height).data;
    let dark = 0;
    for (let k = 0; k < d.length; k += 4) if (Math.min(d[k], d[k + 1], d[k + 2]) < 204) dark++;
    return dark / (d.length / 4);
}"""


def _ink_in_page(page, selector: str) -> float:
    """The share of non-white pixels of an <img> as the browser decoded it (drawn on a canvas
    over white): independent of when the page last repainted it."""
    return page.evaluate(INK_JS, selector)


def _all_drawn(page, selector: str = "figure.picture img", count: int = 3) -> None:
    page.wait_for_function(
        "s => [...document.querySelectorAll(s)].every(i => i.complete && i.naturalWidth > 0)", arg=selector
    )
    assert page.locator(selector).count() == count


def test_revision_page_and_printed_record_show_the_pictures(world, live, browser, tmp_path):  # noqa: F811
    folder = _folder(tmp_path)
    rev = _off_the_loop(revision_ids, world, K2)[-1]
    lee = _signed_in(browser, live, "lee")
    lee.set_viewport_size({"width": 1280, "height": 900})

    lee.goto(f"/revisions/{rev}")
    _all_drawn(lee)
    lee.screenshot(path=str(folder / "revision-page.png"), full_page=True)
    for name in NAMES:
        shot = folder / f"revision-{name}.png"
        lee.locator(f"figure.picture-{name} img").screenshot(path=str(shot))
        assert _ink(shot) > 0.005, f"{name} looks blank in the browser"
        assert _ink_in_page(lee, f"figure.picture-{name} img") > 0.005
    caption = lee.inner_text("figure.picture-turnoff figcaption")
    assert re.search(r"drop-out current [\d.]+ mA in [\d.]+ [mµ]s", caption)

    lee.goto(f"/revisions/{rev}/record")
    lee.emulate_media(media="print")
    _all_drawn(lee)
    lee.screenshot(path=str(folder / "printed-record.png"), full_page=True)
    shot = folder / "record-schematic.png"
    lee.locator("figure.picture-schematic img").screenshot(path=str(shot))
    assert _ink(shot) > 0.005
    pdf = folder / "printed-record.pdf"
    pdf.write_bytes(lee.pdf(format="A4"))
    text = " ".join(
        subprocess.run([PDFTOTEXT, str(pdf), "-"], check=True, capture_output=True, text=True).stdout.split()
    )
    assert "Turn-off over time." in text and "Margins over temperature." in text
    assert "The stage as designed." in text
    lee.context.close()


def test_live_preview_redraws_as_a_value_is_typed(world, live, browser, tmp_path):  # noqa: F811
    import base64

    from .conftest import channel_id

    folder = _folder(tmp_path)
    k2 = _off_the_loop(channel_id, world, K2)
    dana = _signed_in(browser, live, "dana")
    dana.set_viewport_size({"width": 1280, "height": 900})
    dana.goto(f"/channels/{k2}/new")
    schematic = dana.locator("#preview figure.picture-schematic img")
    before = schematic.get_attribute("src")
    dana.fill("#f-base-r_series", "2k7")
    dana.wait_for_function(
        "old => { const i = document.querySelector('#preview figure.picture-schematic img');"
        " return i && i.getAttribute('src') !== old && i.complete && i.naturalWidth > 0; }",
        arg=before,
        timeout=30_000,
    )
    # Typing sends the form on input (after 500 ms) and on change: wait until the preview has
    # stopped being replaced.
    src = schematic.get_attribute("src")
    for _ in range(30):
        dana.wait_for_timeout(700)
        now = schematic.get_attribute("src")
        if now == src and dana.locator(".htmx-request").count() == 0:
            break
        src = now
    svg = base64.b64decode(src.split(",", 1)[1]).decode("utf-8")
    assert "R_b 2.7\u00a0kΩ" in svg or "R_b 2.7 kΩ" in svg
    assert dana.locator("#preview figure.picture-turnoff img").count() == 1
    _all_drawn(dana, "#preview figure.picture img", 2)
    assert _ink_in_page(dana, "#preview figure.picture-schematic img") > 0.005, "the schematic looks blank"
    assert _ink_in_page(dana, "#preview figure.picture-turnoff img") > 0.005, "the turn-off looks blank"
    dana.locator("#preview").screenshot(path=str(folder / "live-preview.png"))
    dana.context.close()
