"""The clamp fields of the web form and the parts library come from the clamp registry: a new
clamp kind (the RC snubber) or a new part field (the TVS's V_BR(max)) needs no form edit."""

from app.engine.clamps import KINDS
from app.web.services.revision_form import FIELDS

from .conftest import K2, channel_id, form_values, revision_ids


def test_every_clamp_kind_and_its_fields_are_on_the_form():
    kind_field = FIELDS["clamp.kind"]
    assert kind_field.options == tuple(KINDS)
    assert kind_field.labels == tuple(k.title for k in KINDS.values())
    for kind in KINDS.values():
        for slot in kind.fields:
            field = FIELDS[f"clamp.{slot.name}"]
            assert kind.kind in field.when.split("=")[1].split(",")


def test_form_saves_an_rc_snubbed_revision(designer, world):
    before = revision_ids(world, K2)
    values = {
        **form_values(world, K2),
        "clamp.kind": "rc",
        "clamp.r": "680",
        "clamp.c": "1 uF",
        "clamp.tolerance": "10",
        "clamp.c_voltage_rating": "63",
        "clamp.power_rating": "250 mW",
        "change_note": "RC snubber for a faster release",
    }
    page = designer.get(f"/channels/{channel_id(world, K2)}/new").text
    assert "RC snubber across the coil" in page and 'name="clamp.c_voltage_rating"' in page
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert response.status_code == 303, response.text[:2000]
    assert len(revision_ids(world, K2)) == len(before) + 1
    revision = designer.get(response.headers["location"]).text
    assert "clamp.capacitor_voltage" in revision or "Snubber capacitor voltage" in revision


def test_rc_form_without_capacitor_is_refused_by_field(designer, world):
    before = revision_ids(world, K2)
    values = {**form_values(world, K2), "clamp.kind": "rc", "clamp.r": "680", "clamp.c": ""}
    response = designer.post(f"/channels/{channel_id(world, K2)}/revisions", data=values)
    assert 400 <= response.status_code < 500
    assert "clamp.c" in response.text
    assert revision_ids(world, K2) == before


def test_parts_csv_carries_the_new_clamp_part_fields(designer):
    diode = designer.get("/parts/export.csv?kind=diode").text.splitlines()[0].split(",")
    assert {"i_frm", "i_fsm"} <= set(diode)
    tvs = designer.get("/parts/export.csv?kind=tvs").text.splitlines()[0].split(",")
    assert {"v_breakdown_max", "v_standoff"} <= set(tvs)
    text = "name,v_breakdown,v_breakdown_max,v_standoff,v_clamp,i_clamp,p_max\nTest TVS,33,35,28,53,1,400\n"
    response = designer.post("/parts/import", data={"kind": "tvs"}, files={"file": ("t.csv", text)})
    assert response.status_code in (200, 303)
    exported = designer.get("/parts/export.csv?kind=tvs").text
    assert "Test TVS" in exported and ",35," in exported
    bad = "name,v_breakdown,v_breakdown_max,v_clamp,i_clamp,p_max\nBad TVS,33,60,53,1,400\n"
    response = designer.post("/parts/import", data={"kind": "tvs"}, files={"file": ("b.csv", bad)})
    assert 400 <= response.status_code < 500
    assert "v_breakdown_max" in response.text


def test_printed_record_shows_the_new_clamp_findings(reviewer, world):
    """The demo's TVS-clamped damper (K4): the record lists the stand-off finding and says the
    TVS's maximum breakdown was assumed."""
    rev = revision_ids(world, "K4 exhaust damper solenoid")[-1]
    record = reviewer.get(f"/revisions/{rev}/record")
    assert record.status_code == 200
    assert "clamp.standoff" in record.text or "Clamp stand-off" in record.text
    assert "assumed" in record.text and "V_BR(max)" in record.text


def test_revision_page_shows_alternatives_at_the_slowest_corner(reviewer, world):
    rev = revision_ids(world, K2)[-1]
    report = reviewer.get(f"/api/v1/revisions/{rev}/report").json()
    alternatives = report["transient"]["alternatives"]
    assert alternatives and all(a["time_to_dropout_worst"] >= a["time_to_dropout"] for a in alternatives)
    page = reviewer.get(f"/revisions/{rev}").text
    assert "Slowest release" in page


def test_parts_csv_carries_the_coils_inductance_tolerance_and_lowest_pick_up(designer):
    """coil.inductance_tolerance and coil.v_pickup_min (app/engine/design.py) reach the library
    from the model alone; a pick-up minimum below the drop-out voltage is refused by name."""
    header = designer.get("/parts/export.csv?kind=coil").text.splitlines()[0].split(",")
    assert {"inductance_tolerance", "v_pickup_min"} <= set(header)
    columns = "name,v_nominal,r_coil,tolerance,inductance,inductance_tolerance,v_pickup,v_pickup_min,v_dropout,v_max"
    text = f"{columns}\nTest coil,12,160,10,0.12,20,8.4,6,1.2,15.6\n"
    response = designer.post("/parts/import", data={"kind": "coil"}, files={"file": ("c.csv", text)})
    assert response.status_code in (200, 303)
    exported = designer.get("/parts/export.csv?kind=coil").text
    row = next(line for line in exported.splitlines() if line.startswith("Test coil"))
    values = dict(zip(exported.splitlines()[0].split(","), row.split(","), strict=False))
    assert float(values["v_pickup_min"]) == 6
    assert float(values["inductance_tolerance"].rstrip("%")) == 20
    bad = f"{columns}\nBad coil,12,160,10,0.12,20,8.4,1.0,1.2,15.6\n"
    response = designer.post("/parts/import", data={"kind": "coil"}, files={"file": ("b.csv", bad)})
    assert 400 <= response.status_code < 500
    assert "v_pickup_min" in response.text
    assert "Bad coil" not in designer.get("/parts/export.csv?kind=coil").text


def test_parts_csv_carries_the_diodes_lowest_forward_voltage(designer):
    """clamp.diode.vf_min (app/engine/design.py) reaches the library from the model alone; one
    above vf is refused by name and nothing of that file is stored."""
    header = designer.get("/parts/export.csv?kind=diode").text.splitlines()[0].split(",")
    assert "vf_min" in header
    columns = "name,vrrm,if_avg,i_peak,vf,vf_at,vf_min"
    text = f"{columns}\nTest rectifier,100,1,30,1.0,1,0.7\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", text)})
    assert response.status_code in (200, 303)
    exported = designer.get("/parts/export.csv?kind=diode").text
    row = next(line for line in exported.splitlines() if line.startswith("Test rectifier"))
    values = dict(zip(exported.splitlines()[0].split(","), row.split(","), strict=False))
    assert float(values["vf_min"].rstrip("V ")) == 0.7
    bad = f"{columns}\nBad rectifier,100,1,30,1.0,1,1.2\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("b.csv", bad)})
    assert 400 <= response.status_code < 500
    assert "vf_min" in response.text
    assert "Bad rectifier" not in designer.get("/parts/export.csv?kind=diode").text
