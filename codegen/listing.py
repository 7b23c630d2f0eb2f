"""What bitmend supports, as tables: the families with their keys and ranges, the profiles, the CRC presets."""
from __future__ import annotations

import dataclasses

from rich.console import RenderableType

from . import crc_catalogue, spec as specmod
from .terminal import table

PROFILE_NOTES = {
    "fast": "byte-wide tables (the default)",
    "small": "nibble-wide or reduced tables",
    "tiny": "no tables, bit-serial",
}


def _range(f: dataclasses.Field) -> str:
    lo, hi = f.metadata.get("lo"), f.metadata.get("hi")
    if lo is None and hi is None:
        return ""
    return f"{lo}..{hi}" if hi is not None else f">= {lo}"


def _default(f: dataclasses.Field) -> str:
    if f.default is dataclasses.MISSING:
        return "required"
    if f.default is None or f.default == "":
        return "optional"
    if isinstance(f.default, bool):
        return str(f.default).lower()
    return f"{f.default:#x}" if "poly" in f.name else str(f.default)


def families() -> RenderableType:
    rows = []
    for family, tables in specmod.FAMILIES.items():
        for tname, cls in tables.items():
            shown = f"[{tname}]"
            for f in dataclasses.fields(cls):
                kind = {"bool": "true/false", "str": "string"}.get(f.type, "integer")
                default = _default(f)
                if cls is specmod.CrcTable and f.name in crc_catalogue.PARAMETERS:
                    default += " (or from preset)"
                rows.append([family, shown, f.name, kind, _range(f), default])
                family = shown = ""
    return table(["family", "table", "key", "type", "range", "default"], rows, title="Families")


def profiles() -> RenderableType:
    rows = [[p, PROFILE_NOTES[p]] for p in specmod.PROFILES]
    return table(["[c] profile", "C it produces (all give identical results)"], rows, title="Profiles")


def presets() -> RenderableType:
    def hx(value: int, width: int) -> str:
        return f"0x{value:0{(width + 3) // 4}X}"

    rows = [[p.name, p.width, hx(p.poly, p.width), hx(p.init, p.width), str(p.reflect_in).lower(),
             str(p.reflect_out).lower(), hx(p.xor_out, p.width), hx(p.check, p.width), ", ".join(p.aliases)]
            for p in crc_catalogue.PRESETS]
    title = (f'CRC presets ([crc] preset = "NAME" or an alias; {len(rows)} entries of the published catalogue; '
             'check = CRC of "123456789")')
    return table(["preset", "width", "poly", "init", "reflect_in", "reflect_out", "xor_out", "check",
                  "aliases"], rows, title=title, right=("width",))


def all_tables() -> list[RenderableType]:
    return [families(), profiles(), presets()]
