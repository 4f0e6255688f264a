"""The JSON API: the same report as the CLI, 422 with field paths for bad input, never a 500."""

import io
import json
from contextlib import redirect_stdout

import pytest

from app.cli import main as clampdown

EXAMPLE = "seed_data/examples/conveyor-brake-solenoid.json"


def test_evaluate_returns_the_report_the_cli_prints(reviewer):
    out = io.StringIO()
    with redirect_stdout(out):
        clampdown(["check", EXAMPLE, "--format", "json"])
    with open(EXAMPLE, encoding="utf-8") as handle:
        document = json.load(handle)
    assert reviewer.post("/api/v1/evaluate", json=document).json() == json.loads(out.getvalue())


@pytest.mark.parametrize(
    ("change", "loc"),
    [
        ({"coil": {"inductance": "-3 mH"}}, ["coil", "inductance"]),
        ({"supply": {"nominal": "12 parsecs", "tolerance": 5}}, ["supply", "nominal"]),
        ({"clamp": {"kind": "magic"}}, ["clamp"]),
    ],
)
def test_invalid_design_is_422_with_the_field_path(reviewer, change, loc):
    with open(EXAMPLE, encoding="utf-8") as handle:
        document = json.load(handle)
    for key, value in change.items():
        document[key] = {**document[key], **value} if key == "coil" else value
    response = reviewer.post("/api/v1/evaluate", json=document)
    assert response.status_code == 422
    assert loc in [problem["loc"][: len(loc)] for problem in response.json()["detail"]]


@pytest.mark.parametrize("body", [b"{broken", b"[]", b"42", b'"text"', b"null"])
def test_malformed_bodies_are_422_not_500(reviewer, body):
    response = reviewer.post("/api/v1/evaluate", content=body, headers={"Content-Type": "application/json"})
    assert response.status_code == 422


def test_fixture_channel_and_revision_through_the_api(designer):
    fixture = designer.post("/api/v1/fixtures", json={"name": "Bench rig"}).json()
    channel = designer.post(
        f"/api/v1/fixtures/{fixture['id']}/channels", json={"name": "K1 lamp relay"}
    ).json()
    with open(EXAMPLE, encoding="utf-8") as handle:
        document = json.load(handle)
    revision = designer.post(
        f"/api/v1/channels/{channel['id']}/revisions", json={"document": document}
    ).json()
    assert revision["label"] == "A" and revision["verdict"] in ("ok", "marginal", "violation")
    listed = designer.get(f"/api/v1/channels/{channel['id']}").json()
    assert [r["label"] for r in listed["revisions"]] == ["A"]
    assert designer.get(f"/api/v1/fixtures/{fixture['id']}").json()["channels"][0]["latest"]["label"] == "A"


def test_bad_part_is_422_with_parameter_path(designer):
    response = designer.post("/api/v1/parts", json={"kind": "zener", "name": "Z", "params": {"vz": "lots"}})
    assert response.status_code == 422
    locs = [p["loc"] for p in response.json()["detail"]]
    assert ["vz"] in locs and ["tolerance"] in locs


def test_unknown_kind_is_named(designer):
    response = designer.post("/api/v1/parts", json={"kind": "triac", "name": "T", "params": {}})
    assert response.status_code == 422 and "allowed: transistor" in response.text


def test_missing_things_are_404(reviewer):
    assert reviewer.get("/api/v1/revisions/99999").status_code == 404
    assert reviewer.get("/revisions/99999").status_code == 404


def test_api_sign_in_returns_a_fresh_token(world):
    from fastapi.testclient import TestClient

    client = TestClient(world)
    first = client.get("/api/v1/session").json()["csrf_token"]
    answer = client.post(
        "/api/v1/session", json={"name": "lee", "password": "demo-pass-1"}, headers={"X-CSRF-Token": first}
    ).json()
    assert answer["role"] == "reviewer" and answer["csrf_token"] != first


def test_openapi_docs_are_served(reviewer):
    assert "/api/v1/evaluate" in reviewer.get("/api/v1/openapi.json").json()["paths"]


def _timestamps(node, out):
    if isinstance(node, dict):
        for key, value in node.items():
            if key in ("created_at", "updated_at"):
                out.append(value)
            else:
                _timestamps(value, out)
    elif isinstance(node, list):
        for value in node:
            _timestamps(value, out)
    return out


def test_every_api_timestamp_is_utc_with_its_offset(reviewer):
    from datetime import datetime, timedelta

    fixtures = reviewer.get("/api/v1/fixtures").json()
    channel = fixtures[0]["channels"][0]
    revision = channel["latest"]["id"]
    found = []
    for path in (
        "/api/v1/parts",
        "/api/v1/fixtures",
        f"/api/v1/channels/{channel['id']}",
        f"/api/v1/revisions/{revision}",
    ):
        _timestamps(reviewer.get(path).json(), found)
    assert len(found) > 10
    for value in found:
        assert datetime.fromisoformat(value).utcoffset() == timedelta(0), value
