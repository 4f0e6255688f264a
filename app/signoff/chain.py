"""The append-only trail, hash-chained.

Each entry's hash is SHA-256 over the canonical JSON of its fields and the previous entry's
hash, so editing, deleting or reordering any stored entry breaks the chain from there on.
``verify`` also recomputes every revision's content hash from its stored document.

The chain alone proves nothing to someone who can rewrite the whole of it: each entry therefore
also carries a MAC, HMAC-SHA256 under a key kept outside the database, over the entry's hash
(which covers every entry before it); the head is MACed the same way. Without the key, a rewritten,
inserted or recomputed entry cannot carry a valid MAC.
"""

from __future__ import annotations

import hashlib
import hmac
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from .canonical import sha256_hex

GENESIS = "0" * 64
# The fields an entry's hash covers, in the stored row's own names.
HASHED_FIELDS = (
    "seq",
    "revision_id",
    "user_name",
    "role",
    "at",
    "action",
    "content_hash",
    "report_hash",
    "meaning",
    "detail",
)


def entry_hash(fields: Mapping[str, Any], prev_hash: str) -> str:
    body = {name: fields[name] for name in HASHED_FIELDS}
    body["prev_hash"] = prev_hash
    return sha256_hex(body)


def entry_mac(key: bytes, digest: str) -> str:
    """HMAC-SHA256 of an entry's hash; the domain prefix keeps it apart from the head's MAC."""
    return hmac.new(key, b"clampdown-trail-entry\n" + digest.encode("ascii"), hashlib.sha256).hexdigest()


def head_mac(key: bytes, seq: int, digest: str) -> str:
    return hmac.new(key, f"clampdown-trail-head\n{seq}\n{digest}".encode("ascii"), hashlib.sha256).hexdigest()


def _mac_ok(expected: str, stored: str | None) -> bool:
    return stored is not None and hmac.compare_digest(expected, stored)


@dataclass(frozen=True)
class Verification:
    ok: bool
    entries: int
    revisions: int
    first_failure: str | None = None  # e.g. "entry 7: its hash does not match its fields"

    @property
    def summary(self) -> str:
        if self.ok:
            return f"trail intact: {self.entries} entries chained, {self.revisions} revision documents match their hashes"
        return f"trail broken at {self.first_failure}"


def verify(
    entries: Iterable[Mapping[str, Any]],
    revisions: Iterable[Mapping[str, Any]],
    head: tuple[int, str] | None = None,
    key: bytes | None = None,
    head_mac_stored: str | None = None,
) -> Verification:
    """``entries`` in stored order (by seq), each with HASHED_FIELDS, prev_hash and hash (and
    mac when ``key`` is given); ``revisions`` each with id, label, document and content_hash;
    ``head`` the (seq, hash) of the last entry as recorded apart from the trail, which catches
    rows cut off the end; with ``key``, every entry's MAC and the head's (``head_mac_stored``)
    are checked too."""
    prev = GENESIS
    count = 0
    expected_seq = 1
    for entry in entries:
        count += 1
        seq = entry["seq"]
        if seq != expected_seq:
            return Verification(
                False,
                count,
                0,
                f"entry {seq}: expected entry {expected_seq} here (a row is missing or moved)",
            )
        if entry["prev_hash"] != prev:
            return Verification(
                False,
                count,
                0,
                f"entry {seq}: does not follow the entry before it (deleted or reordered rows)",
            )
        if entry_hash(entry, prev) != entry["hash"]:
            return Verification(False, count, 0, f"entry {seq}: its hash does not match its fields (edited)")
        if key is not None and not _mac_ok(entry_mac(key, entry["hash"]), entry.get("mac")):
            why = "has no key MAC" if not entry.get("mac") else "its key MAC does not match"
            return Verification(
                False,
                count,
                0,
                f"entry {seq}: {why} (written or recomputed without the trail key, or verified with another key)",
            )
        prev = entry["hash"]
        expected_seq += 1
    if head is not None and head != (expected_seq - 1, prev):
        return Verification(
            False,
            count,
            0,
            f"entry {head[0]}: the trail ends at entry {expected_seq - 1}, but entry {head[0]} was recorded "
            + ("(rows removed from the end)" if head[0] > expected_seq - 1 else "(rows added past the head)"),
        )
    if key is not None and head is not None and head[0] > 0:
        if not _mac_ok(head_mac(key, head[0], head[1]), head_mac_stored):
            return Verification(
                False,
                count,
                0,
                f"entry {head[0]}: the recorded head's key MAC does not match (the head was set without the trail key)",
            )
    checked = 0
    for revision in revisions:
        checked += 1
        if sha256_hex(revision["document"]) != revision["content_hash"]:
            return Verification(
                False,
                count,
                checked,
                f"revision {revision.get('label', revision['id'])} (id {revision['id']}): its stored document does not match its content hash (edited)",
            )
    return Verification(True, count, checked)
