"""The parts library: validated like the design file, unique names per kind, archive not delete,
CSV out and in."""

import pytest

from .conftest import part_id

DIODE = {"vrrm": "200", "if_avg": "1 A", "i_peak": "30", "vf": "1.1 V", "vf_at": "1"}


def test_a_part_is_created_with_engineering_notation(designer):
    response = designer.post(
        "/parts", data={"kind": "diode", "name": "Bench rectifier", **DIODE, "if_avg": "500 mA"}
    )
    assert response.status_code == 303
    listed = designer.get("/api/v1/parts", params={"kind": "diode", "q": "bench"}).json()
    assert [p["params"]["if_avg"] for p in listed] == ["500 mA"]


def test_a_bad_parameter_is_named_beside_its_field(designer):
    response = designer.post("/parts", data={"kind": "diode", "name": "Bad", **DIODE, "vrrm": "-5"})
    assert response.status_code == 422
    assert "must be positive" in response.text and "has-error" in response.text


def test_names_are_unique_within_a_kind_only(designer):
    name = "Demo rectifier 1 A (illustrative)"
    again = designer.post("/api/v1/parts", json={"kind": "diode", "name": name, "params": DIODE})
    assert again.status_code == 409 and "already exists" in again.text
    coil_params = {
        "v_nominal": 12,
        "r_coil": 400,
        "tolerance": 10,
        "inductance": "0.4 H",
        "v_pickup": 9,
        "v_dropout": 1,
        "v_max": 15,
    }
    other_kind = designer.post("/api/v1/parts", json={"kind": "coil", "name": name, "params": coil_params})
    assert other_kind.status_code == 201


def test_a_used_part_is_archived_and_an_unused_one_deleted(designer, world):
    used = part_id(world, "diode", "Demo rectifier 1 A (illustrative)")
    unused = part_id(world, "transistor", "Demo NPN-45 half-amp (illustrative)")
    assert designer.delete(f"/api/v1/parts/{used}").json() == {"outcome": "archived"}
    assert designer.delete(f"/api/v1/parts/{unused}").json() == {"outcome": "deleted"}
    assert designer.get(f"/api/v1/parts/{used}").json()["archived"] is True
    assert designer.get(f"/api/v1/parts/{unused}").status_code == 404
    assert "Demo rectifier 1 A" not in designer.get("/parts?kind=diode").text


def test_csv_export_imports_back_unchanged(designer):
    exported = designer.get("/parts/export.csv?kind=coil").text
    assert exported.splitlines()[0].startswith(
        "name,notes,maker_part,package,datasheet,v_nominal,r_coil,tolerance"
    )
    before = designer.get("/api/v1/parts?kind=coil").json()
    response = designer.post("/parts/import", data={"kind": "coil"}, files={"file": ("c.csv", exported)})
    assert response.status_code == 200 and "0 new, 4 updated" in response.text
    after = designer.get("/api/v1/parts?kind=coil").json()
    assert [(p["name"], p["params"]) for p in after] == [(p["name"], p["params"]) for p in before]


def test_one_bad_csv_row_stores_nothing(designer):
    text = "name,vrrm,if_avg,i_peak,vf,vf_at\nGood one,100,1,30,1,1\nBad one,100,1,30,1,-1\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", text)})
    assert response.status_code == 422 and "row 3.vf_at" in response.text
    assert designer.get("/api/v1/parts", params={"q": "good one"}).json() == []


def test_unknown_csv_column_is_named(designer):
    response = designer.post(
        "/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", "name,colour\nx,red\n")}
    )
    assert response.status_code == 422 and "unknown columns colour" in response.text


def test_parts_search_swaps_only_the_table_for_htmx(designer):
    response = designer.get("/parts", params={"q": "zener"}, headers={"HX-Request": "true"})
    assert response.text.startswith('<table id="parts-table">') and "Demo zener 24 V" in response.text


def test_edit_form_keeps_values_as_entered(designer, world):
    pid = part_id(world, "transistor", "Demo NPN-40 small-signal (illustrative)")
    assert 'value="200 mA"' in designer.get(f"/parts/{pid}/edit").text


DIODE_HEADER = "name,vrrm,if_avg,i_peak,vf,vf_at\n"


def test_an_over_size_csv_is_refused_whole_with_the_limit_named(designer, world):
    world.state.settings = world.state.settings.model_copy(update={"csv_import_max_bytes": 300})
    rows = "".join(f"Demo import {n},100,1,30,1,1\n" for n in range(20))
    text = DIODE_HEADER + rows  # about 600 bytes: cut at 300 the last row would be partial
    assert len(text.encode()) > 300
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", text)})
    assert response.status_code == 413
    assert "larger than the limit of 300 bytes" in response.text and "nothing was imported" in response.text
    assert designer.get("/api/v1/parts", params={"q": "demo import"}).json() == []
    # At the limit it is read whole.
    small = DIODE_HEADER + rows.splitlines(keepends=True)[0]
    assert (
        designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", small)}).status_code
        == 200
    )


def test_a_short_or_long_row_is_refused_never_stored_cut(designer):
    text = DIODE_HEADER + "Whole one,100,1,30,1,1\nCut one,100,1\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", text)})
    assert (
        response.status_code == 422 and "row 3: has 3 fields; the first row names 6 columns" in response.text
    )
    text = DIODE_HEADER + "Long one,100,1,30,1,1,extra\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", text)})
    assert response.status_code == 422 and "row 2: has 7 fields" in response.text
    assert designer.get("/api/v1/parts", params={"q": " one"}).json() == []


