"""What the home, fixture and channel pages tell a team lead."""

from .conftest import K1, K2, channel_id, form_values


def test_home_shows_each_channels_latest_revision_with_counts(reviewer):
    page = reviewer.get("/").text
    assert "Glaze test kiln KT-1" in page
    k2_row = page[page.index(K2) :].split("</tr>")[0]
    assert ">B</a>" in k2_row and "Within limits" in k2_row and "<b>0</b> exceeding" in k2_row


def test_channel_page_lists_every_revision_with_its_status(reviewer, world):
    page = reviewer.get(f"/channels/{channel_id(world, K1)}").text
    assert page.count("Exceeds rating") == 1  # rev A, no clamp
    assert all(f">{label}</a>" in page for label in "ABC")


def test_mains_load_carries_the_caution(reviewer, world):
    page = reviewer.get(f"/channels/{channel_id(world, K1)}").text
    assert "MAINS-VOLTAGE LOAD" in page and "creepage and clearance" in page
    assert "MAINS-VOLTAGE LOAD" not in reviewer.get(f"/channels/{channel_id(world, K2)}").text


def test_status_is_spelled_out_not_only_coloured(reviewer, world):
    page = reviewer.get(f"/channels/{channel_id(world, K1)}").text
    assert 'class="st st-violation"><span class="st-mark" aria-hidden="true">✕</span>Exceeds rating' in page


def test_reviewer_sees_no_new_revision_button(reviewer, world):
    assert "New revision" not in reviewer.get(f"/channels/{channel_id(world, K1)}").text


def test_trivial_endpoint_answers(reviewer):
    assert reviewer.get("/healthz").text == "ok"


def test_home_shows_a_new_revision_at_once(designer, world):
    assert designer.get("/").status_code == 200  # the overview is now rendered and kept
    values = {**form_values(world, K2), "base.r_series": "47k", "change_note": "oops"}
    assert designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values).status_code == 303
    overview = designer.get("/").text.split("<h1>Fixtures</h1>", 1)[1]  # below the queues
    k2_row = overview.split(K2, 1)[1].split("</tr>")[0]
    assert ">C</a>" in k2_row and "Exceeds rating" in k2_row


def test_home_shows_a_new_fixture_at_once(designer):
    designer.get("/")
    designer.post("/fixtures", data={"name": "Second bench"})
    assert "Second bench" in designer.get("/").text
