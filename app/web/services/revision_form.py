"""The new-revision form: its fields, form values -> design document, and back for pre-filling."""

from __future__ import annotations

from dataclasses import dataclass, field

from sqlmodel import Session, select

from app.engine.clamps import KINDS as CLAMP_REGISTRY
from app.engine.switches import KINDS as SWITCH_REGISTRY

from ..models import Part
from .documents import SLOT_KINDS, get_path, part_document, part_kind_in, set_path, typed_value
from .errors import InputProblems, split_problem
from .parts import kinds_for
from .revisions import validate_document


@dataclass(frozen=True)
class FormField:
    path: str
    label: str
    unit: str = ""
    widget: str = "text"  # text, textarea, select, part
    options: tuple[str, ...] = ()
    labels: tuple[str, ...] = ()  # what each option reads as (default: the option itself)
    when: str = ""  # "drive.kind=logic" or "clamp.kind=diode,diode_zener"
    hint: str = ""
    default: str = ""  # the value a blank field stands for (a switch without a kind is an NPN)


@dataclass(frozen=True)
class Section:
    title: str
    fields: tuple[FormField, ...] = field(default_factory=tuple)


F = FormField


def _clamp_fields() -> tuple[FormField, ...]:
    """The clamp kind selector and each kind's own fields, from the clamp registry: a field
    shared by several kinds (the diode) is shown once, for all of them."""
    slots: dict[str, tuple] = {}
    users: dict[str, list[str]] = {}
    for kind in CLAMP_REGISTRY.values():
        for slot in kind.fields:
            slots.setdefault(slot.name, slot)
            users.setdefault(slot.name, []).append(kind.kind)
    out = [
        F(
            "clamp.kind",
            "Clamp",
            widget="select",
            options=tuple(CLAMP_REGISTRY),
            labels=tuple(k.title for k in CLAMP_REGISTRY.values()),
        )
    ]
    for name, slot in slots.items():
        out.append(
            F(
                f"clamp.{name}",
                slot.label,
                slot.unit,
                widget="part" if slot.part else "text",
                when="clamp.kind=" + ",".join(users[name]),
                hint=slot.hint,
            )
        )
    return tuple(out)


def _resistor_fields() -> tuple[Section, ...]:
    """The base and the gate resistor blocks, each shown for the switch kinds driven through it
    (from the switch registry)."""
    words = {
        "base": ("Base", "Base resistor R_b", "Pull-down R_be", "R_b power rating"),
        "gate": ("Gate", "Gate resistor R_g", "Pull-down R_gs", "R_g power rating"),
    }
    out = []
    for block, (title, series, pulldown, power) in words.items():
        kinds = [k for k in SWITCH_REGISTRY.values() if k.resistors == block]
        if not kinds:
            continue
        when = "switch.kind=" + ",".join(k.kind for k in kinds)
        optional = [k.title for k in kinds if not k.resistors_required]
        hint = f"optional for a {', '.join(optional)}: blank for none" if optional else ""
        out.append(
            Section(
                title,
                (
                    F(f"{block}.r_series", series, "Ω", when=when, hint=hint),
                    F(f"{block}.r_pulldown", pulldown, "Ω", hint="blank: none", when=when),
                    F(f"{block}.tolerance", "Resistor tolerance", "%", when=when),
                    F(f"{block}.power_rating", power, "W", when=when),
                ),
            )
        )
    return tuple(out)


