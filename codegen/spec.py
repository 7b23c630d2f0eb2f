"""TOML spec -> validated, frozen spec objects.

Every problem found becomes one `Problem` naming the file, the table and the key; all problems of a file
are collected before `SpecError` is raised, so a user fixes a spec in one pass.  This module checks
types, ranges and relations that need no code maths; a code model adds the problems only it can find
(a non-primitive field polynomial, a t too large for m) through `problem()`.
"""
from __future__ import annotations

import dataclasses
import hashlib
import os
import re
import stat
import tomllib
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from . import crc_catalogue


NO_VALUE = object()          # a Problem without a "got" value
MAX_SPEC_BYTES = 1 << 20     # a spec file is a few hundred bytes; anything above 1 MiB is not one
SHOWN_CHARS = 60             # user text in a message is cut to this many characters

_ESCAPES = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def escape(text: str, limit: int | None = SHOWN_CHARS) -> str:
    """User text made safe for one terminal line: control, format and unassigned characters (and the
    undecodable bytes of a file name) shown as escapes (\\n, \\x1b, \\u202e), cut to `limit` characters
    with "..." at the end."""
    out = []
    for ch in str(text):
        code = ord(ch)
        if ch in _ESCAPES:
            out.append(_ESCAPES[ch])
        elif 0xDC80 <= code <= 0xDCFF:                    # a byte os.fsdecode could not decode
            out.append(f"\\x{code - 0xDC00:02x}")
        elif unicodedata.category(ch)[0] in "CZ" and ch != " ":
            out.append(f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}" if code < 0x10000
                       else f"\\U{code:08x}")
        else:
            out.append(ch)
    shown = "".join(out)
    if limit is not None and len(shown) > limit:
        shown = shown[:limit - 3] + "..."
    return shown


def show_path(path) -> str:
    """A file name as it appears in a message: escaped, shortened from the left (the end says most)."""
    text = escape(os.fspath(path), None)
    return text if len(text) <= 2 * SHOWN_CHARS else "..." + text[-(2 * SHOWN_CHARS - 3):]


@dataclass(frozen=True)
class Problem:
    file: str
    table: str
    key: str
    message: str
    got: Any = NO_VALUE

    def __str__(self) -> str:
        where = f"[{escape(self.table)}] {escape(self.key)}" if self.key else f"[{escape(self.table)}]"
        text = f"{show_path(self.file)}: {where}: {escape(self.message, None)}"
        if self.got is not NO_VALUE:
            text += f" (got {_show(self.got)})"
        return text


class SpecError(Exception):
    """One or more problems in user input; the CLI prints each on its own line and exits 2.

    `partial` is the spec as far as it could be read, when its family tables were complete: a code model
    can still add its own problems to the same report (see `codes.check`).
    """

    def __init__(self, problems: list[Problem], partial: "Spec | None" = None):
        self.problems = tuple(problems)
        self.partial = partial
        super().__init__("\n".join(str(p) for p in self.problems))


def _show(value: Any) -> str:
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "an array"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return '"' + escape(value).replace('"', '\\"') + '"'
    if isinstance(value, int) and value.bit_length() > 64:    # str() of a huge int may refuse to work
        return f"an integer of {value.bit_length()} bits"
    return escape(str(value))


def sort_problems(problems) -> list[Problem]:
    """File by file (in the order given), table by table as a spec lists them, then key."""
    order = ["file", "code", "c"] + [t for tables in FAMILIES.values() for t in tables]
    files = list(dict.fromkeys(p.file for p in problems))

    def rank(p: Problem):
        table = order.index(p.table) if p.table in order else len(order)
        return files.index(p.file), table, p.table, p.key

    return sorted(problems, key=rank)


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
    preset: str = ""          # a catalogue name; crc_catalogue.expand filled the keys above from it


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


@dataclass(frozen=True)
class InterleaveTable:
    depth: int = field(default=1, metadata=_rng(1, 64))


INTERLEAVED_FAMILIES = ("bch", "reed-solomon")     # may add an optional [interleave] table

# family name -> {table name -> table class}
FAMILIES: dict[str, dict[str, type]] = {
    "crc-repetition": {"crc": CrcTable, "repetition": RepetitionTable},
    "hamming": {"hamming": HammingTable},
    "bch": {"bch": BchTable},
    "reed-solomon": {"reed-solomon": ReedSolomonTable},
}
PROFILES = ("fast", "small", "tiny")
TABLE_SPACES = ("const", "avr-progmem")

