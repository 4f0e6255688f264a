"""The life of a revision under review, and who may do what to it.

States (our words):
- ``draft``: being written; its author may still replace it.
- ``in_review``: handed in by its author; frozen from here on.
- ``returned``: sent back by a reviewer with comments; the author makes a new revision.
- ``signed_off``: accepted by a reviewer; the signature is bound to this revision's hashes.
- ``superseded``: a newer revision of the same channel exists. A sign-off stays with the
  revision it was given to; it never moves.

Actions: ``replace`` (draft only, by its author), ``hand_in`` (draft → in_review, by its
author), ``comment`` (reviewers, and the author answering), ``waive`` (a reviewer accepts one
violation or marginal finding with a written justification), ``send_back`` (in_review →
returned), ``sign_off`` (in_review → signed_off; refused while a violation lacks a waiver),
``supersede`` (done by the system when a newer revision is saved).

A person never signs off, waives or sends back a revision they authored, whatever roles
they hold.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

STATES = ("draft", "in_review", "returned", "signed_off", "superseded")
ACTIONS = ("replace", "hand_in", "comment", "waive", "send_back", "sign_off", "supersede")

STATE_LABELS = {
    "draft": "Draft",
    "in_review": "In review",
    "returned": "Sent back",
    "signed_off": "Signed off",
    "superseded": "Superseded",
}
ACTION_LABELS = {
    "replace": "replaced the draft",
    "hand_in": "handed in for review",
    "comment": "commented",
    "waive": "accepted a finding",
    "send_back": "sent back for changes",
    "sign_off": "signed off",
    "supersede": "superseded by a newer revision",
}

# What each action does to the state; actions absent here leave the state as it is.
TRANSITIONS = {
    ("draft", "hand_in"): "in_review",
    ("in_review", "send_back"): "returned",
    ("in_review", "sign_off"): "signed_off",
    ("draft", "supersede"): "superseded",
    ("in_review", "supersede"): "superseded",
    ("returned", "supersede"): "superseded",
    ("signed_off", "supersede"): "superseded",
}
ALLOWED_IN = {
    "replace": {"draft"},
    "hand_in": {"draft"},
    "comment": {"draft", "in_review", "returned"},
    "waive": {"in_review"},
    "send_back": {"in_review"},
    "sign_off": {"in_review"},
    "supersede": {"draft", "in_review", "returned", "signed_off"},
}
REVIEWER_ACTIONS = {"waive", "send_back", "sign_off"}
AUTHOR_ACTIONS = {"replace", "hand_in"}


class Refused(Exception):
    """An action the workflow does not allow; the message says why, for the person who tried."""


@dataclass(frozen=True)
class Actor:
    user_id: int
    roles: frozenset[str]

    @classmethod
    def of(cls, user_id: int, roles: Iterable[str]) -> Actor:
        return cls(user_id, frozenset(roles))


def next_state(
    state: str,
    action: str,
    actor: Actor | None,
    author_id: int,
    *,
    unwaived_violations: int = 0,
) -> str:
    """The state after ``action``, or Refused with the reason. ``actor`` None is the system."""
    if state not in STATES:
        raise Refused(f"unknown state {state!r}")
    if action not in ACTIONS:
        raise Refused(f"unknown action {action!r}; allowed: {', '.join(ACTIONS)}")
    if action == "supersede":
        if actor is not None:
            raise Refused("a revision is superseded only by saving a newer revision of its channel")
    elif actor is None:
        raise Refused("sign in first")
    if state not in ALLOWED_IN[action]:
        raise Refused(f"a revision that is {STATE_LABELS[state].lower()} cannot be {ACTION_LABELS[action]}")
    if actor is not None:
        is_author = actor.user_id == author_id
        if action in AUTHOR_ACTIONS and not is_author:
            raise Refused("only the revision's author can do that")
        if action in AUTHOR_ACTIONS and not actor.roles & {"designer", "admin"}:
            raise Refused("this needs the designer role")
        if action in REVIEWER_ACTIONS:
            if is_author:
                raise Refused("you authored this revision; someone else must review it")
            if "reviewer" not in actor.roles and "admin" not in actor.roles:
                raise Refused("this needs the reviewer role")
        if action == "comment" and not is_author and not actor.roles & {"reviewer", "admin"}:
            raise Refused("only reviewers and the revision's author can comment")
    if action == "sign_off" and unwaived_violations:
        raise Refused(
            f"{unwaived_violations} violation{'s' if unwaived_violations != 1 else ''} "
            "without a waiver; accept each with a justification or send the revision back"
        )
    return TRANSITIONS.get((state, action), state)


def signature_meaning(action: str, profile_name: str, waivers: int) -> str:
    """What a trail entry's signature means, in words."""
    if action == "sign_off":
        accepted = (
            f"; {waivers} finding{'s' if waivers != 1 else ''} accepted with waivers" if waivers else ""
        )
        return f"reviewed against profile {profile_name}; findings accepted as listed{accepted}"
    if action == "send_back":
        return f"reviewed against profile {profile_name}; changes requested in the comments"
    if action == "waive":
        return "finding accepted with the justification given"
    if action == "hand_in":
        return "author declares this revision complete and ready for review"
    if action == "supersede":
        return "a newer revision of this channel replaces this one"
    if action == "replace":
        return "author replaced the draft's design document"
    return "comment recorded"
