"""One error shape for the whole API, and inputs that used to end in a server error.

Every API error is {"detail": [{"loc": [...], "msg": "...", "type": "..."}]} (the shape FastAPI
gives a 422), whatever raised it; headers an error carries (Retry-After) are kept."""

import json
import threading

import httpx
import pytest
from fastapi import HTTPException
from sqlmodel import Session, select

from app.engine import DesignError
from app.web.main import route_table
from app.web.models import Fixture

from .conftest import K1, K2, channel_id, revision_ids, sign_in
from .test_web_review_concurrency import _client, server  # noqa: F401  (the uvicorn fixture)


def _shape(response, status: int) -> list[dict]:
    assert response.status_code == status, (response.status_code, response.text[:300])
    body = response.json()
    assert set(body) == {"detail"} and isinstance(body["detail"], list) and body["detail"], body
    for item in body["detail"]:
        assert set(item) == {"loc", "msg", "type"}, item
        assert isinstance(item["loc"], list) and all(isinstance(x, str | int) for x in item["loc"])
        assert isinstance(item["msg"], str) and item["msg"] and isinstance(item["type"], str)
    return body["detail"]


@pytest.fixture
def raising(world):
    """A small route that raises a plain HTTPException, as other parts of the app (body-size
    caps, the sign-in throttle) do, with a header."""

    async def boom(status: int):
        raise HTTPException(status, detail=f"refused with {status}", headers={"Retry-After": "7"})

    world.add_api_route("/api/v1/test-raise/{status}", boom, methods=["GET"])
    return world


DIODE = {"vrrm": 100, "if_avg": 1, "i_peak": 30, "vf": 1, "vf_at": 1}


def test_every_status_has_the_one_shape(raising, reviewer, designer):
    anonymous = sign_in(raising, None)
    [item] = _shape(anonymous.get("/api/v1/parts"), 401)
    assert item["type"] == "sign_in_required"
    [item] = _shape(reviewer.post("/api/v1/parts", json={"kind": "diode", "name": "x", "params": DIODE}), 403)
    assert "you need the role designer or admin" in item["msg"] and item["loc"] == ["role"]
    no_token = sign_in(raising, "dana")
    del no_token.headers["X-CSRF-Token"]
    [item] = _shape(no_token.post("/api/v1/fixtures", json={"name": "x"}), 403)
    assert item["loc"] == ["header", "X-CSRF-Token"]
    [item] = _shape(reviewer.get("/api/v1/parts/999999"), 404)
    assert item["msg"] == "part 999999 not found" and item["type"] == "not_found"
    _shape(reviewer.get("/api/v1/no-such-thing"), 404)
    _shape(reviewer.delete("/api/v1/engine"), 405)
    assert designer.post("/api/v1/fixtures", json={"name": "Twice"}).status_code == 201
    [item] = _shape(designer.post("/api/v1/fixtures", json={"name": "twice"}), 409)
    assert item["loc"] == ["name"] and "already exists" in item["msg"]
    detail = _shape(designer.post("/api/v1/parts", json={"kind": "diode"}), 422)
    assert ["body", "name"] in [d["loc"] for d in detail]
    bad_part = {"kind": "diode", "name": "D", "params": {**DIODE, "vf": "-1"}}
    assert all(d["type"] == "value_error" for d in _shape(designer.post("/api/v1/parts", json=bad_part), 422))
    for status in (413, 429):
        response = reviewer.get(f"/api/v1/test-raise/{status}")
        [item] = _shape(response, status)
        assert item["msg"] == f"refused with {status}"
        assert response.headers["Retry-After"] == "7"
    assert reviewer.get("/api/v1/test-raise/413").json()["detail"][0]["type"] == "too_large"
    assert reviewer.get("/api/v1/test-raise/429").json()["detail"][0]["type"] == "too_many_requests"


def test_pages_keep_their_error_page_and_the_header(raising, reviewer):
    raising.add_api_route("/test-raise/{status}", raising.routes[-1].endpoint, methods=["GET"])
    response = reviewer.get("/test-raise/429")
    assert response.status_code == 429 and "Too many requests" in response.text
    assert "refused with 429" in response.text and response.headers["Retry-After"] == "7"
    assert sign_in(raising, None).get("/parts").status_code == 303  # sign-in stays a redirect


