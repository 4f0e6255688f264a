"""Revisions: the form pre-fills, previews and saves; uploads and downloads round-trip through
`clampdown check`; stored revisions never change."""

import hashlib
import io
import json
from contextlib import redirect_stdout

import pytest
from sqlmodel import Session

from app.cli import main as clampdown
from app.web.models import ImmutableRevisionError, Revision
from app.web.services.documents import canonical_json

from .conftest import K1, K2, K3, channel_id, form_values, part_id, revision_ids


def _cli_report(path) -> dict:
    out = io.StringIO()
    with redirect_stdout(out):
        clampdown(["check", str(path), "--format", "json"])
    return json.loads(out.getvalue())


def test_downloaded_revision_is_judged_identically_by_the_cli(designer, world, tmp_path):
    for rev in revision_ids(world, K1) + revision_ids(world, K3):
        download = designer.get(f"/revisions/{rev}/design.json")
        assert download.status_code == 200
        path = tmp_path / f"rev-{rev}.json"
        path.write_bytes(download.content)
        stored = designer.get(f"/api/v1/revisions/{rev}/report").json()
        assert _cli_report(path) == stored


def test_content_hash_is_sha256_of_canonical_json(designer, world):
    rev = designer.get(f"/api/v1/revisions/{revision_ids(world, K2)[0]}").json()
    expected = hashlib.sha256(canonical_json(rev["document"]).encode()).hexdigest()
    assert rev["content_hash"] == expected


def test_new_revision_form_is_prefilled_from_the_latest_revision(designer, world):
    page = designer.get(f"/channels/{channel_id(world, K2)}/new").text
    assert 'value="1k2"' in page  # rev B's base resistor, as entered
    assert "Pre-filled from rev B" in page


def test_saving_the_form_makes_the_next_revision_with_frozen_parts(designer, world):
    values = {**form_values(world, K2), "base.r_series": "1.5 kΩ", "change_note": "a touch more margin"}
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert response.status_code == 303
    page = designer.get(response.headers["location"]).text
    assert "rev C" in page and "1.5 kΩ" in page and "a touch more margin" in page
    assert "Demo signal relay 12 V / 270 Ω sensitive (illustrative)" in page


def test_form_errors_appear_beside_the_field_and_nothing_is_saved(designer, world):
    before = revision_ids(world, K2)
    values = {**form_values(world, K2), "coil": "", "base.r_series": "-3k"}
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert response.status_code == 422
    assert 'id="err-f-base-r_series">&#34;-3k&#34; must be positive' in response.text
    assert 'id="err-f-coil">pick a part from the library' in response.text
    assert revision_ids(world, K2) == before


def test_preview_rerenders_findings_as_fields_change(designer, world):
    values = {**form_values(world, K2), "base.r_series": "47k"}
    response = designer.post(
        f"/channels/{channel_id(world, K2)}/preview", data=values, headers={"HX-Request": "true"}
    )
    assert response.status_code == 200
    assert "Saturation overdrive" in response.text and "Exceeds rating" in response.text
    assert 'hx-swap-oob="true"' in response.text


def test_preview_shows_unit_mistakes_beside_the_field(designer, world):
    values = {**form_values(world, K2), "supply.nominal": "12 A"}
    response = designer.post(f"/channels/{channel_id(world, K2)}/preview", data=values)
    assert "unknown prefix or unit" in response.text
    assert 'id="err-f-supply-nominal" hx-swap-oob="true">' in response.text


def test_part_search_narrows_the_picker(designer, world):
    response = designer.get("/parts/picker", params={"slot": "coil", "q": "sensitive"})
    assert "270 Ω sensitive" in response.text and "contactor" not in response.text


def test_uploaded_design_file_becomes_a_revision(designer, world):
    with open("seed_data/examples/tank-level-relay.json", "rb") as handle:
        response = designer.post(
            f"/channels/{channel_id(world, K3)}/upload",
            files={"file": ("tank.json", handle)},
            data={"change_note": "from the bench"},
        )
    assert response.status_code == 303
    assert "from the bench" in designer.get(response.headers["location"]).text


@pytest.mark.parametrize(
    ("content", "message"),
    [
        (b"{not json", "not JSON"),
        (b'{"format": "clampdown-design/1"}', "name: is required"),
        (b"[]", "JSON object"),
    ],
)
def test_bad_upload_is_refused_with_the_problem(designer, world, content, message):
    before = revision_ids(world, K3)
    response = designer.post(f"/channels/{channel_id(world, K3)}/upload", files={"file": ("x.json", content)})
    assert response.status_code == 422 and message in response.text
    assert revision_ids(world, K3) == before


def test_editing_a_library_part_leaves_stored_revisions_and_reports_unchanged(designer, world):
    revs = revision_ids(world, K1)
    before = [
        (designer.get(f"/api/v1/revisions/{r}").json(), designer.get(f"/api/v1/revisions/{r}/report").json())
        for r in revs
    ]
    pid = part_id(world, "coil", "Demo contactor coil 24 V / 160 Ω (illustrative)")
    part = designer.get(f"/api/v1/parts/{pid}").json()
    changed = designer.put(
        f"/api/v1/parts/{pid}", json={"name": part["name"], "params": {**part["params"], "v_pickup": 20}}
    )
    assert changed.status_code == 200, changed.text
    after = [
        (designer.get(f"/api/v1/revisions/{r}").json(), designer.get(f"/api/v1/revisions/{r}/report").json())
        for r in revs
    ]
    assert after == before
    assert before[0][0]["document"]["coil"]["v_pickup"] == 14.4


def test_a_saved_revision_cannot_be_changed(world):
    rev = revision_ids(world, K1)[0]
    with Session(world.state.engine) as db:
        revision = db.get(Revision, rev)
        revision.change_note = "rewritten history"
        db.add(revision)
        with pytest.raises(ImmutableRevisionError):
            db.commit()


def test_revision_page_shows_inputs_parts_operating_point_and_formulas(reviewer, world):
    page = reviewer.get(f"/revisions/{revision_ids(world, K1)[-1]}").text
    for text in (
        "Findings",
        "Nominal operating point",
        "Turn-off (nominal corner)",
        "Inputs",
        "Parts as frozen in this revision",
        "<summary>formula</summary>",
        "Peak switch voltage",
    ):
        assert text in page


def test_the_form_carries_the_load_and_divider_fields(designer, world):
    page = designer.get(f"/channels/{channel_id(world, K2)}/new").text
    for name in (
        "load.kind",
        "load.voltage",
        "load.supply",
        "load.current",
        "load.inrush_multiple",
        "drive.transition",
        "drive.v_source_tolerance",
        "drive.fixed_power_rating",
        "drive.sensor_power_rating",
    ):
        assert f'name="{name}"' in page, name
    values = {
        **form_values(world, K2),
        "load.kind": "motor",
        "load.voltage": "230 V",
        "load.supply": "ac",
        "load.current": "1.5 A",
        "change_note": "the fan motor on the contacts",
    }
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert response.status_code == 303, response.text
    rev = revision_ids(world, K2)[-1]
    document = designer.get(f"/api/v1/revisions/{rev}").json()["document"]
    assert document["load"] == {"kind": "motor", "voltage": "230 V", "supply": "ac", "current": "1.5 A"}
    report = designer.get(f"/api/v1/revisions/{rev}/report").json()
    assert "IEC 60449" in report["mains_caution"]
    record = designer.get(f"/revisions/{rev}/record").text
    assert "Mains-voltage load." in record
