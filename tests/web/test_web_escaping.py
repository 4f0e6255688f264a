"""Script and markup typed into any text field come back as text, never as markup."""

import json

from .conftest import K1, channel_id, form_values, revision_ids

PAYLOAD = '<script>alert("x")</script><img src=x onerror=alert(1)>'
ESCAPED = "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt;&lt;img src=x onerror=alert(1)&gt;"


def _assert_escaped(text: str) -> None:
    assert PAYLOAD not in text and "<script>alert" not in text
    assert ESCAPED in text


def test_every_text_field_is_escaped_where_it_is_shown(designer, world):
    fixture = designer.post("/fixtures", data={"name": PAYLOAD, "description": PAYLOAD})
    assert fixture.status_code == 303
    _assert_escaped(designer.get(fixture.headers["location"]).text)
    _assert_escaped(designer.get("/").text)
    fid = fixture.headers["location"].split("?")[0].rsplit("/", 1)[1]
    channel = designer.post(
        f"/fixtures/{fid}/channels", data={"name": PAYLOAD, "load": PAYLOAD, "mains_load": "on"}
    )
    _assert_escaped(designer.get(channel.headers["location"]).text)

    part = designer.post(
        "/parts",
        data={
            "kind": "diode",
            "name": PAYLOAD,
            "notes": PAYLOAD,
            "vrrm": "100",
            "if_avg": "1",
            "i_peak": "30",
            "vf": "1",
            "vf_at": "1",
        },
    )
    assert part.status_code == 303
    _assert_escaped(designer.get("/parts?kind=diode").text)

    values = {**form_values(world, K1), "name": PAYLOAD, "notes": PAYLOAD, "change_note": PAYLOAD}
    saved = designer.post(f"/channels/{channel_id(world, K1)}/revisions", data=values)
    assert saved.status_code == 303
    _assert_escaped(designer.get(saved.headers["location"]).text)
    _assert_escaped(designer.get(f"/channels/{channel_id(world, K1)}").text)


def test_markup_in_a_rejected_value_is_escaped_in_the_error(designer, world):
    values = {**form_values(world, K1), "supply.nominal": PAYLOAD}
    response = designer.post(f"/channels/{channel_id(world, K1)}/preview", data=values)
    assert "<script>alert" not in response.text and "&lt;script&gt;" in response.text


def test_markup_in_an_uploaded_design_is_escaped(designer, world):
    document = json.loads(designer.get(f"/revisions/{revision_ids(world, K1)[0]}/design.json").text)
    document["name"] = PAYLOAD
    response = designer.post(
        f"/channels/{channel_id(world, K1)}/upload",
        files={"file": ("x.json", json.dumps(document))},
        data={"change_note": PAYLOAD},
    )
    _assert_escaped(designer.get(response.headers["location"]).text)


def test_markup_in_a_user_name_is_refused(admin):
    response = admin.post(
        "/admin/users", data={"name": PAYLOAD, "password": "long-enough", "role": "designer"}
    )
    assert response.status_code == 422 and "<script>alert" not in response.text
