"""The web form and the parts library know every switch kind from the engine's switch registry:
a MOSFET and a Darlington array channel are library parts (form, CSV), the form shows the gate
or base resistors for the chosen kind, and a saved revision is judged by the kind's rules."""

from app.engine.switches import KINDS
from app.web.services.revision_form import FIELDS

from .conftest import K2, channel_id, form_values, latest_document, part_id, revision_ids

FET = {
    "vds_max": "30", "id_max": "1.5", "rds_on": "0.2", "rds_on_vgs": "2.5", "rds_on_hot": "1.6",
    "vgs_th_min": "0.7", "vgs_th_max": "1.4", "vgs_max": "12", "p_max": "350 mW", "rth_ja": "350",
    "tj_max": "150",
}  # fmt: skip
ARRAY = {
    "channels": "7", "channels_on": "2", "r_input": "2k7", "vce_sat": "1.1", "vbe_on": "2.4",
    "hfe_min": "1000", "vceo": "50", "ic_max": "500 mA", "p_max": "1 W", "rth_ja": "70", "tj_max": "150",
}  # fmt: skip


def test_the_switch_kinds_and_their_resistors_are_on_the_form():
    kind = FIELDS["switch.kind"]
    assert kind.options == tuple(KINDS)
    assert kind.labels == tuple(k.title for k in KINDS.values())
    assert FIELDS["gate.r_series"].when == "switch.kind=nmos"
    assert FIELDS["base.r_series"].when == "switch.kind=npn,darlington_array"


def test_library_holds_a_mosfet_and_a_darlington_array(designer):
    response = designer.post("/parts", data={"kind": "nmos", "name": "Web logic FET", **FET})
    assert response.status_code == 303, response.text[:1000]
    response = designer.post("/parts", data={"kind": "darlington_array", "name": "Web array", **ARRAY})
    assert response.status_code == 303, response.text[:1000]
    listed = designer.get("/api/v1/parts", params={"kind": "nmos"}).json()
    assert "Web logic FET" in [p["name"] for p in listed]
    assert {p["kind"] for p in listed} == {"nmos"}
    header = designer.get("/parts/export.csv?kind=nmos").text.splitlines()[0].split(",")
    assert {"rds_on", "rds_on_vgs", "rds_on_hot", "vgs_th_min", "e_as"} <= set(header)
    # A bad value is refused by field, nothing stored
    bad = designer.post("/parts", data={"kind": "nmos", "name": "Bad FET", **FET, "vgs_th_max": "0.5"})
    assert 400 <= bad.status_code < 500 and "vgs_th_min" in bad.text
    assert designer.get("/api/v1/parts", params={"q": "bad fet"}).json() == []


def test_form_saves_a_mosfet_revision_judged_by_the_gate_rules(designer, world):
    designer.post("/parts", data={"kind": "nmos", "name": "Web logic FET", **FET})
    before = revision_ids(world, K2)
    values = {
        **form_values(world, K2),
        "switch.kind": "nmos",
        "switch": str(part_id(world, "nmos", "Web logic FET")),
        "gate.r_series": "100",
        "gate.r_pulldown": "100k",
        "gate.tolerance": "5",
        "gate.power_rating": "63 mW",
        "change_note": "a logic-level FET instead of the NPN",
    }
    page = designer.get(f"/channels/{channel_id(world, K2)}/new").text
    assert 'name="gate.r_series"' in page and "N-channel MOSFET" in page
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert response.status_code == 303, response.text[:2000]
    assert len(revision_ids(world, K2)) == len(before) + 1
    document = latest_document(world, K2)
    assert document["switch"]["kind"] == "nmos" and "base" not in document and "gate" in document
    revision = designer.get(response.headers["location"]).text
    assert "Gate enhancement when on" in revision
    assert "gate resistor <b>" in revision  # the worst corner names the gate's resistor
    new_id = revision_ids(world, K2)[-1]
    record = designer.get(f"/revisions/{new_id}/record")
    assert record.status_code == 200
    assert "Gate enhancement when on" in record.text and "V_(BR)DSS" in record.text
    compare = designer.get(
        f"/channels/{channel_id(world, K2)}/compare", params={"old": before[-1], "new": new_id}
    )
    assert compare.status_code == 200 and "gate.enhancement" in compare.text
    # Pre-filled again from the stored revision: the kind and its part
    again = form_values(world, K2)
    assert again["switch.kind"] == "nmos" and again["switch"] == values["switch"]


def test_a_part_of_another_kind_is_refused_beside_the_switch(designer, world):
    designer.post("/parts", data={"kind": "darlington_array", "name": "Web array", **ARRAY})
    before = revision_ids(world, K2)
    values = {
        **form_values(world, K2),
        "switch.kind": "nmos",
        "switch": str(part_id(world, "darlington_array", "Web array")),
        "gate.r_series": "100",
        "gate.tolerance": "5",
        "gate.power_rating": "63 mW",
    }
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert 400 <= response.status_code < 500
    assert "is not of the chosen switch kind (N-channel MOSFET)" in response.text
    assert revision_ids(world, K2) == before