def test_a_field_over_the_csv_readers_limit_is_refused_by_row(designer):
    import csv

    limit = csv.field_size_limit()
    text = DIODE_HEADER + "Fine,100,1,30,1,1\n" + "Huge," + "9" * (limit + 10) + ",1,30,1,1\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", text)})
    assert response.status_code == 422
    assert f"row 3: cannot be read as CSV: a field is longer than {limit:,} characters" in response.text
    assert designer.get("/api/v1/parts", params={"q": "fine"}).json() == []


FORMULAS = ['=HYPERLINK("http://example.invalid","open")', "+1+2", "-2+3+cmd", "@SUM(A1)", "'quoted already"]


def test_csv_export_neutralises_formulas_and_imports_them_back(designer):
    """OWASP, "CSV Injection": a cell starting with = + - @ (or tab, CR) is prefixed with an
    apostrophe so spreadsheets show it as text; import strips exactly that apostrophe."""
    made = []
    for text in FORMULAS:
        response = designer.post(
            "/api/v1/parts",
            json={
                "kind": "diode",
                "name": text,
                "notes": text,
                "params": {"vrrm": 100, "if_avg": 1, "i_peak": 30, "vf": 1, "vf_at": 1},
            },
        )
        assert response.status_code == 201, response.text
        made.append(response.json())
    exported = designer.get("/parts/export.csv?kind=diode").text
    import csv
    import io

    cells = [cell for row in csv.reader(io.StringIO(exported)) for cell in row]
    for text in FORMULAS:
        assert "'" + text in cells and text not in cells
    assert not [
        c for c in cells if c[:1] in ("=", "+", "-", "@") and not c.lstrip("+-").replace(".", "").isdigit()
    ]
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("d.csv", exported)})
    assert response.status_code == 200, response.text
    after = {p["name"]: p for p in designer.get("/api/v1/parts?kind=diode").json()}
    for part in made:
        assert (
            after[part["name"]]["notes"] == part["notes"] and after[part["name"]]["params"] == part["params"]
        )


def test_new_optional_fields_go_through_the_form_and_the_csv(designer):
    # A transistor with the worst-case extras, and a coil with contact ratings (a nested block, one
    # dotted column per rating in the CSV and one field per rating in the form).
    transistor = {
        "hfe_min": "100",
        "hfe_max": "400",
        "vbe_sat": "0.9",
        "vbe_sat_min": "0.7",
        "vce_sat": "0.3",
        "vce_sat_min": "0.05",
        "vbe_on": "0.65",
        "vceo": "40",
        "vebo": "6",
        "ic_max": "200 mA",
        "p_max": "625 mW",
        "rth_ja": "200",
        "tj_max": "150",
    }
    response = designer.post("/parts", data={"kind": "transistor", "name": "Bench NPN", **transistor})
    assert response.status_code == 303
    coil = {
        "v_nominal": "12",
        "r_coil": "400",
        "tolerance": "10",
        "inductance": "0.4 H",
        "v_pickup": "9",
        "v_dropout": "1",
        "v_max": "15",
        "temp_rise": "35",
        "contacts.current": "10 A",
        "contacts.voltage_ac": "250 V",
    }
    response = designer.post("/parts", data={"kind": "coil", "name": "Bench relay", **coil})
    assert response.status_code == 303
    stored = designer.get("/api/v1/parts", params={"kind": "coil", "q": "bench relay"}).json()[0]
    assert stored["params"]["contacts"] == {"current": "10 A", "voltage_ac": "250 V"}
    assert stored["params"]["temp_rise"] == 35
    edit = designer.get(f"/parts/{stored['id']}/edit").text
    assert 'name="contacts.current" value="10 A"' in edit
    exported = designer.get("/parts/export.csv?kind=coil").text
    header = exported.splitlines()[0].split(",")
    assert {
        "temp_rise",
        "contacts.current",
        "contacts.voltage_ac",
        "contacts.voltage_dc",
        "contacts.inrush",
    } <= set(header)
    before = designer.get("/api/v1/parts?kind=coil").json()
    response = designer.post("/parts/import", data={"kind": "coil"}, files={"file": ("c.csv", exported)})
    assert response.status_code == 200
    after = designer.get("/api/v1/parts?kind=coil").json()
    assert [(p["name"], p["params"]) for p in after] == [(p["name"], p["params"]) for p in before]
    exported = designer.get("/parts/export.csv?kind=transistor").text
    assert {"hfe_max", "vbe_sat_min", "vce_sat_min"} <= set(exported.splitlines()[0].split(","))
    # A bad contact rating is named beside its own field
    response = designer.post(
        "/parts", data={"kind": "coil", "name": "Bad relay", **coil, "contacts.current": "-1"}
    )
    assert response.status_code == 422 and "must be positive" in response.text


@pytest.mark.parametrize("kind,count", [("nmos", 2), ("darlington_array", 1)])
def test_csv_of_the_new_switch_kinds_imports_back_unchanged(designer, kind, count):
    """The demo library's MOSFETs and Darlington array channel (seed_data/demo/parts.json) go
    out as CSV and come back unchanged, as every other part kind does."""
    exported = designer.get(f"/parts/export.csv?kind={kind}").text
    before = designer.get(f"/api/v1/parts?kind={kind}").json()
    assert len(before) == count
    response = designer.post("/parts/import", data={"kind": kind}, files={"file": ("s.csv", exported)})
    assert response.status_code == 200 and f"0 new, {count} updated" in response.text
    after = designer.get(f"/api/v1/parts?kind={kind}").json()
    assert [(p["name"], p["params"]) for p in after] == [(p["name"], p["params"]) for p in before]
