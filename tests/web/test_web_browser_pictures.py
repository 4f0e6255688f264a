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


def _all_drawn(page) -> None:
    page.wait_for_function(
        "() => [...document.querySelectorAll('figure.picture img')]"
        ".every(i => i.complete && i.naturalWidth > 0)"
    )
    assert page.locator("figure.picture img").count() == 3


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
