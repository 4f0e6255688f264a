"""The sign-off workflow's rules, the hash chain and revision compare, without a database."""

from __future__ import annotations

import copy
import itertools

import pytest

from app.engine import evaluate, parse_design
from app.signoff.canonical import canonical_json, sha256_hex
from app.signoff.chain import GENESIS, HASHED_FIELDS, entry_hash, verify
from app.signoff.compare import compare
from app.signoff.workflow import ACTIONS, STATES, Actor, Refused, next_state

from .handbook import design

AUTHOR, OTHER = 1, 2
ROLE_SETS = [
    frozenset(c) for n in range(4) for c in itertools.combinations(("designer", "reviewer", "admin"), n)
]


def test_the_happy_path():
    designer, reviewer = Actor.of(AUTHOR, {"designer"}), Actor.of(OTHER, {"reviewer"})
    state = next_state("draft", "replace", designer, AUTHOR)
    assert state == "draft"
    state = next_state(state, "hand_in", designer, AUTHOR)
    assert state == "in_review"
    assert next_state(state, "comment", reviewer, AUTHOR) == "in_review"
    assert next_state(state, "waive", reviewer, AUTHOR) == "in_review"
    assert next_state(state, "sign_off", reviewer, AUTHOR) == "signed_off"
    assert next_state("signed_off", "supersede", None, AUTHOR) == "superseded"
    assert next_state("in_review", "send_back", reviewer, AUTHOR) == "returned"


@pytest.mark.parametrize("roles", ROLE_SETS, ids=lambda r: "+".join(sorted(r)) or "no-role")
@pytest.mark.parametrize("action", ["sign_off", "waive", "send_back"])
def test_nobody_reviews_their_own_revision_whatever_their_roles(roles, action):
    with pytest.raises(Refused, match="you authored this revision"):
        next_state("in_review", action, Actor.of(AUTHOR, roles), AUTHOR)


@pytest.mark.parametrize("roles", ROLE_SETS, ids=lambda r: "+".join(sorted(r)) or "no-role")
def test_sign_off_by_someone_else_needs_the_reviewer_role(roles):
    actor = Actor.of(OTHER, roles)
    if roles & {"reviewer", "admin"}:
        assert next_state("in_review", "sign_off", actor, AUTHOR) == "signed_off"
    else:
        with pytest.raises(Refused, match="reviewer role"):
            next_state("in_review", "sign_off", actor, AUTHOR)


def test_sign_off_is_refused_while_a_violation_lacks_a_waiver():
    with pytest.raises(Refused, match="1 violation without a waiver"):
        next_state("in_review", "sign_off", Actor.of(OTHER, {"reviewer"}), AUTHOR, unwaived_violations=1)


def test_every_refused_transition():
    """Every (state, action) pair that is not allowed is refused, for a well-placed actor."""
    allowed = {
        ("draft", "replace"),
        ("draft", "hand_in"),
        ("draft", "comment"),
        ("in_review", "comment"),
        ("returned", "comment"),
        ("in_review", "waive"),
        ("in_review", "send_back"),
        ("in_review", "sign_off"),
        ("draft", "supersede"),
        ("in_review", "supersede"),
        ("returned", "supersede"),
        ("signed_off", "supersede"),
    }
    for state, action in itertools.product(STATES, ACTIONS):
        if action == "supersede":
            actor = None
        elif action in ("replace", "hand_in"):
            actor = Actor.of(AUTHOR, {"designer"})
        else:
            actor = Actor.of(OTHER, {"reviewer"})
        if (state, action) in allowed:
            next_state(state, action, actor, AUTHOR)
        else:
            with pytest.raises(Refused):
                next_state(state, action, actor, AUTHOR)


def test_only_the_author_hands_in_or_replaces_and_nobody_supersedes_by_hand():
    for action in ("hand_in", "replace"):
        with pytest.raises(Refused, match="author"):
            next_state("draft", action, Actor.of(OTHER, {"designer", "reviewer", "admin"}), AUTHOR)
    with pytest.raises(Refused, match="newer revision"):
        next_state("in_review", "supersede", Actor.of(OTHER, {"admin"}), AUTHOR)
    with pytest.raises(Refused, match="only reviewers and the revision's author"):
        next_state("in_review", "comment", Actor.of(OTHER, {"designer"}), AUTHOR)


def test_canonical_json_ignores_key_order_and_spacing():
    # SHA-256 of canonical JSON: the same document hashes the same in any key order
    assert canonical_json({"b": 1, "a": [1, 2]}) == '{"a":[1,2],"b":1}'
    assert sha256_hex({"b": 1, "a": 2}) == sha256_hex({"a": 2, "b": 1})
    # The canonical form of {} is the two bytes "{}"; their SHA-256 as coreutils sha256sum prints it
    assert sha256_hex({}) == "44136fa355b3678a1146ad16f7e8649e94fb4fc21fe77e8310c060f61caaff8a"


def _chain(n):
    entries, prev = [], GENESIS
    for seq in range(1, n + 1):
        fields = {name: f"{name}-{seq}" for name in HASHED_FIELDS}
        fields["seq"] = seq
        fields["prev_hash"] = prev
        fields["hash"] = entry_hash(fields, prev)
        prev = fields["hash"]
        entries.append(fields)
    return entries


def test_chain_verifies_and_catches_each_kind_of_tampering():
    entries = _chain(5)
    assert verify(entries, []).ok
    edited = copy.deepcopy(entries)
    edited[2]["meaning"] = "something else"
    assert verify(edited, []).first_failure.startswith("entry 3:")
    deleted = entries[:2] + entries[3:]
    assert verify(deleted, []).first_failure.startswith("entry 4:")
    swapped = entries[:1] + [entries[2], entries[1]] + entries[3:]
    assert not verify(swapped, []).ok
    assert verify(entries[:4], [], head=(5, entries[4]["hash"])).first_failure.startswith("entry 5:")
    revision = {"id": 1, "label": "A", "document": {"x": 1}, "content_hash": sha256_hex({"x": 1})}
    assert verify(entries, [revision]).ok
    assert "revision A" in verify(entries, [dict(revision, document={"x": 2})]).first_failure


def test_compare_lists_changed_inputs_and_findings():
    old_doc = design(**{"base.r_series": "10k"})  # not saturated
    new_doc = design()  # 1 kΩ: saturated with overdrive 4.9
    result = compare(old_doc, evaluate(parse_design(old_doc)), new_doc, evaluate(parse_design(new_doc)))
    assert [(c.path, c.old, c.new) for c in result.inputs] == [("base.r_series", "10k", "1k")]
    by_rule = {c.rule: c for c in result.findings}
    assert by_rule["drive.saturation"].kind == "resolved"
    assert by_rule["drive.saturation"].old["status"] == "violation"
    same = compare(new_doc, evaluate(parse_design(new_doc)), new_doc, evaluate(parse_design(new_doc)))
    assert same.unchanged
