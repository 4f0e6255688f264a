"""After an action the page says what happened (carried by the redirect in a signed
parameter that a crafted link cannot imitate)."""

from .conftest import K1, channel_id, form_values, revision_ids


def test_signing_off_says_so_on_the_page_it_lands_on(world, reviewer):
    rev_c = revision_ids(world, K1)[2]
    response = reviewer.post(f"/revisions/{rev_c}/sign-off", data={"note": "fine"})
    assert response.status_code == 303 and response.headers["location"].startswith(
        f"/revisions/{rev_c}/review?done="
    )
    page = reviewer.get(response.headers["location"]).text
    assert 'class="flash"' in page and "Rev C signed off" in page and "approved baseline" in page


def test_comments_waivers_and_saves_each_say_what_happened(world, reviewer, designer):
    rev_c = revision_ids(world, K1)[2]
    done = reviewer.post(
        f"/revisions/{rev_c}/comments", data={"text": "Looks right.", "finding": "switch.power"}
    )
    assert "Comment added on switch.power" in reviewer.get(done.headers["location"]).text
    saved = designer.post(
        f"/channels/{channel_id(world, K1)}/revisions",
        data={**form_values(world, K1), "change_note": "again"},
    )
    assert "saved as a draft" in designer.get(saved.headers["location"]).text
    # rev A's design again (no clamp: the switch breaks down), handed in and waived
    rev_a_doc = designer.get(f"/api/v1/revisions/{revision_ids(world, K1)[0]}").json()["document"]
    made = designer.post(f"/api/v1/channels/{channel_id(world, K1)}/revisions", json={"document": rev_a_doc})
    rid = made.json()["id"]
    assert designer.post(f"/revisions/{rid}/hand-in", data={"note": ""}).status_code == 303
    waived = reviewer.post(
        f"/revisions/{rid}/waivers",
        data={"finding": "switch.breakdown", "justification": "bench test only, never fielded"},
    )
    assert "Waiver recorded for switch.breakdown" in reviewer.get(waived.headers["location"]).text


def test_a_crafted_message_is_not_shown(world, reviewer):
    rev_c = revision_ids(world, K1)[2]
    page = reviewer.get(f"/revisions/{rev_c}/review", params={"done": "Rev C signed off"}).text
    assert 'class="flash"' not in page and "Rev C signed off" not in page


def test_saving_a_part_says_so(designer):
    diode = {"vrrm": "200", "if_avg": "1 A", "i_peak": "30", "vf": "1.1 V", "vf_at": "1"}
    created = designer.post("/parts", data={"kind": "diode", "name": "Bench rectifier", **diode})
    assert "Part “Bench rectifier” added to the library." in designer.get(created.headers["location"]).text
    part = designer.get("/api/v1/parts", params={"kind": "diode", "q": "bench"}).json()[0]
    edited = designer.post(f"/parts/{part['id']}", data={"name": "Bench rectifier", **diode, "vf": "1.0 V"})
    assert "Part “Bench rectifier” saved" in designer.get(edited.headers["location"]).text