SECTIONS = (
    Section("Design", (F("name", "Design name"), F("notes", "Notes", widget="textarea"))),
    Section(
        "Supply and ambient",
        (
            F("supply.nominal", "Supply, nominal", "V"),
            F("supply.tolerance", "Supply tolerance", "%", hint="or give min and max"),
            F("supply.min", "Supply min", "V"),
            F("supply.max", "Supply max", "V"),
            F("ambient.min", "Ambient min", "°C"),
            F("ambient.max", "Ambient max", "°C"),
        ),
    ),
    Section(
        "Drive",
        (
            F("drive.kind", "Drive", widget="select", options=("logic", "divider")),
            F("drive.high", "High level", "V", when="drive.kind=logic"),
            F("drive.high_min", "High level, min", "V", when="drive.kind=logic"),
            F("drive.low", "Low level", "V", when="drive.kind=logic"),
            F("drive.low_max", "Low level, max", "V", when="drive.kind=logic"),
            F("drive.r_out", "Output resistance", "Ω", when="drive.kind=logic"),
            F("drive.i_max", "Max source current", "A", when="drive.kind=logic"),
            F("drive.v_source", "Divider source", "V", when="drive.kind=divider", hint="blank: the supply"),
            F("drive.r_fixed", "Fixed resistor", "Ω", when="drive.kind=divider"),
            F(
                "drive.sensor_position",
                "Sensor at",
                widget="select",
                options=("top", "bottom"),
                when="drive.kind=divider",
            ),
            F("drive.r_sensor_on", "Sensor, on state", "Ω", when="drive.kind=divider"),
            F("drive.r_sensor_off", "Sensor, off state", "Ω", when="drive.kind=divider"),
            F("drive.tolerance", "Divider tolerance", "%", when="drive.kind=divider"),
            F(
                "drive.v_source_tolerance",
                "Divider source tolerance",
                "%",
                when="drive.kind=divider",
                hint="only with a divider source",
            ),
            F(
                "drive.transition",
                "Sensor changes",
                widget="select",
                options=("slow", "snap"),
                when="drive.kind=divider",
                hint="slow: photoresistor, thermistor; snap: float switch, reed contact",
            ),
            F("drive.fixed_power_rating", "Fixed resistor power rating", "W", when="drive.kind=divider"),
            F("drive.sensor_power_rating", "Sensor power rating", "W", when="drive.kind=divider"),
        ),
    ),
    Section(
        "Switch and coil",
        (
            F(
                "switch.kind",
                "Switch kind",
                widget="select",
                options=tuple(SWITCH_REGISTRY),
                labels=tuple(k.title for k in SWITCH_REGISTRY.values()),
                default="npn",
            ),
            F("switch", "Switch", widget="part", hint="a part of the chosen kind"),
            F("coil", "Coil", widget="part"),
        ),
    ),
    *_resistor_fields(),
    Section("Clamp", _clamp_fields()),
    Section(
        "Load on the contacts (optional; the coil part carries the contact ratings)",
        (
            F(
                "load.kind",
                "Load",
                widget="select",
                options=("", "resistive", "inductive", "motor", "lamp", "capacitive"),
                hint="blank: no load given, contacts not checked",
            ),
            F(
                "load.voltage",
                "Load voltage",
                "V",
                when="load.kind=resistive,inductive,motor,lamp,capacitive",
            ),
            F(
                "load.supply",
                "AC or DC",
                widget="select",
                options=("ac", "dc"),
                when="load.kind=resistive,inductive,motor,lamp,capacitive",
            ),
            F(
                "load.current",
                "Running current",
                "A",
                when="load.kind=resistive,inductive,motor,lamp,capacitive",
            ),
            F(
                "load.inrush_multiple",
                "Inrush multiple",
                "×",
                when="load.kind=resistive,inductive,motor,lamp,capacitive",
                hint="blank: by kind (common practice)",
            ),
        ),
    ),
    Section(
        "Use and requirements",
        (
            F("switching.per_hour", "Operations per hour", "/h"),
            F("requirements.max_release_time", "Max release time", "s"),
        ),
    ),
    Section(
        "Derating overrides (blank: the default profile)",
        (
            F("limits.voltage", "Voltage fraction"),
            F("limits.current", "Current fraction"),
            F("limits.power", "Power fraction"),
            F("limits.tj", "Junction limit", "°C"),
            F("limits.overdrive", "Min overdrive", "×"),
            F("limits.pickup_margin", "Pick-up margin", "fraction"),
            F("limits.cutoff", "Cutoff fraction"),
        ),
    ),
)
FIELDS = {f.path: f for section in SECTIONS for f in section.fields}
PART_SLOTS = [f.path for f in FIELDS.values() if f.widget == "part"]


