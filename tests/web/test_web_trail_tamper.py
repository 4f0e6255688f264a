"""Tampering behind the app's back, one case at a time: each is caught by `clampdown trail verify`
(exit 1, naming the first entry that fails and why) AND by the printed record's verification
line, even when the record was viewed (and its verification kept) just before the edit.

The attacker here has the database (and drops the guards when they are in the way), not the
trail key, except where a case says otherwise."""

import json
import re

import pytest
from sqlalchemy import text
from sqlalchemy.exc import DBAPIError
from sqlmodel import Session, select

from app.cli import main
from app.signoff import chain
from app.web.config import get_settings
from app.web.models import Report, Revision, TrailEntry, TrailHead, User
from app.web.services import trail
from app.web.trail_guard import create_guards, drop_guards

from .conftest import K1, TRAIL_KEY, channel_id, revision_ids

K4 = "K4 exhaust damper solenoid"


def _cli(world, monkeypatch, capsys, *args: str) -> tuple[int, str]:
    monkeypatch.setenv("CLAMPDOWN_DATABASE_URL", world.state.engine.url.render_as_string(False))
    monkeypatch.setenv("CLAMPDOWN_TRAIL_KEY", TRAIL_KEY)
    get_settings.cache_clear()
    try:
        code = main(list(args))
    finally:
        get_settings.cache_clear()
    captured = capsys.readouterr()
    return code, captured.out + captured.err


def _attack(world, *statements, params=None) -> None:
    with world.state.engine.begin() as connection:
        drop_guards(connection)
        for statement in statements:
            connection.execute(text(statement), params or {})
        create_guards(connection)


def _record_line(client, rev: int) -> str:
    page = client.get(f"/revisions/{rev}/record").text
    start = page.index("Trail verification at printing:")
    return page[start : page.index("</p>", start)]


def _assert_caught(world, monkeypatch, capsys, reviewer, rev, expected: str) -> None:
    code, out = _cli(world, monkeypatch, capsys, "trail", "verify")
    assert code == 1, out
    assert expected in out, out
    line = _record_line(reviewer, rev)
    assert "trail broken at" in line and expected in line.replace("&#39;", "'"), line


@pytest.fixture
def watched(world, reviewer, monkeypatch, capsys):
    """An intact trail, checked by the CLI and shown intact on a record (so the record's kept
    verification exists before the attack)."""
    code, out = _cli(world, monkeypatch, capsys, "trail", "verify")
    assert code == 0 and "trail intact" in out, out
    rev = revision_ids(world, K1)[1]
    assert "trail intact" in _record_line(reviewer, rev)
    return rev


def _revision(world, channel: str, label: str) -> Revision:
    with Session(world.state.engine) as db:
        return db.exec(
            select(Revision).where(Revision.channel_id == channel_id(world, channel), Revision.label == label)
        ).one()


def _last_seq(world, revision_id: int) -> int:
    with Session(world.state.engine) as db:
        return max(db.exec(select(TrailEntry.seq).where(TrailEntry.revision_id == revision_id)))


def test_a_state_changed_without_its_entry(world, reviewer, watched, monkeypatch, capsys):
    # K4 rev A was sent back (reviews.json); the attacker marks it signed off.
    rev = _revision(world, K4, "A")
    assert rev.state == "returned"
    with world.state.engine.begin() as connection:
        connection.execute(text("UPDATE revision SET state = 'signed_off' WHERE id = :id"), {"id": rev.id})
    expected = (
        f"entry {_last_seq(world, rev.id)}: the trail of revision A (id {rev.id}) leaves it sent back, "
        "but the revision is stored as signed off"
    )
    _assert_caught(world, monkeypatch, capsys, reviewer, rev.id, expected)


def test_an_author_changed(world, reviewer, watched, monkeypatch, capsys):
    rev = _revision(world, K1, "B")
    with Session(world.state.engine) as db:
        sam = db.exec(select(User).where(User.name == "sam")).one()
        save = db.exec(select(TrailEntry.seq).where(TrailEntry.revision_id == rev.id)).first()
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE revision SET author_id = :a WHERE id = :id"), {"a": sam.id, "id": rev.id}
        )
    expected = (
        f"entry {save}: 'dana' saved revision B (id {rev.id}), but the revision now names 'sam' as its author"
    )
    _assert_caught(world, monkeypatch, capsys, reviewer, rev.id, expected)
    # The record names the author the trail recorded, not the edited column.
    assert "<th>Author</th><td>dana, saved" in reviewer.get(f"/revisions/{rev.id}/record").text