# ----- ids beyond the integer columns

HUGE = [2**31, 2**63, 2**70]


@pytest.mark.parametrize("number", HUGE, ids=["2^31", "2^63", "2^70"])
def test_ids_beyond_the_integer_column_are_not_found(admin, world, number):
    tried = 0
    for method, path in route_table(world):
        if "_id}" not in path or path.count("{") != 1:
            continue
        concrete = path.split("{")[0] + str(number) + path.split("}", 1)[1]
        response = admin.request(method, concrete, data={"name": "x"})
        tried += 1
        assert response.status_code == 404, (
            f"{method} {concrete}: {response.status_code} {response.text[:200]}"
        )
        if concrete.startswith("/api/"):
            [item] = _shape(response, 404)
            assert str(number) in item["msg"]
    assert tried > 20


def test_an_id_query_parameter_beyond_the_column_is_refused_by_name(reviewer, world):
    response = reviewer.get(f"/channels/{channel_id(world, K1)}/compare", params={"old": 2**40})
    assert (
        response.status_code == 422 and "old: must be a whole number of at most 2147483647" in response.text
    )
    picker = reviewer.get("/parts/picker", params={"slot": "switch", "switch": str(2**70)})
    assert picker.status_code == 200


# ----- names, and many identical creates at once


def test_a_name_differing_only_in_case_outside_ascii_is_taken(designer, world):
    fixture = designer.post("/api/v1/fixtures", json={"name": "Öfen Ä-Linie"}).json()
    _shape(designer.post("/api/v1/fixtures", json={"name": "öFEN ä-linie"}), 409)
    assert (
        designer.post(f"/api/v1/fixtures/{fixture['id']}/channels", json={"name": "Ventil Ü1"}).status_code
        == 201
    )
    [item] = _shape(
        designer.post(f"/api/v1/fixtures/{fixture['id']}/channels", json={"name": "ventil ü1"}), 409
    )
    assert item["loc"] == ["name"] and "already has a channel named" in item["msg"]
    page = designer.post(f"/fixtures/{fixture['id']}/channels", data={"name": "VENTIL Ü1"})
    assert page.status_code == 409 and "already has a channel named" in page.text


def test_ten_identical_creates_at_once_one_wins_the_others_conflict(world, server):  # noqa: F811
    clients = [_client(server, "dana") for _ in range(10)]
    barrier = threading.Barrier(10)
    statuses = []

    def create(client: httpx.Client) -> None:
        barrier.wait()
        statuses.append(client.post("/api/v1/fixtures", json={"name": "Same bench"}))

    threads = [threading.Thread(target=create, args=(c,)) for c in clients]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(60)
    codes = sorted(r.status_code for r in statuses)
    assert codes == [201] + [409] * 9, codes
    for response in statuses:
        if response.status_code == 409:
            _shape(response, 409)
    with Session(world.state.engine) as db:
        assert len(db.exec(select(Fixture).where(Fixture.name == "Same bench")).all()) == 1


# ----- design documents that used to end in a server error


def _k2_document(world, client) -> dict:
    return client.get(f"/api/v1/revisions/{revision_ids(world, K2)[-1]}").json()["document"]


@pytest.mark.parametrize(
    ("change", "loc", "words"),
    [
        ({"coil": {"inductance": 10**30}}, ["coil", "inductance"], "too large a number"),
        (
            {"notes": {"a": {"b": {"c": {"d": {"e": {"f": {"g": {"h": {"i": {"j": {"k": {"l": 1}}}}}}}}}}}}},
            None,
            "nested more than 12 levels",
        ),
        ({"change": "x" * 30000}, ["change"], "too long"),
    ],
)
def test_designs_with_huge_numbers_or_deep_nesting_are_refused_by_field(world, designer, change, loc, words):
    document = _k2_document(world, designer)
    for key, value in change.items():
        document[key] = (
            {**document[key], **value}
            if isinstance(value, dict) and isinstance(document.get(key), dict)
            else value
        )
    url = f"/api/v1/channels/{channel_id(world, K2)}/revisions"
    [item] = _shape(designer.post(url, json={"document": document}), 422)
    assert words in item["msg"]
    if loc:
        assert item["loc"] == loc
    [item] = _shape(designer.post("/api/v1/evaluate", json=document), 422)
    assert words in item["msg"]
    upload = designer.post(
        f"/channels/{channel_id(world, K2)}/upload", files={"file": ("d.json", json.dumps(document))}
    )
    assert upload.status_code == 422 and words in upload.text


