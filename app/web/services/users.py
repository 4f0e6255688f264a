"""Accounts: roles designer, reviewer, admin; argon2 password hashes."""

from __future__ import annotations

import re

from sqlalchemy import func
from sqlmodel import Session, select

from ..models import ROLES, User
from ..security import DUMMY_HASH, hash_password, verify_password
from .errors import InputProblems, NotFound, commit_or_conflict

_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,79}$")
MIN_PASSWORD = 8


def _check(name: str, role: str, password: str | None) -> list[tuple[str, str]]:
    problems = []
    if not _NAME.match(name or ""):
        problems.append(
            ("name", "use 1–80 letters, digits, dots, dashes or underscores, starting with a letter or digit")
        )
    if role not in ROLES:
        problems.append(("role", f"{role!r} is not a role; allowed: {', '.join(ROLES)}"))
    if password is not None and len(password) < MIN_PASSWORD:
        problems.append(("password", f"must be at least {MIN_PASSWORD} characters"))
    return problems


def create_user(db: Session, name: str, password: str, role: str) -> User:
    name = (name or "").strip()
    problems = _check(name, role, password)
    if not problems and db.exec(select(User).where(func.lower(User.name) == name.lower())).first():
        raise InputProblems([("name", f"a user named {name!r} already exists")], 409)
    if problems:
        raise InputProblems(problems)
    user = User(name=name, password_hash=hash_password(password), role=role)
    db.add(user)
    commit_or_conflict(db, "name", f"a user named {name!r} already exists")
    db.refresh(user)
    return user


def authenticate(db: Session, name: str, password: str) -> User | None:
    if "\x00" in (name or "") or len(name or "") > 80:
        verify_password(DUMMY_HASH, password or "")
        return None
    user = db.exec(select(User).where(func.lower(User.name) == (name or "").strip().lower())).first()
    if user is None or not user.active:
        verify_password(DUMMY_HASH, password or "")
        return None
    return user if verify_password(user.password_hash, password or "") else None


def list_users(db: Session) -> list[User]:
    return list(db.exec(select(User).order_by(User.name)))


def update_user(db: Session, user_id: int, role: str, active: bool, acting_user_id: int) -> User:
    user = db.get(User, user_id)
    if user is None:
        raise NotFound(f"user {user_id}")
    problems = _check(user.name, role, None)
    if user.id == acting_user_id and (role != "admin" or not active):
        problems.append(("role", "you cannot remove your own admin role or deactivate yourself"))
    if problems:
        raise InputProblems(problems)
    if user.active and not active:
        user.session_generation += 1  # deactivation ends the account's sessions at once
    user.role, user.active = role, active
    db.add(user)
    db.commit()
    db.refresh(user)
    return user


def end_sessions(db: Session, user_id: int) -> None:
    """End every session of the account (its cookies stop working at once)."""
    user = db.get(User, user_id)
    if user is None:
        raise NotFound(f"user {user_id}")
    user.session_generation += 1
    db.add(user)
    db.commit()


def set_password(db: Session, user_id: int, password: str) -> User:
    """A new password; every session of the account ends."""
    user = db.get(User, user_id)
    if user is None:
        raise NotFound(f"user {user_id}")
    if len(password or "") < MIN_PASSWORD:
        raise InputProblems([("password", f"must be at least {MIN_PASSWORD} characters")])
    user.password_hash = hash_password(password)
    user.session_generation += 1
    db.add(user)
    db.commit()
    db.refresh(user)
    return user