def test_a_cached_report_edited_to_all_ok(world, reviewer, watched, monkeypatch, capsys):
    rev = _revision(world, K1, "A")  # no clamp: the switch breaks down (a violation)
    with Session(world.state.engine) as db:
        report = db.exec(select(Report).where(Report.content_hash == rev.content_hash)).one()
        first = db.exec(
            select(TrailEntry).where(TrailEntry.content_hash == rev.content_hash).order_by(TrailEntry.seq)
        ).first()
    body = dict(report.body)
    assert any(f["status"] in ("violation", "marginal") for f in body["findings"])
    body["findings"] = [dict(f, status="ok") for f in body["findings"] if f["status"] != "note"]
    body["verdict"] = "ok"
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE report SET body = :b, verdict = 'ok', violations = 0, marginals = 0 WHERE id = :id"),
            {"b": json.dumps(body), "id": report.id},
        )
    expected = (
        f"entry {first.seq} ({first.action}): no cached report of the content it records "
        f"({rev.content_hash[:12]}…) hashes to the report hash it bound"
    )
    _assert_caught(world, monkeypatch, capsys, reviewer, rev.id, expected)


def test_a_report_summary_column_edited(world, reviewer, watched, monkeypatch, capsys):
    rev = _revision(world, K1, "A")
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE report SET verdict = 'ok', violations = 0, marginals = 0 WHERE content_hash = :h"),
            {"h": rev.content_hash},
        )
    _assert_caught(world, monkeypatch, capsys, reviewer, rev.id, "its summary columns say ok, 0 violations")


def test_a_user_renamed(world, reviewer, watched, monkeypatch, capsys):
    with Session(world.state.engine) as db:
        first = db.exec(
            select(TrailEntry.seq).where(TrailEntry.user_name == "dana").order_by(TrailEntry.seq)
        ).first()
    with world.state.engine.begin() as connection:
        connection.execute(text("UPDATE user_account SET name = 'mallory' WHERE name = 'dana'"))
    expected = (
        f"entry {first}: made by 'dana', but no account has that name (an account was renamed or removed)"
    )
    _assert_caught(world, monkeypatch, capsys, reviewer, watched, expected)


def _head(world) -> tuple[int, str]:
    with Session(world.state.engine) as db:
        head = db.get(TrailHead, 1)
        return head.seq, head.hash


def _forged_row(world, seq: int, prev: str, revision_id: int) -> dict:
    fields = {
        "seq": seq,
        "revision_id": revision_id,
        "user_name": "lee",
        "role": "reviewer",
        "at": trail.utc_stamp(),
        "action": "sign_off",
        "content_hash": "0" * 64,
        "report_hash": "0" * 64,
        "meaning": "forged",
        "detail": "{}",
    }
    return {**fields, "prev_hash": prev, "hash": chain.entry_hash(fields, prev)}


INSERT = (
    "INSERT INTO trail_entry (seq, revision_id, user_name, role, at, action, content_hash, report_hash, "
    "meaning, detail, prev_hash, hash, mac) VALUES (:seq, :revision_id, :user_name, :role, :at, :action, "
    ":content_hash, :report_hash, :meaning, :detail, :prev_hash, :hash, :mac)"
)


@pytest.mark.parametrize("wrong", ["seq", "prev_hash"])
def test_a_plain_insert_that_does_not_follow_the_head_is_refused(world, watched, wrong):
    seq, digest = _head(world)
    row = _forged_row(world, seq + 1, digest, watched)
    row[wrong] = seq + 5 if wrong == "seq" else "f" * 64
    with pytest.raises(DBAPIError, match="must follow the head"):
        with world.state.engine.begin() as connection:
            connection.execute(text(INSERT), {**row, "mac": "0" * 64})
    assert _head(world) == (seq, digest)


def test_a_plain_insert_that_follows_the_head_is_caught_by_its_mac(
    world, reviewer, watched, monkeypatch, capsys
):
    seq, digest = _head(world)
    row = _forged_row(world, seq + 1, digest, watched)
    with world.state.engine.begin() as connection:  # the guards let it in: it follows the head
        connection.execute(text(INSERT), {**row, "mac": "0" * 64})
    expected = f"entry {seq + 1}: its key MAC does not match (written or recomputed without the trail key"
    _assert_caught(world, monkeypatch, capsys, reviewer, watched, expected)


