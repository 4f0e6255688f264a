"""Contact rules: the relay's contacts against the load they switch (design.load, coil.contacts)."""

from __future__ import annotations

from dataclasses import replace

from ..design import INRUSH_MULTIPLES
from .core import Context, Finding, _n, _si, judge, note, rule


def _parts(ctx: Context):
    return ctx.design.load, ctx.design.coil.contacts


def _unchecked(ctx: Context, rule_id: str, value: float, unit: str, what: str) -> Finding:
    return note(
        ctx, rule_id, value, unit, f"{what}; no contact rating entered (coil.contacts), so not checked"
    )


@rule("contacts.current", "Contact current")
def contact_current(ctx: Context) -> Finding | None:
    """The load's running current against the contacts' rated current, derated by the profile's
    current fraction. Needs design.load; without coil.contacts a note says it is not checked."""
    load, contacts = _parts(ctx)
    if load is None:
        return None
    if contacts is None:
        return _unchecked(ctx, "contacts.current", load.current, "A", f"load draws {_si(load.current, 'A')}")
    return judge(
        ctx,
        "contacts.current",
        load.current,
        contacts.current,
        ctx.profile.current * contacts.current,
        "A",
        keep_below=True,
        message=lambda i, s: (
            f"{load.kind} load {_si(load.current, 'A')} on contacts rated {_si(contacts.current, 'A')}"
        ),
        worked=lambda i: f"I = the load's running current = {_n(load.current, 'A')}",
    )


@rule("contacts.inrush", "Contact inrush (making) current")
def contact_inrush(ctx: Context) -> Finding | None:
    """Inrush = running current × inrush multiple (the load's inrush_multiple, else by kind, common
    practice: resistive 1×, inductive 5× (from memory), motor 8× (often 5–8×), lamp 15×
    (10–15×), capacitive 20× (from memory)) against the contacts' making-current rating, derated
    by the profile's current fraction; without a making rating, against the rated current (a
    contact is not known to make more than it is rated to carry)."""
    load, contacts = _parts(ctx)
    if load is None:
        return None
    multiple = load.inrush_multiple or INRUSH_MULTIPLES[load.kind]
    given = "given" if load.inrush_multiple else f"default for a {load.kind} load, common practice"
    inrush = load.inrush
    text = f"inrush {_si(inrush, 'A')} ({multiple:g}× {_si(load.current, 'A')}, {given})"
    if contacts is None:
        return _unchecked(ctx, "contacts.inrush", inrush, "A", text)
    rating = contacts.inrush if contacts.inrush is not None else contacts.current
    against = "making current" if contacts.inrush is not None else "rated current (no making rating entered)"
    return judge(
        ctx,
        "contacts.inrush",
        inrush,
        rating,
        ctx.profile.current * rating,
        "A",
        keep_below=True,
        message=lambda i, s: f"{text} against {_si(rating, 'A')} {against}",
        worked=lambda i: f"I_inrush = multiple·I = {multiple:g}·{_n(load.current, 'A')} = {_n(inrush, 'A')}",
    )


@rule("contacts.voltage", "Contact voltage")
def contact_voltage(ctx: Context) -> Finding | None:
    """The load voltage against the contacts' rated switching voltage for the load's kind of
    supply (AC or DC), derated by the profile's voltage fraction. A DC load on contacts with no
    DC rating is marginal, not ok: DC breaking ratings fall steeply above about 30 V (common
    practice) and the AC figure says nothing about them; likewise an AC load with no AC rating."""
    load, contacts = _parts(ctx)
    if load is None:
        return None
    kind = load.supply.upper()
    if contacts is None:
        return _unchecked(ctx, "contacts.voltage", load.voltage, "V", f"{_si(load.voltage, 'V')} {kind} load")
    rating = contacts.voltage_ac if load.supply == "ac" else contacts.voltage_dc
    if rating is None:
        finding = note(
            ctx,
            "contacts.voltage",
            load.voltage,
            "V",
            f"{_si(load.voltage, 'V')} {kind} load, but the contacts have no {kind} rating entered: "
            f"cannot tell (DC breaking ratings fall steeply above about 30 V); give coil.contacts.voltage_{load.supply}",
        )
        return replace(finding, status="marginal")
    return judge(
        ctx,
        "contacts.voltage",
        load.voltage,
        rating,
        ctx.profile.voltage * rating,
        "V",
        keep_below=True,
        message=lambda i, s: (
            f"{_si(load.voltage, 'V')} {kind} load on contacts rated {_si(rating, 'V')} {kind}"
        ),
        worked=lambda i: f"V = the load's {kind} voltage = {_n(load.voltage, 'V')}",
    )