def test_very_deep_nesting_and_nan_in_a_body_or_file_are_4xx(world, designer):
    deep = "[" * 100000 + "]" * 100000
    url = f"/api/v1/channels/{channel_id(world, K2)}/revisions"
    response = designer.post(
        url, content='{"document": ' + deep + "}", headers={"content-type": "application/json"}
    )
    _shape(response, response.status_code)
    assert 400 <= response.status_code < 500
    upload = designer.post(f"/channels/{channel_id(world, K2)}/upload", files={"file": ("d.json", deep)})
    assert upload.status_code == 422 and "nested too deeply" in upload.text
    document = _k2_document(world, designer)
    text = json.dumps({"document": document}).replace('"coil": {', '"coil": {"probe": NaN, ', 1)
    assert "NaN" in text, text[:2000]
    response = designer.post(url, content=text, headers={"content-type": "application/json"})
    [item] = _shape(response, 422)
    assert item["loc"] == ["coil", "probe"] and "finite" in item["msg"]
    upload = designer.post(
        f"/channels/{channel_id(world, K2)}/upload",
        files={"file": ("d.json", json.dumps(document).replace("{", '{"x": Infinity, ', 1))},
    )
    assert upload.status_code == 422 and "Infinity is not a JSON number" in upload.text


def test_a_report_holding_an_infinity_saves_and_serves(world, designer, monkeypatch):
    from app.web.services import reports

    real = reports.evaluate

    def with_infinity(design, *profile):
        report = real(design, *profile)
        report["findings"][0]["value"] = float("inf")
        return report

    monkeypatch.setattr(reports, "evaluate", with_infinity)
    document = _k2_document(world, designer)
    document["name"] = "infinite somewhere"
    made = designer.post(f"/api/v1/channels/{channel_id(world, K2)}/revisions", json={"document": document})
    assert made.status_code == 201, made.text
    report = designer.get(f"/api/v1/revisions/{made.json()['id']}/report")
    assert report.status_code == 200 and report.json()["findings"][0]["value"] is None
    assert designer.get(f"/revisions/{made.json()['id']}").status_code == 200


def test_a_design_the_engine_refuses_is_a_4xx_naming_the_field(world, designer, monkeypatch):
    from app.web.services import reports

    def refuse(design, *profile):
        raise DesignError(["coil.inductance: gives no finite turn-off for this clamp"])

    monkeypatch.setattr(reports, "evaluate", refuse)
    document = _k2_document(world, designer)
    document["name"] = "refused by the engine"
    response = designer.post(
        f"/api/v1/channels/{channel_id(world, K2)}/revisions", json={"document": document}
    )
    [item] = _shape(response, 422)
    assert item["loc"] == ["coil", "inductance"]


def test_a_database_that_cannot_be_reached_is_a_503_not_a_server_error(tmp_path):
    """With the database gone (here: nothing listens on the port), a signed-in request is told
    so with 503 and Retry-After, on a page and in the API's one error shape; /healthz, which
    needs no database, still answers."""
    from fastapi.testclient import TestClient

    from app.web.config import Settings
    from app.web.main import create_app
    from app.web.security import COOKIE_NAME

    from .conftest import TRAIL_KEY

    settings = Settings(
        data_dir=tmp_path,
        database_url="postgresql+psycopg://postgres@127.0.0.1:9/nothing",  # the discard port: refused
        secret_key="test-key",
        trail_key=TRAIL_KEY,
    )
    app = create_app(settings)
    client = TestClient(app, raise_server_exceptions=False, follow_redirects=False)
    client.cookies.set(COOKIE_NAME, app.state.signer.dumps(app.state.signer.new(1, 0)))
    assert client.get("/healthz").status_code == 200
    page = client.get("/parts")
    assert page.status_code == 503
    assert page.headers["Retry-After"] == "5"
    assert "database cannot be reached" in page.text
    (item,) = _shape(client.get("/api/v1/parts"), 503)
    assert item["loc"] == ["database"] and item["type"] == "unavailable"
    assert "reload first to see whether it was stored" in item["msg"]
    app.state.engine.dispose()