@pytest.mark.parametrize(
    "statement",
    [
        "INSERT INTO trail_head (id, seq, hash) VALUES (2, 0, 'x')",
        "DELETE FROM trail_head",
        "UPDATE trail_head SET seq = seq - 1",
        "UPDATE trail_head SET hash = 'x'",
    ],
)
def test_the_head_is_guarded(world, watched, statement):
    before = _head(world)
    with pytest.raises(DBAPIError, match="only moves to the newest entry"):
        with world.state.engine.begin() as connection:
            connection.execute(text(statement))
    assert _head(world) == before


def _recompute_from(world, seq: int, change: str) -> None:
    """Edit entry ``seq`` and recompute every hash after it, and the head: a consistent chain,
    but without the key the MACs cannot follow."""
    with Session(world.state.engine) as db:
        rows = [r.model_dump() for r in db.exec(select(TrailEntry).order_by(TrailEntry.seq))]
    prev = chain.GENESIS
    statements = []
    for row in rows:
        if row["seq"] == seq:
            row["meaning"] = change
        if row["seq"] >= seq:
            row["prev_hash"] = prev
            row["hash"] = chain.entry_hash(row, prev)
            statements.append(row)
        prev = row["hash"]
    with world.state.engine.begin() as connection:
        drop_guards(connection)
        for row in statements:
            connection.execute(
                text(
                    "UPDATE trail_entry SET meaning = :meaning, prev_hash = :prev_hash, hash = :hash WHERE seq = :seq"
                ),
                row,
            )
        connection.execute(text("UPDATE trail_head SET hash = :h WHERE id = 1"), {"h": prev})
        create_guards(connection)


def test_the_whole_chain_recomputed_after_an_edit(world, reviewer, watched, monkeypatch, capsys):
    _recompute_from(world, 5, "nothing to see")
    expected = "entry 5: its key MAC does not match"
    _assert_caught(world, monkeypatch, capsys, reviewer, watched, expected)


def test_with_the_key_a_recomputed_chain_passes_but_not_the_anchor(
    world, reviewer, watched, monkeypatch, capsys, tmp_path
):
    """What the key alone cannot protect: someone holding the database AND the key can rewrite
    the trail so that every MAC matches. An anchor written earlier and kept elsewhere catches it."""
    anchor = tmp_path / "anchor.json"
    code, out = _cli(world, monkeypatch, capsys, "trail", "anchor", str(anchor))
    assert code == 0 and "anchored entry 30" in out, out  # the demo seed's 30 entries
    _recompute_from(world, 5, "nothing to see")
    key = TRAIL_KEY.encode()
    with Session(world.state.engine) as db:
        rows = list(db.exec(select(TrailEntry.seq, TrailEntry.hash).order_by(TrailEntry.seq)))
    with world.state.engine.begin() as connection:
        drop_guards(connection)
        for seq, digest in rows:
            connection.execute(
                text("UPDATE trail_entry SET mac = :m WHERE seq = :s"),
                {"m": chain.entry_mac(key, digest), "s": seq},
            )
        seq, digest = rows[-1]
        connection.execute(text("UPDATE trail_head SET mac = :m"), {"m": chain.head_mac(key, seq, digest)})
        create_guards(connection)
    code, out = _cli(world, monkeypatch, capsys, "trail", "verify")
    assert code == 0, out  # the documented limit: database and key together
    code, out = _cli(world, monkeypatch, capsys, "trail", "verify", "--anchor", str(anchor))
    assert code == 1
    assert "entry 30: the anchor records hash" in out and "the trail was rewritten up to the anchor" in out


