"""The append-only trail, hash-chained.

Each entry's hash is SHA-256 over the canonical JSON of its fields and the previous entry's
hash, so editing, deleting or reordering any stored entry breaks the chain from there on.
``verify`` also recomputes every revision's content hash from its stored document.
"""

from __future__ import annotations

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
) -> Verification:
    """``entries`` in stored order (by seq), each with HASHED_FIELDS, prev_hash and hash;
    ``revisions`` each with id, label, document and content_hash; ``head`` the (seq, hash) of
    the last entry as recorded apart from the trail, which catches rows cut off the end."""
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
        prev = entry["hash"]
        expected_seq += 1
    if head is not None and head != (expected_seq - 1, prev):
        return Verification(
            False,
            count,
            0,
            f"entry {head[0]}: the trail ends at entry {expected_seq - 1}, but entry {head[0]} was recorded (rows removed from the end)",
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