def applies(f: FormField, values: dict[str, str]) -> bool:
    if not f.when:
        return True
    path, _, allowed = f.when.partition("=")
    return values.get(path, "") in allowed.split(",")


def values_from_form(form) -> dict[str, str]:
    """The form's text values by field path (part slots hold a library part id)."""
    values = {path: str(form.get(path, "") or "").strip() for path in FIELDS}
    return {path: value or FIELDS[path].default for path, value in values.items()}


def build_document(db: Session, values: dict[str, str]) -> tuple[dict, dict[str, int]]:
    """Turn form values into a design document with frozen copies of the chosen parts.

    Raises InputProblems keyed by form field path (a problem inside a part goes beside it)."""
    document: dict = {"format": "clampdown-design/1"}
    links: dict[str, int] = {}
    problems: list[tuple[str, str]] = []
    for f in FIELDS.values():
        if not applies(f, values):
            continue
        text = values.get(f.path, "")
        if f.widget == "part":
            if not text:
                problems.append((f.path, "pick a part from the library"))
                continue
            part = db.get(Part, int(text)) if text.isdigit() and int(text) <= 2**31 - 1 else None
            if part is None or part.kind not in kinds_for(SLOT_KINDS[f.path]):
                problems.append((f.path, f"no {SLOT_KINDS[f.path]} with id {text!r} in the library"))
                continue
            chosen = part_document(part).get("kind") if f.path == "switch" else None
            if chosen is not None and values.get("switch.kind") and chosen != values["switch.kind"]:
                kind = SWITCH_REGISTRY[values["switch.kind"]]
                problems.append(
                    (
                        f.path,
                        f"{part.name!r} is not of the chosen switch kind ({kind.title}): pick one, or change the kind",
                    )
                )
                continue
            if part.archived:
                problems.append((f.path, f"{part.name!r} is archived; pick a current part"))
                continue
            set_path(document, f.path, part_document(part))
            links[f.path] = part.id
        elif text:
            set_path(
                document, f.path, text if f.widget in ("textarea",) or f.path == "name" else typed_value(text)
            )
    if values.get("clamp.kind") and "clamp" not in document:
        document["clamp"] = {"kind": values["clamp.kind"]}
    try:
        validate_document(document)
    except InputProblems as exc:
        # Report every field at once; a slot with no part already says so, once.
        flagged = {path for path, _ in problems}
        problems += [(path, message) for path, message in exc.problems if field_for(path) not in flagged]
    if problems:
        raise InputProblems(problems)
    return document, links


def field_for(path: str) -> str:
    """The form field a problem belongs beside: the longest field path that is a prefix."""
    best = ""
    for candidate in FIELDS:
        if (path == candidate or path.startswith(candidate + ".")) and len(candidate) > len(best):
            best = candidate
    return best or path


def problems_by_field(problems: list[tuple[str, str]]) -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    for path, message in problems:
        out.setdefault(field_for(path), []).append(
            message if field_for(path) == path else f"{path}: {message}"
        )
    return out


def values_from_document(db: Session, document: dict, links: dict[str, int]) -> dict[str, str]:
    """Pre-fill values from a stored revision; parts by the library part it copied, else by name."""
    values: dict[str, str] = {}
    for f in FIELDS.values():
        if f.widget == "part":
            part_id = links.get(f.path)
            if part_id is None:
                name = get_path(document, f.path + ".name")
                if isinstance(name, str):
                    kind = part_kind_in(f.path, SLOT_KINDS[f.path], get_path(document, f.path))
                    part_id = db.exec(select(Part.id).where(Part.kind == kind, Part.name == name)).first()
            values[f.path] = str(part_id) if part_id is not None else ""
        else:
            value = get_path(document, f.path)
            values[f.path] = "" if value is None or isinstance(value, dict) else str(value)
            values[f.path] = values[f.path] or f.default
    return values


__all__ = ["SECTIONS", "build_document", "split_problem", "values_from_document"]
