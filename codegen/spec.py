"""TOML spec -> validated, frozen spec objects.

Every problem found becomes one `Problem` naming the file, the table and the key; all problems of a file
are collected before `SpecError` is raised, so a user fixes a spec in one pass.  This module checks
types, ranges and relations that need no code maths; a code model adds the problems only it can find
(a non-primitive field polynomial, a t too large for m) through `problem()`.
"""
from __future__ import annotations

import dataclasses
import hashlib
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any


NO_VALUE = object()          # a Problem without a "got" value


@dataclass(frozen=True)
class Problem:
    file: str
    table: str
    key: str
    message: str
    got: Any = NO_VALUE

    def __str__(self) -> str:
        where = f"[{self.table}] {self.key}" if self.key else f"[{self.table}]"
        text = f"{self.file}: {where}: {self.message}"
        if self.got is not NO_VALUE:
            text += f" (got {_show(self.got)})"
        return text


class SpecError(Exception):
    """One or more problems in user input; the CLI prints each on its own line and exits 2."""

    def __init__(self, problems: list[Problem]):
        self.problems = tuple(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


def _show(value: Any) -> str:
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "an array"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        text = value if len(value) <= 60 else value[:57] + "..."
        return repr(text)
    return repr(value)


def _rng(lo: int | None = None, hi: int | None = None) -> dict:
    return {"lo": lo, "hi": hi}


# ---------------------------------------------------------------------------------------------------------
# Family tables.  A field without a default is required; `lo`/`hi` bound integers (inclusive).
# ---------------------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class CrcTable:
    width: int = field(metadata=_rng(1, 64))
    poly: int = field(metadata=_rng(0))
    init: int = field(default=0, metadata=_rng(0))
    reflect_in: bool = False
    reflect_out: bool = False
    xor_out: int = field(default=0, metadata=_rng(0))


@dataclass(frozen=True)
class RepetitionTable:
    data_bytes: int = field(metadata=_rng(1, 65535))
    copies: int = field(default=1, metadata=_rng(1, 64))


@dataclass(frozen=True)
class HammingTable:
    data_bits: int = field(metadata=_rng(1, 1024))
    secded: bool = True


@dataclass(frozen=True)
class BchTable:
    m: int = field(metadata=_rng(3, 16))
    t: int = field(metadata=_rng(1))
    data_bits: int | None = field(default=None, metadata=_rng(1))
    field_poly: int | None = field(default=None, metadata=_rng(1))


@dataclass(frozen=True)
class ReedSolomonTable:
    n: int = field(metadata=_rng(2))
    k: int = field(metadata=_rng(1))
    symbol_bits: int = field(default=8, metadata=_rng(3, 16))
    field_poly: int = field(default=0x11D, metadata=_rng(1))
    first_root: int = field(default=0, metadata=_rng(0))
    root_step: int = field(default=1, metadata=_rng(1))


# family name -> {table name -> table class}
FAMILIES: dict[str, dict[str, type]] = {
    "crc-repetition": {"crc": CrcTable, "repetition": RepetitionTable},
    "hamming": {"hamming": HammingTable},
    "bch": {"bch": BchTable},
    "reed-solomon": {"reed-solomon": ReedSolomonTable},
}
PROFILES = ("fast", "small", "tiny")

C_KEYWORDS = frozenset("""
    auto break case char const continue default do double else enum extern float for goto if inline int long
    register restrict return short signed sizeof static struct switch typedef union unsigned void volatile while
    _Alignas _Alignof _Atomic _Bool _Complex _Generic _Imaginary _Noreturn _Static_assert _Thread_local
    asm bool true false main
""".split())
NAME_RE = re.compile(r"[a-z][a-z0-9_]{0,39}")
# Only a GCC/Clang attribute list of section / aligned / used, never arbitrary text (it is pasted into C).
_ATTR_ITEM = r'(?:section\("[.A-Za-z0-9_]{1,64}"\)|aligned\([0-9]{1,4}\)|used)'
TABLE_ATTR_RE = re.compile(rf"__attribute__\(\({_ATTR_ITEM}(?:, ?{_ATTR_ITEM})*\)\)")


@dataclass(frozen=True)
class Spec:
    """One validated spec file.  `params` maps each family table name to its frozen table object."""

    path: str
    sha256: str
    name: str
    family: str
    profile: str
    table_attr: str
    params: dict = field(hash=False, compare=False)

    @property
    def source_name(self) -> str:
        return Path(self.path).name

    def table(self, name: str):
        return self.params[name]

    def problem(self, table: str, key: str, message: str, got: Any = NO_VALUE) -> Problem:
        return Problem(self.source_name, table, key, message, got)

    def with_profile(self, profile: str) -> "Spec":
        return dataclasses.replace(self, profile=profile)


def load(path: str | Path) -> Spec:
    """Read and validate one spec file; raise SpecError listing every problem."""
    path = Path(path)
    label = path.name
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise SpecError([Problem(label, "file", "", f"cannot read: {exc.strerror or exc}")]) from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise SpecError([Problem(label, "file", "", "not UTF-8 text")]) from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SpecError([Problem(label, "file", "", f"TOML syntax error: {exc}")]) from None
    return parse(doc, str(path), hashlib.sha256(raw).hexdigest())


def parse(doc: dict, path: str, sha256: str = "") -> Spec:
    label = Path(path).name
    problems: list[Problem] = []

    def bad(table: str, key: str, message: str, got: Any = NO_VALUE) -> None:
        problems.append(Problem(label, table, key, message, got))

    code = _table(doc, "code", bad)
    c = _table(doc, "c", bad, required=False)
    _unknown(code, "code", {"name", "family"}, bad)
    _unknown(c, "c", {"profile", "table_attr"}, bad)

    name = _string(code, "code", "name", bad)
    if name is not None:
        if not NAME_RE.fullmatch(name):
            bad("code", "name", "must be a lower-case C identifier: a-z first, then a-z 0-9 _, "
                "at most 40 characters", name)
        elif name in C_KEYWORDS:
            bad("code", "name", "is a C keyword or reserved name", name)

    family = _string(code, "code", "family", bad)
    if family is not None and family not in FAMILIES:
        bad("code", "family", f"must be one of {', '.join(FAMILIES)}", family)
        family = None

    profile = "fast"
    if "profile" in c:
        profile = _string(c, "c", "profile", bad)
        if profile is not None and profile not in PROFILES:
            bad("c", "profile", f"must be one of {', '.join(PROFILES)}", profile)
    table_attr = ""
    if "table_attr" in c:
        table_attr = _string(c, "c", "table_attr", bad) or ""
        if table_attr and not TABLE_ATTR_RE.fullmatch(table_attr):
            bad("c", "table_attr", 'must be __attribute__((...)) listing only section("..."), aligned(N) '
                "or used", table_attr)

    if family:
        known = {"code", "c"} | set(FAMILIES[family])
        for key in doc:
            if key not in known:
                bad(key, "", f"unknown table for family {family!r} (known: {', '.join(sorted(known))})")

    params = {}
    if family:
        for tname, cls in FAMILIES[family].items():
            values = _table(doc, tname, bad)
            obj = _fill(cls, tname, values, bad)
            if obj is not None:
                params[tname] = obj
        if family == "crc-repetition" and "crc" in params:
            _check_crc(params["crc"], bad)

    if problems:
        raise SpecError(problems)
    return Spec(path=path, sha256=sha256, name=name, family=family, profile=profile,
                table_attr=table_attr, params=params)


def _table(doc: dict, name: str, bad, required: bool = True) -> dict:
    if name not in doc:
        if required:
            bad(name, "", "missing table")
        return {}
    value = doc[name]
    if not isinstance(value, dict):
        bad(name, "", "must be a table", value)
        return {}
    return value


def _unknown(values: dict, table: str, known: set, bad) -> None:
    for key in values:
        if key not in known:
            bad(table, key, f"unknown key (known: {', '.join(sorted(known))})")


def _string(values: dict, table: str, key: str, bad) -> str | None:
    if key not in values:
        bad(table, key, "missing")
        return None
    value = values[key]
    if not isinstance(value, str):
        bad(table, key, "must be a string", value)
        return None
    return value


def _fill(cls: type, table: str, values: dict, bad):
    fields = {f.name: f for f in dataclasses.fields(cls)}
    _unknown(values, table, set(fields), bad)
    kwargs = {}
    ok = True
    for name, f in fields.items():
        if name not in values:
            required = f.default is dataclasses.MISSING
            if required:
                bad(table, name, "missing")
                ok = False
            continue
        value = values[name]
        kind = bool if f.type in ("bool", bool) else int
        if kind is bool:
            if not isinstance(value, bool):
                bad(table, name, "must be true or false", value)
                ok = False
                continue
        else:
            if isinstance(value, bool) or not isinstance(value, int):
                bad(table, name, "must be an integer (decimal or 0x hex)", value)
                ok = False
                continue
            lo, hi = f.metadata.get("lo"), f.metadata.get("hi")
            if (lo is not None and value < lo) or (hi is not None and value > hi):
                span = f"{lo}..{hi}" if hi is not None else f">= {lo}"
                bad(table, name, f"must be {span}", value)
                ok = False
                continue
        kwargs[name] = value
    return cls(**kwargs) if ok else None


def _check_crc(crc: CrcTable, bad) -> None:
    limit = 1 << crc.width
    if crc.poly >= limit:
        bad("crc", "poly", f"must be below 2^width = {limit:#x} (normal form, without the x^width term)",
            hex(crc.poly))
    elif crc.poly & 1 == 0:
        bad("crc", "poly", "must have the x^0 term set (odd)", hex(crc.poly))
    for key in ("init", "xor_out"):
        value = getattr(crc, key)
        if value >= limit:
            bad("crc", key, f"must be below 2^width = {limit:#x}", hex(value))
