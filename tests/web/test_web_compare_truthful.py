"""The compare page tells the truth: notation-only edits are not changes, each finding shows
value and limit on both sides with the change and whether it got better or worse, findings a
revision does not report are labelled as appearing or disappearing, and the default is the
newest revision against the approved baseline."""

from .conftest import K1, channel_id, latest_document, revision_ids


def _new_k1(world, client, document) -> int:
    made = client.post(f"/api/v1/channels/{channel_id(world, K1)}/revisions", json={"document": document})
    assert made.status_code == 201, made.text
    return made.json()["id"]


def test_a_notation_only_edit_shows_no_input_change(world, designer):
    document = latest_document(world, K1)  # rev C: supply "24 V", tolerance "10%"
    assert document["supply"]["nominal"] == "24 V"
    document["supply"]["nominal"], document["supply"]["tolerance"] = 24, "10 %"
    new = _new_k1(world, designer, document)
    old = revision_ids(world, K1)[-2]
    page = designer.get(f"/channels/{channel_id(world, K1)}/compare", params={"old": old, "new": new}).text
    assert "The two revisions have the same inputs and the same findings." in page
    assert "supply.nominal" not in page


def test_each_changed_finding_shows_value_limit_margin_and_effect(world, designer):
    document = latest_document(world, K1)
    document["base"]["r_series"] = "330"  # less base current than rev C's 220 Ω
    new = _new_k1(world, designer, document)
    old = revision_ids(world, K1)[-2]
    page = designer.get(f"/channels/{channel_id(world, K1)}/compare", params={"old": old, "new": new}).text
    row = page.split("drive.saturation", 1)[1].split("</tr>", 1)[0]
    assert row.count("≥ 2×") == 2  # the limit on both sides, with its direction
    assert row.count(" %") >= 2  # the margin on both sides
    assert "▼ worse" in row
    assert "Past derating" in row  # 1.4× against ≥ 2×: past the derated limit now


def test_default_compare_is_against_the_approved_baseline_and_labels_unlike_findings(world, reviewer):
    page = reviewer.get(f"/channels/{channel_id(world, K1)}/compare").text
    # rev B (diode) is the baseline; rev C (diode + zener) reports the turn-off energy as a
    # rating check in another unit than rev B's note, so it disappears and appears.
    assert "rev B → rev C" in page and "Against the approved baseline, rev B" in page
    turn_off = [row for row in page.split("<tr") if "clamp.energy" in row]
    labels = sorted(row.split("<strong>", 1)[1].split("</strong>", 1)[0] for row in turn_off)
    assert labels == ["Appears", "Disappears"]
    assert "not reported" in "".join(turn_off)