C_KEYWORDS = frozenset("""
    auto break case char const continue default do double else enum extern float for goto if inline int long
    register restrict return short signed sizeof static struct switch typedef union unsigned void volatile while
    _Alignas _Alignof _Atomic _Bool _Complex _Generic _Imaginary _Noreturn _Static_assert _Thread_local
    asm bool true false main
""".split())
NAME_RE = re.compile(r"[a-z][a-z0-9_]{0,39}")
# `<name>.h` must not shadow a header a firmware build includes: C99 to C17 (and C23's two new ones),
# POSIX.1-2017's top-level headers, and the libc extras newlib and glibc put beside them.
STANDARD_HEADERS = frozenset("""
    assert complex ctype errno fenv float inttypes iso646 limits locale math setjmp signal stdalign stdarg
    stdatomic stdbool stddef stdint stdio stdlib stdnoreturn string tgmath threads time uchar wchar wctype
    stdbit stdckdint
    aio cpio dirent dlfcn fcntl fmtmsg fnmatch ftw glob grp iconv langinfo libgen monetary mqueue ndbm netdb
    nl_types poll pthread pwd regex sched search semaphore spawn strings stropts syslog tar termios trace
    ulimit unistd utime utmpx wordexp
    alloca malloc memory endian features ieeefp reent byteswap
""".split())
# Prefixes that make identifiers the C standard reserves (C17 7.31 "future library directions", from
# memory; the upper-case macros P_... count as the name upper-cased), plus C++'s double underscore.
RESERVED_NAMES = (
    (re.compile(r"(is|to)[a-z]"), "external names is*/to* are reserved for <ctype.h>"),
    (re.compile(r"(str|mem|wcs)[a-z]"), "external names str*/mem*/wcs* are reserved for <string.h>"),
    (re.compile(r"e[a-z0-9]"), "macros E<letter or digit>... are reserved for <errno.h>"),
    (re.compile(r"sig[a-z_]"), "macros SIG... are reserved for <signal.h>"),
    (re.compile(r"lc_[a-z]"), "macros LC_... are reserved for <locale.h>"),
    (re.compile(r"(pri|scn)x"), "macros PRIX.../SCNX... are reserved for <inttypes.h>"),
    (re.compile(r"u?int"), "names int*/uint*_t and their macros are reserved for <stdint.h>"),
    (re.compile(r"(fe|time|atomic|memory_order|cnd|mtx|thrd|tss|posix|pthread)_"),
     "this prefix is reserved for a standard header"),
    (re.compile(r".*(__|_$)"), "a double underscore in an identifier is reserved (C++ reads these headers)"),
)
# Only a GCC/Clang attribute list of section / aligned / used, never arbitrary text (it is pasted into C).
_ATTR_ITEM = r'(?:section\("[.A-Za-z0-9_]{1,64}"\)|aligned\([0-9]{1,5}\)|used)'
TABLE_ATTR_RE = re.compile(rf"__attribute__\(\({_ATTR_ITEM}(?:, ?{_ATTR_ITEM})*\)\)")
MAX_ALIGN = 4096             # aligned(N): a power of two, 1..4096 (a page; every ELF toolchain takes it)


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
    table_space: str = "const"
    depth: int = 1                 # [interleave] depth: codewords interleaved byte by byte in one frame

    @property
    def source_name(self) -> str:
        return Path(self.path).name

    def table(self, name: str):
        return self.params[name]

    def problem(self, table: str, key: str, message: str, got: Any = NO_VALUE) -> Problem:
        return Problem(self.source_name, table, key, message, got)

    def with_profile(self, profile: str) -> "Spec":
        return dataclasses.replace(self, profile=profile)


