"""Lists show the review state beside the engineering verdict, and the channel's approved
baseline (its newest signed-off revision) is marked everywhere, in the pages and the API."""

from .conftest import K1, channel_id, revision_ids

K5 = "K5 door-heat warning lamp relay"


def _row(page: str, name: str) -> str:
    """The whole table row (after the page's heading, so not a queue's) that names ``name``."""
    body = page.split("<h1>", 1)[1]
    return next(row for row in body.split("<tr") if name in row).split("</tr>", 1)[0]


def test_home_and_fixture_pages_show_review_state_beside_the_verdict(world, reviewer):
    home = reviewer.get("/").text
    k1 = _row(home, K1)
    # K1 rev C is past derating under engine 2.1.0 (the demo's K1 now switches a mains load
    # through its contacts); the verdict and the review state stand side by side.
    assert "In review" in k1 and "Past derating" in k1
    assert "approved baseline" in k1 and ">rev B</a>" in k1  # rev C is newest; B is the baseline
    k5 = _row(home, K5)
    assert "Past derating" in k5 and "Signed off" in k5 and "approved baseline" in k5
    assert "1 waiver" in k5  # signed off with the marginal finding accepted: not just "past derating"
    fixture_id = reviewer.get("/api/v1/fixtures").json()[0]["id"]
    fixture_page = reviewer.get(f"/fixtures/{fixture_id}").text
    assert "In review" in _row(fixture_page, K1)


def test_the_channel_history_marks_the_baseline_and_old_sign_offs(world, reviewer):
    page = reviewer.get(f"/channels/{channel_id(world, K1)}").text
    rows = page.split("<tbody>", 1)[1].split("</tr>")
    rev_c, rev_b, rev_a = rows[0], rows[1], rows[2]
    assert "In review" in rev_c and "approved baseline" not in rev_c
    assert "Superseded" in rev_b and "approved baseline" in rev_b
    assert "Superseded" in rev_a and "approved baseline" not in rev_a and "was signed off" not in rev_a


def test_the_api_revision_objects_carry_the_review_state(world, reviewer):
    a, b, c = revision_ids(world, K1)
    got = {r["id"]: r for r in reviewer.get(f"/api/v1/channels/{channel_id(world, K1)}").json()["revisions"]}
    assert (got[c]["state"], got[c]["signed_off"], got[c]["approved_baseline"]) == ("in_review", False, False)
    assert (got[b]["state"], got[b]["signed_off"], got[b]["approved_baseline"]) == ("superseded", True, True)
    assert (got[a]["state"], got[a]["signed_off"], got[a]["approved_baseline"]) == (
        "superseded",
        False,
        False,
    )
    k5 = reviewer.get(f"/api/v1/channels/{channel_id(world, K5)}").json()["latest"]
    assert (k5["state"], k5["verdict"], k5["waivers"]) == ("signed_off", "marginal", 1)
    one = reviewer.get(f"/api/v1/revisions/{b}").json()
    assert one["state"] == "superseded" and one["approved_baseline"] is True
    k5_rev = reviewer.get(f"/api/v1/revisions/{k5['id']}").json()
    assert (k5_rev["state"], k5_rev["signed_off"], k5_rev["waivers"]) == ("signed_off", True, 1)


def test_signing_off_moves_the_baseline_at_once_on_the_home_page(world, reviewer):
    reviewer.get("/")  # the overview is rendered and kept
    rev_c = revision_ids(world, K1)[2]
    assert reviewer.post(f"/revisions/{rev_c}/sign-off", data={"note": ""}).status_code == 303
    k1 = _row(reviewer.get("/").text, K1)
    assert "Signed off" in k1 and "approved baseline" in k1 and ">rev B</a>" not in k1


def test_compare_defaults_to_the_approved_baseline(world, reviewer):
    a, b, c = revision_ids(world, K1)
    page = reviewer.get(f"/channels/{channel_id(world, K1)}/compare").text
    assert "rev B → rev C" in page
    assert "compare with rev B (approved baseline)" in reviewer.get(f"/revisions/{c}/review").text
