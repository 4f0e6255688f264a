"""What the home, fixture and channel pages tell a team lead."""

from .conftest import K1, K2, channel_id


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
