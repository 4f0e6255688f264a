"""Errors services raise for bad input: each problem names a field path and what is allowed."""

from __future__ import annotations


class InputProblems(Exception):
    """Bad input; ``problems`` is a list of (field path, message). Routes answer 4xx with it."""

    def __init__(self, problems: list[tuple[str, str]], status_code: int = 422):
        super().__init__("; ".join(f"{path}: {message}" for path, message in problems))
        self.problems = problems
        self.status_code = status_code

    def as_detail(self) -> list[dict]:
        """The FastAPI-style error list: loc (the field path split on dots), msg."""
        return [
            {"loc": path.split("."), "msg": message, "type": "value_error"} for path, message in self.problems
        ]


class NotFound(Exception):
    def __init__(self, what: str):
        super().__init__(f"{what} not found")
        self.what = what


def get_or_not_found(db, model, row_id: int, what: str):
    """The row of ``model`` with this id, or NotFound naming it ("revision 12 not found")."""
    row = db.get(model, row_id)
    if row is None:
        raise NotFound(f"{what} {row_id}")
    return row


def split_problem(line: str, prefix: str = "") -> tuple[str, str]:
    """ "coil.inductance: "-3" must be positive" -> ("coil.inductance", '"-3" must be positive')."""
    path, sep, message = line.partition(": ")
    if not sep:
        return (prefix or "(design)", line)
    if path == "(design)" and prefix:
        path = prefix
    elif prefix:
        path = f"{prefix}.{path}"
    return (path, message)


def check_text(field: str, value: str | None, limit: int, required: bool = False) -> str:
    """A stripped text value within its column's length, without NUL characters (which
    PostgreSQL text cannot hold); raises InputProblems naming the field otherwise."""
    value = (value or "").strip()
    if required and not value:
        raise InputProblems([(field, "must not be empty")])
    if len(value) > limit:
        raise InputProblems([(field, f"is too long (at most {limit} characters)")])
    if "\x00" in value:
        raise InputProblems([(field, "must not contain NUL characters")])
    return value


def commit_or_conflict(db, field: str, message: str) -> None:
    """Commit; a unique constraint met at commit (a concurrent request stored the same name
    first) becomes a 409 naming the field instead of a server error."""
    from sqlalchemy.exc import IntegrityError

    try:
        db.commit()
    except IntegrityError:
        db.rollback()
        raise InputProblems([(field, message)], 409) from None


def same_name(a: str, b: str) -> bool:
    """Names compare without regard to case, in every script (the databases' lower() folds
    ASCII only)."""
    return a.casefold() == b.casefold()
