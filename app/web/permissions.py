"""Who may do what: every action named once, with the roles that grant it.

Routes (through ``deps.requires``), services and templates ask ``can(user, action)``; nothing
else spells roles. The review workflow (app/signoff/workflow.py) reasons about role sets of its
own; ``workflow_roles`` derives them from the same actions, so one table decides everything.
"""

from __future__ import annotations

from dataclasses import dataclass

from .models import ROLES


@dataclass(frozen=True)
class Action:
    name: str
    says: str  # what it lets a person do, for refusals and the docs: "edit the parts library"
    roles: frozenset[str]


def _action(name: str, says: str, *roles: str) -> Action:
    unknown = set(roles) - set(ROLES)
    if unknown:  # a typo here would silently grant nothing
        raise ValueError(f"action {name}: unknown roles {sorted(unknown)}")
    return Action(name, says, frozenset(roles))


ACTIONS: dict[str, Action] = {
    a.name: a
    for a in (
        _action("read", "read fixtures, revisions, reviews, parts and profiles", *ROLES),
        _action("edit_library", "edit the parts library", "designer", "admin"),
        _action("set_up_fixtures", "create fixtures and channels", "designer", "admin"),
        _action("create_revision", "create and hand in revisions", "designer", "admin"),
        _action("review", "review revisions (comment, waive, send back, sign off)", "reviewer", "admin"),
        _action("edit_profiles", "edit the team's derating profiles", "reviewer", "admin"),
        _action("manage_users", "manage user accounts", "admin"),
    )
}


def can(user, action: str) -> bool:
    """Whether the signed-in ``user`` (None: nobody signed in) may do ``action``."""
    try:
        granted = ACTIONS[action]
    except KeyError:
        raise ValueError(f"unknown action {action!r}; known: {', '.join(ACTIONS)}") from None
    return user is not None and bool(getattr(user, "active", True)) and user.role in granted.roles


def refusal(user, action: str) -> str:
    """Why ``user`` may not do ``action``, in words."""
    granted = ACTIONS[action]
    roles = " or ".join(r for r in ROLES if r in granted.roles)
    return f"to {granted.says} you need the role {roles}; you are signed in as a {user.role}"


def workflow_roles(user) -> frozenset[str]:
    """The role set the review workflow reasons about, derived from the named actions."""
    roles = set()
    if can(user, "create_revision"):
        roles.add("designer")
    if can(user, "review"):
        roles.add("reviewer")
    if can(user, "manage_users"):
        roles.add("admin")
    return frozenset(roles)