def test_the_anchor_catches_a_database_rolled_back_to_an_older_copy(
    world, reviewer, watched, monkeypatch, capsys, tmp_path
):
    """A restored older copy is a consistent, fully MACed trail: only an anchor written after
    it knows entries are missing."""
    with Session(world.state.engine) as db:
        old_head = db.get(TrailHead, 1).model_dump()
    rev = revision_ids(world, K1)[2]  # rev C is in review: a comment is accepted
    assert reviewer.post(f"/revisions/{rev}/comments", data={"text": "one more"}).status_code == 303
    anchor = tmp_path / "anchor.json"
    assert _cli(world, monkeypatch, capsys, "trail", "anchor", str(anchor))[0] == 0
    _attack(
        world,
        "DELETE FROM trail_entry WHERE seq > :seq",
        "UPDATE trail_head SET seq = :seq, hash = :hash, mac = :mac WHERE id = 1",
        params=old_head,
    )
    assert _cli(world, monkeypatch, capsys, "trail", "verify")[0] == 0
    code, out = _cli(world, monkeypatch, capsys, "trail", "verify", "--anchor", str(anchor))
    assert code == 1
    assert (
        f"entry {old_head['seq'] + 1}: the anchor records it, but the trail ends at entry {old_head['seq']}"
        in out
    )


def test_verify_and_anchor_refuse_a_bad_anchor_file_by_field(world, monkeypatch, capsys, tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps({"format": "clampdown-trail-anchor/1", "seq": -1, "hash": "0" * 64}))
    code, out = _cli(world, monkeypatch, capsys, "trail", "verify", "--anchor", str(bad))
    assert code == 2
    assert "seq: must be a whole number of 0 or more" in out
    good = tmp_path / "a.json"
    assert _cli(world, monkeypatch, capsys, "trail", "anchor", str(good))[0] == 0
    code, out = _cli(world, monkeypatch, capsys, "trail", "anchor", str(good))
    assert code == 2
    assert "--output:" in out and "exists" in out


def test_a_trail_verified_with_another_key_names_entry_1(world, monkeypatch, capsys):
    monkeypatch.setenv("CLAMPDOWN_DATABASE_URL", world.state.engine.url.render_as_string(False))
    monkeypatch.setenv("CLAMPDOWN_TRAIL_KEY", "another key")
    get_settings.cache_clear()
    try:
        code = main(["trail", "verify"])
    finally:
        get_settings.cache_clear()
    assert code == 1
    assert "entry 1: its key MAC does not match" in capsys.readouterr().out


def test_the_record_verifies_once_until_something_changes(world, reviewer, monkeypatch):
    calls = []
    real = trail.verify_all
    monkeypatch.setattr(trail, "verify_all", lambda db, **kw: calls.append(1) or real(db, **kw))
    rev = revision_ids(world, K1)[2]
    for _ in range(3):
        assert "trail intact" in _record_line(reviewer, rev)
    assert len(calls) == 1
    assert reviewer.post(f"/revisions/{rev}/comments", data={"text": "a remark"}).status_code == 303
    assert "trail intact" in _record_line(reviewer, rev)
    assert len(calls) == 2
    # A change behind the app's back (no trail entry, no head move) also invalidates it.
    with world.state.engine.begin() as connection:
        connection.execute(text("UPDATE revision SET change_note = change_note WHERE id = :id"), {"id": rev})
    _record_line(reviewer, rev)
    assert len(calls) == 3


def test_a_pdf_of_a_revision_with_many_comments_is_bounded(world, reviewer, monkeypatch):
    from app.web.services import record

    monkeypatch.setattr(record, "PRINT_LIMIT_COMMENTS", 5)
    monkeypatch.setattr(record, "PRINT_LIMIT_ENTRIES", 8)
    rev = revision_ids(world, K1)[2]
    for number in range(9):
        assert (
            reviewer.post(f"/revisions/{rev}/comments", data={"text": f"remark {number}"}).status_code == 303
        )
    printed = {}
    monkeypatch.setattr(
        record, "render_pdf", lambda html, base_url: printed.setdefault("html", html) and b"%PDF"
    )
    monkeypatch.setattr(record, "pdf_available", lambda: True)  # as where WeasyPrint is installed
    response = reviewer.get(f"/revisions/{rev}/record.pdf")
    assert response.status_code == 200 and response.content == b"%PDF"
    html = printed["html"]
    # rev C: save + hand-in + 9 comments = 11 entries; 8 printed, 3 left out. 9 comments, 5 printed.
    assert "4 comments not printed" in html
    assert "the 3 oldest trail entries of this revision not printed" in html
    assert len(re.findall(r"remark \d</p>", html)) == 5
    # The on-screen record is not shortened.
    assert len(re.findall(r"remark \d</p>", reviewer.get(f"/revisions/{rev}/record").text)) == 9
