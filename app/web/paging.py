"""Lists that grow with what is stored are shown a page at a time (page size in the settings)."""

from __future__ import annotations

from dataclasses import dataclass

# Page numbers and API offsets beyond this are refused (422) rather than sent to the database.
MAX_PAGE = 1_000_000
MAX_OFFSET = 1_000_000_000


@dataclass(frozen=True)
class Page:
    """Page ``number`` (from 1) of ``total`` items, ``size`` to a page; a number past the last
    page shows the last."""

    number: int
    size: int
    total: int

    @classmethod
    def of(cls, number: int, size: int, total: int) -> Page:
        last = max(1, -(-total // size))
        return cls(min(max(1, number), last), size, total)

    @property
    def count(self) -> int:
        return max(1, -(-self.total // self.size))

    @property
    def offset(self) -> int:
        return (self.number - 1) * self.size

    @property
    def has_prev(self) -> bool:
        return self.number > 1

    @property
    def has_next(self) -> bool:
        return self.number < self.count
