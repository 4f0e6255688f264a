"""The trail: `clampdown trail verify` passes an intact trail and names the first entry an
attacker touched (edited field, deleted row, swapped rows, rewritten document), exiting 1; the
database's triggers refuse UPDATE and DELETE of trail rows."""

import pytest
from sqlalchemy import text
from sqlalchemy.exc import DBAPIError

from app.cli import main
from app.web.config import get_settings
from app.web.trail_guard import create_guards, drop_guards

from .conftest import K1, TRAIL_KEY


def _verify(world, monkeypatch, capsys) -> tuple[int, str]:
    monkeypatch.setenv("CLAMPDOWN_DATABASE_URL", world.state.engine.url.render_as_string(False))
    monkeypatch.setenv("CLAMPDOWN_TRAIL_KEY", TRAIL_KEY)
    get_settings.cache_clear()
    try:
        code = main(["trail", "verify"])
    finally:
        get_settings.cache_clear()
    return code, capsys.readouterr().out


def _attack(world, *statements: str) -> None:
    """What someone with write access to the database would do: lift the guards, edit, restore."""
    with world.state.engine.begin() as connection:
        drop_guards(connection)
        for statement in statements:
            connection.execute(text(statement))
        create_guards(connection)


def test_the_demo_trail_verifies_and_exits_0(world, monkeypatch, capsys):
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 0, out
    # the demo seed: 12 saved revisions, 14 review actions (reviews.json) and 4 supersessions
    assert "trail intact" in out and "30 entries chained" in out


def test_an_edited_field_of_one_row_is_named(world, monkeypatch, capsys):
    _attack(world, "UPDATE trail_entry SET meaning = 'nothing to see' WHERE seq = 5")
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 1
    assert "entry 5: its hash does not match its fields (edited)" in out


def test_a_deleted_row_is_named(world, monkeypatch, capsys):
    _attack(world, "DELETE FROM trail_entry WHERE seq = 7")
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 1
    assert "entry 8: expected entry 7 here" in out


def test_a_row_cut_off_the_end_is_caught_by_the_head(world, monkeypatch, capsys):
    _attack(world, "DELETE FROM trail_entry WHERE seq = (SELECT max(seq) FROM trail_entry)")
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 1
    assert "entry 30: the trail ends at entry 29" in out  # the demo seed's 30 entries


def test_two_swapped_rows_are_named(world, monkeypatch, capsys):
    _attack(
        world,
        "UPDATE trail_entry SET seq = 1000 WHERE seq = 3",
        "UPDATE trail_entry SET seq = 3 WHERE seq = 4",
        "UPDATE trail_entry SET seq = 4 WHERE seq = 1000",
    )
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 1
    assert "entry 3: does not follow the entry before it" in out


def test_an_edited_revision_document_is_named(world, monkeypatch, capsys):
    from sqlmodel import Session, select

    from app.web.models import Revision

    with Session(world.state.engine) as db:
        rev = db.exec(select(Revision).where(Revision.label == "B").order_by(Revision.id)).first()
        document = dict(rev.document, name="quietly renamed")
    import json

    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE revision SET document = :doc WHERE id = :id"),
            {"doc": json.dumps(document), "id": rev.id},
        )
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 1
    assert f"revision B (id {rev.id}): its stored document does not match its content hash" in out
    assert "its first trail entry is entry" in out


def test_a_document_rewritten_with_its_hash_disagrees_with_the_trail(world, monkeypatch, capsys):
    import json

    from sqlmodel import Session, select

    from app.signoff.canonical import sha256_hex
    from app.web.models import Revision

    with Session(world.state.engine) as db:
        rev = db.exec(select(Revision).order_by(Revision.id.desc())).first()
        document = dict(rev.document, name="rewritten")
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE revision SET document = :doc, content_hash = :h WHERE id = :id"),
            {"doc": json.dumps(document), "h": sha256_hex(document), "id": rev.id},
        )
    code, out = _verify(world, monkeypatch, capsys)
    assert code == 1
    assert f"for revision {rev.label} (id {rev.id}), which now hashes to" in out


@pytest.mark.parametrize(
    "statement",
    ["UPDATE trail_entry SET meaning = 'x' WHERE seq = 1", "DELETE FROM trail_entry WHERE seq = 1"],
)
def test_the_database_refuses_to_change_trail_rows(world, statement):
    with pytest.raises(DBAPIError, match="append-only"):
        with world.state.engine.begin() as connection:
            connection.execute(text(statement))
    with world.state.engine.connect() as connection:
        assert connection.execute(text("SELECT count(*) FROM trail_entry")).scalar() == 30


def test_postgresql_also_refuses_truncate(world):
    if world.state.engine.dialect.name != "postgresql":
        pytest.skip("TRUNCATE is PostgreSQL's; SQLite has only DELETE, refused above")
    with pytest.raises(DBAPIError, match="append-only"):
        with world.state.engine.begin() as connection:
            connection.execute(text("TRUNCATE trail_entry"))


def test_the_record_shows_the_verification_state(world, reviewer, monkeypatch):
    from .conftest import revision_ids

    rev = revision_ids(world, K1)[1]
    assert "Trail verification at printing: trail intact" in reviewer.get(f"/revisions/{rev}/record").text
    _attack(world, "UPDATE trail_entry SET user_name = 'mallory' WHERE seq = 2")
    page = reviewer.get(f"/revisions/{rev}/record").text
    assert "trail broken at entry 2: its hash does not match its fields (edited)" in page
