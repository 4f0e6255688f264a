"""Part details: maker part number, package and datasheet link (http or https only) — kept as
typed, in the CSV, on the part page every signed-in person can open, frozen into a revision and
shown on its printed record."""

from sqlmodel import Session, select

from app.web.models import Part

from .conftest import K2, channel_id, form_values, part_id, revision_ids

DIODE = {"vrrm": "200", "if_avg": "1 A", "i_peak": "30", "vf": "1.1 V", "vf_at": "1"}
DETAILS = {"maker_part": "0805", "package": "SOD-123", "datasheet": "https://example.com/d1.pdf"}


def _stored(world, name: str) -> Part:
    with Session(world.state.engine) as db:
        return db.exec(select(Part).where(Part.name == name)).one()


def test_details_are_stored_as_typed_text(designer, world):
    response = designer.post("/parts", data={"kind": "diode", "name": "Bench diode", **DIODE, **DETAILS})
    assert response.status_code == 303
    part = _stored(world, "Bench diode")
    # "0805" stays text: a part number is not a number.
    assert (part.maker_part, part.package, part.datasheet) == (
        "0805",
        "SOD-123",
        "https://example.com/d1.pdf",
    )
    assert response.headers["location"].startswith(f"/parts/{part.id}?done=")  # says what happened


def test_a_datasheet_link_must_be_http_or_https(designer, world):
    for bad in (
        "javascript:alert(1)",
        "ftp://example.com/x.pdf",
        "example.com/x.pdf",
        "https://exa mple.com",
    ):
        response = designer.post(
            "/parts", data={"kind": "diode", "name": "Bad link", **DIODE, "datasheet": bad}
        )
        assert response.status_code == 422, bad
        assert "allowed: an http:// or https:// URL" in response.text, bad
    with Session(world.state.engine) as db:
        assert db.exec(select(Part).where(Part.name == "Bad link")).first() is None
    api = designer.post(
        "/api/v1/parts",
        json={"kind": "diode", "name": "Bad link", "params": DIODE, "datasheet": "file:///etc/passwd"},
    )
    assert api.status_code == 422 and api.json()["detail"][0]["loc"] == ["datasheet"]


def test_everyone_signed_in_has_the_part_page_and_names_link_to_it(reviewer, world):
    pid = part_id(world, "transistor", "Demo NPN-40 small-signal (illustrative)")
    listing = reviewer.get("/parts?kind=transistor").text
    assert f'<a href="/parts/{pid}">Demo NPN-40 small-signal (illustrative)</a>' in listing
    page = reviewer.get(f"/parts/{pid}")
    assert page.status_code == 200
    assert "Demo NPN-40 small-signal (illustrative)" in page.text and "hfe_min" in page.text
    assert "Used by" in page.text and "K2 vent fan relay, revision A" in page.text  # the demo K2 froze it
    assert f'href="/parts/{pid}/edit"' not in page.text  # a reviewer does not edit the library
    assert reviewer.get("/parts/999999").status_code == 404


def test_details_travel_through_the_csv(designer, world):
    designer.post("/parts", data={"kind": "diode", "name": "CSV diode", **DIODE, **DETAILS})
    exported = designer.get("/parts/export.csv?kind=diode").text
    assert "CSV diode,,0805,SOD-123,https://example.com/d1.pdf," in exported
    csv = "name,maker_part,package,datasheet,vrrm,if_avg,i_peak,vf,vf_at\nCSV diode,X-1,SMA,http://example.org/x,200,1,30,1.1,1\n"
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("p.csv", csv)})
    assert response.status_code == 200, response.text
    part = _stored(world, "CSV diode")
    assert (part.maker_part, part.package, part.datasheet) == ("X-1", "SMA", "http://example.org/x")
    bad = csv.replace("http://example.org/x", "mailto:x@example.org")
    response = designer.post("/parts/import", data={"kind": "diode"}, files={"file": ("p.csv", bad)})
    assert response.status_code == 422 and "row 2.datasheet" in response.text
    assert _stored(world, "CSV diode").datasheet == "http://example.org/x"  # nothing changed


def test_details_are_frozen_into_a_revision_and_shown_on_its_record(designer, reviewer, world):
    pid = part_id(world, "transistor", "Demo NPN-40 small-signal (illustrative)")
    values = {"name": "Demo NPN-40 small-signal (illustrative)", "notes": "", **DETAILS}
    with Session(world.state.engine) as db:
        values.update({k: str(v) for k, v in db.get(Part, pid).params.items()})
    assert designer.post(f"/parts/{pid}", data=values).status_code == 303
    form = form_values(world, K2)
    assert (
        designer.post(
            f"/channels/{channel_id(world, K2)}/revisions", data={**form, "change_note": "details"}
        ).status_code
        == 303
    )
    rev = revision_ids(world, K2)[-1]
    document = designer.get(f"/revisions/{rev}/design.json").json()
    assert document["switch"]["package"] == "SOD-123" and document["switch"]["maker_part"] == "0805"
    record = reviewer.get(f"/revisions/{rev}/record").text
    assert "maker part 0805 · package SOD-123 · datasheet https://example.com/d1.pdf" in record
    # The library changes later; the frozen copy on the record does not.
    values["package"] = "TO-92"
    designer.post(f"/parts/{pid}", data=values)
    assert "maker part 0805 · package SOD-123" in reviewer.get(f"/revisions/{rev}/record").text
