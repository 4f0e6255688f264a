"""The report as a table for a terminal (``clampdown check``)."""

from __future__ import annotations

from .units import format_si

_LABEL = {"violation": "VIOLATION", "marginal": "marginal", "ok": "ok", "note": "note"}


def render_table(report: dict) -> str:
    rows = [("rule", "status", "value", "limit", "rating")]
    for f in report["findings"]:
        rows.append(
            (
                f["rule"],
                _LABEL[f["status"]],
                format_si(f["value"], f["unit"]) if f["value"] is not None else "unbounded",
                format_si(f["limit"], f["unit"]) if f["limit"] is not None else "",
                format_si(f["rating"], f["unit"]) if f["rating"] is not None else "",
            )
        )
    widths = [max(len(r[i]) for r in rows) for i in range(5)]
    out = [
        f"{report['design']}",
        f"verdict: {report['verdict']}   profile: {report['profile']['name']}   corners: {report['corners']}",
        "",
    ]
    if report.get("mains_caution"):
        out[3:3] = [f"CAUTION  {report['mains_caution']}", ""]
    for n, row in enumerate(rows):
        out.append("  ".join(cell.ljust(widths[i]) for i, cell in enumerate(row)).rstrip())
        if n == 0:
            out.append("  ".join("-" * w for w in widths))
    out.append("")
    for f in report["findings"]:
        if f["status"] in ("violation", "marginal"):
            out.append(f"{_LABEL[f['status']]:>9}  {f['rule']}: {f['message']}")
            if f.get("worked"):
                out.append(f"{'':>9}  worked: {f['worked']}")
    nom, tr = report["nominal"], report["transient"]
    out.append("")
    if any(f["rule"].startswith("gate.") for f in report["findings"]):  # a MOSFET
        out.append(
            "nominal: I_D {}, gate current {}, coil {}, T_J {}".format(
                format_si(nom["collector_current"], "A"),
                format_si(nom["base_current"], "A"),
                format_si(nom["coil_voltage"], "V"),
                format_si(nom["junction_temp"], "°C"),
            )
        )
    else:
        out.append(
            "nominal: I_C {} , I_B {}, overdrive {}, coil {}, T_J {}".format(
                format_si(nom["collector_current"], "A"),
                format_si(nom["base_current"], "A"),
                format_si(nom["overdrive"], "×"),
                format_si(nom["coil_voltage"], "V"),
                format_si(nom["junction_temp"], "°C"),
            )
        )
    out.append(
        "turn-off ({}): I_0 {}, peak {}, drop-out after {}, energy {}".format(
            tr["clamp"],
            format_si(tr["initial_current"], "A"),
            format_si(tr["peak_switch_voltage"], "V")
            if tr["peak_switch_voltage"] is not None
            else "unbounded",
            format_si(tr["time_to_dropout"], "s"),
            format_si(tr["energy"], "J"),
        )
    )
    if report.get("windows") is not None:
        from .window import describe

        out += ["", "design window (every other value as designed; every rule within its derated limit):"]
        out += [f"  {describe(w)}" for w in report["windows"]] or ["  no value to vary"]
    if report.get("tighten") is not None:
        from .tighten import tighten_lines

        out += ["", "what to tighten (each tolerance halved in turn, the margin it moves):"]
        out += [f"  {line}" for line in tighten_lines(report["tighten"])] or ["  no tolerance moves a margin"]
    if report.get("yield") is not None:
        from .montecarlo import yield_lines

        out += ["", *yield_lines(report["yield"])]
    return "\n".join(out) + "\n"
