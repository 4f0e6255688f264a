"""What is said in review is shown where it belongs, with who and when: the hand-in note, what
must change when sent back, the sign-off note — on the review page, the revision page and the
printed record, and the channel's review history on the record."""

from .conftest import K1, revision_ids, sign_in


def _k1(world):
    return revision_ids(world, K1)  # A: sent back; B: signed off; C: handed in (demo reviews.json)


def test_the_designer_sees_why_a_revision_was_sent_back(world, designer):
    rev_a = _k1(world)[0]
    for page in (designer.get(f"/revisions/{rev_a}").text, designer.get(f"/revisions/{rev_a}/review").text):
        assert "Sent back for changes" in page
        assert "What must change:" in page and "Clamp the coil before this goes further." in page
        assert "by lee" in page  # who; and when, in UTC
        assert "UTC" in page.split("Clamp the coil before", 1)[0].rsplit("Sent back for changes", 1)[1]


def test_the_hand_in_note_is_on_the_reviewers_page(world, reviewer):
    rev_c = _k1(world)[2]
    page = reviewer.get(f"/revisions/{rev_c}/review").text
    assert "Note to the reviewer:" in page and "Diode plus zener for a faster release." in page
    assert "Handed in for review</strong> by dana" in page


def test_the_sign_off_note_is_on_the_revision_and_the_record(world, reviewer):
    rev_b = _k1(world)[1]
    for path in (f"/revisions/{rev_b}", f"/revisions/{rev_b}/review", f"/revisions/{rev_b}/record"):
        page = reviewer.get(path).text
        assert "Sign-off note:" in page and "Good for the first board run." in page, path


def test_the_record_carries_the_channels_review_history(world, reviewer):
    rev_b = _k1(world)[1]
    record = reviewer.get(f"/revisions/{rev_b}/record").text
    history = record.split("Review history", 1)[1]
    # rev A: handed in, commented on a finding, sent back with the reason; rev B: signed off
    order = [
        "First pass; the clamp is still open.",
        "Without a clamp the collector goes into avalanche",
        "Clamp the coil before this goes further.",
        "Rectifier added.",
        "Good for the first board run.",
    ]
    positions = [history.index(text) for text in order]
    assert positions == sorted(positions)
    assert "What must change:" in history and "lee (reviewer)" in history
    assert "Diode plus zener" not in history  # rev C came after: not on rev B's record


def test_a_note_typed_on_send_back_appears_for_the_author(world, reviewer):
    dana = sign_in(world, "dana")
    rev_c = _k1(world)[2]
    response = reviewer.post(f"/revisions/{rev_c}/send-back", data={"note": "Zener too close to V_CEO <b>"})
    assert response.status_code == 303
    page = dana.get(f"/revisions/{rev_c}").text
    assert "Zener too close to V_CEO &lt;b&gt;" in page
