"""A Darlington array's own clamp diodes: each output has a diode to the package's common pin.
Tied to the coil supply the diode is the diode clamp; through a zener to the supply it is the
diode + zener clamp; left unconnected it clamps nothing and the switch avalanches."""

from __future__ import annotations

from typing import Literal

from pydantic import Field, model_validator

from ..design import Diode, ForwardVolts, Model, PositiveAmps, PositiveVolts, Zener, _problem
from ..physics import BreakdownModel, DiodeModel
from .base import ClampKind, FormSlot
from .diode import DiodeAcrossCoil, DiodePath
from .diode_zener import DiodeZenerAcrossCoil, DiodeZenerPath
from .none import AvalanchePath


class ArrayDiodeClamp(Model):
    kind: Literal["array_diode"]
    common_to: Literal["supply", "zener", "unconnected"] = Field(
        description='where the array\'s common pin goes: "supply" (the coil supply: a diode clamp), '
        '"zener" (through a zener to the coil supply) or "unconnected" (no clamp at all)'
    )
    vf: ForwardVolts = Field(description="clamp diode forward voltage at vf_at (maximum)")
    vf_at: PositiveAmps = Field(description="current at which vf is specified")
    i_peak: PositiveAmps = Field(description="clamp diode forward current rating, taken as repetitive")
    vrrm: PositiveVolts = Field(description="clamp diode reverse voltage rating")
    if_avg: PositiveAmps = Field(description="clamp diode average forward current rating")
    zener: Zener | None = Field(
        None, description='the zener from the common pin to the supply (common_to "zener")'
    )

    @model_validator(mode="after")
    def _zener(self) -> ArrayDiodeClamp:
        if self.common_to == "zener" and self.zener is None:
            raise _problem('common_to "zener" needs the zener')
        if self.common_to != "zener" and self.zener is not None:
            raise _problem('a zener is given but common_to is not "zener"')
        return self

    @property
    def diode(self) -> Diode | None:
        """The array's clamp diode as a rectifier part (None when it clamps nothing)."""
        if self.common_to == "unconnected":
            return None
        return Diode(
            name="array clamp diode",
            vrrm=self.vrrm,
            if_avg=self.if_avg,
            i_peak=self.i_peak,
            vf=self.vf,
            vf_at=self.vf_at,
        )


_DIODE, _DIODE_ZENER = DiodeAcrossCoil(), DiodeZenerAcrossCoil()


class ArrayDiode(ClampKind):
    kind = "array_diode"
    title = "The array's own clamp diode"
    model = ArrayDiodeClamp
    fields = (FormSlot("zener", "Zener (common pin through a zener)", part="zener"),)

    def problems(self, design):
        if design.clamp.kind == self.kind and design.switch.kind != "darlington_array":
            return [
                'clamp.kind: "array_diode" is the clamp of a Darlington array channel (switch.kind "darlington_array")'
            ]
        return []

    def is_unclamped(self, clamp) -> bool:
        return clamp.common_to == "unconnected"

    def factors(self, clamp):
        return _DIODE_ZENER.factors(clamp) if clamp.common_to == "zener" else []

    def nominal(self, clamp):
        return _DIODE_ZENER.nominal(clamp) if clamp.common_to == "zener" else {}

    def path(self, clamp, design, vcc, values):
        if clamp.common_to == "unconnected":
            from ..switches import switch_kind

            return AvalanchePath(vcc, avalanche=switch_kind(design.switch).breakdown(design.switch))
        diode = DiodeModel.from_part(clamp.diode)
        if clamp.common_to == "supply":
            return DiodePath(vcc, diode=diode)
        return DiodeZenerPath(
            vcc,
            diode=diode,
            breakdown=BreakdownModel.from_zener(clamp.zener, clamp.zener.vz),
            v_br=values["vz"],
        )

    def netlist_lines(self, path, index):
        if isinstance(path, DiodeZenerPath):
            return _DIODE_ZENER.netlist_lines(path, index)
        if isinstance(path, DiodePath):
            return _DIODE.netlist_lines(path, index)
        return super().netlist_lines(path, index)

    def energy_stress(self, ctx, share_text):
        if ctx.design.clamp.common_to == "zener":
            return _DIODE_ZENER.energy_stress(ctx, share_text)
        return None

    def breakdown_note(self, clamp):
        if clamp.common_to == "unconnected":
            return "; the array's common pin is left unconnected, so its clamp diodes clamp nothing: tie it to the coil supply"
        if clamp.common_to == "zener":
            return "; the array's diodes clamp through the zener on the common pin"
        return "; the array's diodes clamp to the coil supply on the common pin"