def read_limited(path: str | Path, limit: int = MAX_SPEC_BYTES) -> bytes:
    """The bytes of a regular file of at most `limit` bytes.  Never blocks on a FIFO or reads a device;
    raises SpecError (table "file") for anything else."""
    path = Path(path)

    def fail(message: str):
        raise SpecError([Problem(path.name or os.fspath(path), "file", "", message)])

    try:
        fd = os.open(path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_NOCTTY", 0))
    except (OSError, ValueError) as exc:
        fail(f"cannot read: {getattr(exc, 'strerror', None) or exc}")
    try:
        info = os.fstat(fd)
        if stat.S_ISDIR(info.st_mode):
            fail("is a folder, not a spec file")
        if not stat.S_ISREG(info.st_mode):
            fail("not a regular file (a pipe or a device cannot be a spec)")
        if info.st_size > limit:
            fail(f"larger than {limit} bytes ({info.st_size} bytes)")
        chunks, size = [], 0
        while size <= limit:
            chunk = os.read(fd, limit + 1 - size)
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
        if size > limit:
            fail(f"larger than {limit} bytes")
        return b"".join(chunks)
    except OSError as exc:
        fail(f"cannot read: {exc.strerror or exc}")
    finally:
        os.close(fd)


def load(path: str | Path) -> Spec:
    """Read and validate one spec file; raise SpecError listing every problem."""
    path = Path(path)
    raw = read_limited(path)

    def fail(message: str):
        raise SpecError([Problem(path.name or os.fspath(path), "file", "", message)])

    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        fail(f"not UTF-8 text (byte {exc.start})")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        fail(f"TOML syntax error: {exc}")
    except ValueError:                     # int() beyond the interpreter's digit limit
        fail("TOML value error: an integer with more digits than Python converts (4300)")
    except RecursionError:
        fail("TOML value error: arrays or inline tables nested too deeply")
    return parse(doc, os.fspath(path), hashlib.sha256(raw).hexdigest())


def parse(doc: dict, path: str, sha256: str = "") -> Spec:
    label = Path(path).name
    problems: list[Problem] = []

    def bad(table: str, key: str, message: str, got: Any = NO_VALUE) -> None:
        problems.append(Problem(label, table, key, message, got))

    code = _table(doc, "code", bad)
    c = _table(doc, "c", bad, required=False)
    _unknown(code, "code", {"name", "family"}, bad)
    _unknown(c, "c", {"profile", "table_attr", "table_space"}, bad)

    name = _string(code, "code", "name", bad)
    if name is not None:
        if not NAME_RE.fullmatch(name):
            bad("code", "name", "must be a lower-case C identifier: a-z first, then a-z 0-9 _, "
                "at most 40 characters", name)
        elif name in C_KEYWORDS:
            bad("code", "name", "is a C keyword or reserved name", name)
        elif name in STANDARD_HEADERS:
            bad("code", "name", f"{name}.h would shadow the standard header <{name}.h>", name)
        else:
            for pattern, why in RESERVED_NAMES:
                if pattern.match(name):
                    bad("code", "name", f"makes reserved identifiers: {why}", name)
                    break

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
        elif table_attr:
            for n in map(int, re.findall(r"aligned\(([0-9]+)\)", table_attr)):
                if not 1 <= n <= MAX_ALIGN or n & (n - 1):
                    bad("c", "table_attr", f"aligned(N) needs N a power of two, 1..{MAX_ALIGN}", n)
            if table_attr.count("section(") > 1:
                bad("c", "table_attr", "names more than one section", table_attr)
    table_space = "const"
    if "table_space" in c:
        table_space = _string(c, "c", "table_space", bad) or "const"
        if table_space not in TABLE_SPACES:
            bad("c", "table_space", f"must be one of {', '.join(TABLE_SPACES)}", table_space)
    if ".progmem" in table_attr:            # tables in flash need the matching reads: only table_space has them
        bad("c", "table_attr", 'must not name a .progmem section; use table_space = "avr-progmem"', table_attr)
    elif "section(" in table_attr and table_space == "avr-progmem":
        bad("c", "table_attr", 'must not name a section with table_space = "avr-progmem" (PROGMEM places '
            "the tables)", table_attr)

    if family:
        known = {"code", "c"} | set(FAMILIES[family])
        if family in INTERLEAVED_FAMILIES:
            known.add("interleave")
        for key in doc:
            if key not in known:
                bad(key, "", f"unknown table for family {family!r} (known: {', '.join(sorted(known))})")

    params = {}
    if family:
        for tname, cls in FAMILIES[family].items():
            values = _table(doc, tname, bad)
            if tname == "crc":
                values = crc_catalogue.expand(values, bad)
                if values is None:          # an unknown preset, already reported
                    continue
            obj = _fill(cls, tname, values, bad)
            if obj is not None:
                params[tname] = obj
        if family == "crc-repetition" and "crc" in params:
            _check_crc(params["crc"], bad)
    depth = 1
    if family in INTERLEAVED_FAMILIES and "interleave" in doc:
        interleave = _fill(InterleaveTable, "interleave", _table(doc, "interleave", bad), bad)
        depth = interleave.depth if interleave is not None else 1

    if problems:
        partial = None
        if family and len(params) == len(FAMILIES[family]):     # the model can still look at its tables
            partial = Spec(path=path, sha256=sha256, name=name or "", family=family,
                           profile=profile if profile in PROFILES else "fast", table_attr="", params=params,
                           depth=depth)
        raise SpecError(sort_problems(problems), partial)
    return Spec(path=path, sha256=sha256, name=name, family=family, profile=profile,
                table_attr=table_attr, params=params, table_space=table_space, depth=depth)


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
        kind = {"bool": bool, "str": str}.get(f.type, int)
        if kind is str:
            if not isinstance(value, str):
                bad(table, name, "must be a string", value)
                ok = False
                continue
        elif kind is bool:
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
