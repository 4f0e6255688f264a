"""The pictures of a revision (schematic, turn-off, margins over temperature), drawn once per
content hash, engine version and derating profile and kept in ``app.state.pictures``.

A picture is a pure function of those three: not of the review state, the viewer or the trail,
so unlike the page bodies it needs no data version in its key and survives every review action.
The profile is keyed by its figures (not its row id), so one store can serve every app in the
process (``STORE``; the tests make many apps over fresh databases). Drawing takes about a
second, nearly all of it plotting: the store keeps the captions (what the pages show, worked out
in milliseconds) and each SVG is drawn when first asked for (its own URL on the pages; inline on
the record and the preview), then kept. A request that finds another already preparing the same
pictures waits for them instead of preparing them again.
"""

from __future__ import annotations

import base64
import threading
from collections import OrderedDict
from collections.abc import Callable

from sqlmodel import Session

from app.engine import ENGINE_VERSION, DesignError, parse_design
from app.pictures import NAMES, Picture, draw

from .documents import content_hash
from .errors import InputProblems, NotFound, split_problem

# The live form's preview shows the two pictures that change as a value is typed.
PREVIEW = ("schematic", "turnoff")


class PictureStore:
    """Drawn pictures under (content hash, engine version, profile key, names); bounded, oldest
    dropped first. One lock per key while it is drawn."""

    def __init__(self, size: int = 256):
        self.size = size
        self._items: OrderedDict = OrderedDict()
        self._drawing: dict = {}
        self._guard = threading.Lock()

    def get(self, key):
        return self._items.get(key)

    def get_or_draw(self, key, make: Callable[[], dict[str, Picture]]) -> dict[str, Picture]:
        found = self._items.get(key)
        if found is not None:
            return found
        with self._guard:
            lock = self._drawing.setdefault(key, threading.Lock())
        try:
            with lock:
                found = self._items.get(key)
                if found is None:
                    found = make()
                    with self._guard:
                        self._items[key] = found
                        while len(self._items) > self.size:
                            self._items.popitem(last=False)
        finally:
            with self._guard:
                self._drawing.pop(key, None)
        return found


# One per process: what is drawn depends only on the key.
STORE = PictureStore()


def _design(document: dict):
    try:
        return parse_design(document)
    except DesignError as exc:
        raise InputProblems([split_problem(line) for line in exc.problems]) from None


def for_revision(
    db: Session, revision, store: PictureStore, which: tuple[str, ...] = tuple(NAMES)
) -> dict[str, Picture]:
    """A revision's pictures, judged by the profile version it records (as its report is)."""
    from .profiles import engine_profile

    profile = engine_profile(db, revision.profile_version_id)
    key = ("revision", revision.content_hash, ENGINE_VERSION, profile, which)
    return store.get_or_draw(key, lambda: draw(_design(revision.document), profile, which))


def for_document(document: dict, store: PictureStore, which: tuple[str, ...] = PREVIEW) -> dict[str, Picture]:
    """The pictures of a design not saved yet (the live form's preview), default profile."""
    key = ("document", content_hash(document), ENGINE_VERSION, "", which)
    return store.get_or_draw(key, lambda: draw(_design(document), which=which))


def check_name(name: str) -> None:
    if name not in NAMES:
        raise NotFound(f"picture {name!r}; there are {', '.join(NAMES)}")


def picture(db: Session, revision, store: PictureStore, name: str) -> Picture:
    check_name(name)
    return for_revision(db, revision, store)[name]


def data_uri(svg: str) -> str:
    """An SVG as a data: URI for an <img> (the printed record and the preview carry their
    pictures with them; an SVG in <img> runs no script)."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii")
