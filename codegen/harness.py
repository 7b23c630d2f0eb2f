"""Compiles emitted C through cffi and wraps its functions for Python.

The module's own C is compiled separately with the strict flags of docs/DESIGN.md §5 (warnings are
errors), then linked into a cffi extension; the cffi declarations are derived from the emitted header by
pycparser, after the contract's declarations have been checked there.  Builds are cached on disk by a
hash of the sources, flags and compiler, and in memory per process, so a test run compiles each module
once.  Every buffer handed to the C has guard bytes on both sides, checked after each call.
"""
from __future__ import annotations

import copy
import hashlib
import importlib.util
import os
import re
import shutil
import subprocess
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path

import cffi
import pycparser
from pycparser import c_ast, c_generator, c_parser

STRICT_FLAGS = ("-std=c99", "-Wall", "-Wextra", "-Wpedantic", "-Wconversion", "-Wsign-conversion",
                "-Wshadow", "-Wcast-qual", "-Werror")
GUARD = 32                     # guard bytes each side of every buffer
GUARD_BYTE = 0xA5

# Enough of <stdint.h>/<stddef.h> for pycparser to read a header; cffi itself knows the real types.
_PRELUDE = """typedef unsigned char uint8_t; typedef unsigned short uint16_t; typedef unsigned int uint32_t;
typedef unsigned long long uint64_t; typedef unsigned long size_t; typedef unsigned long uintptr_t;
"""
_CONTRACT = {
    "encode": "int (const uint8_t *, size_t, uint8_t *)",
    "decode": "int (uint8_t *, size_t, uint8_t *)",
    "check": "int (const uint8_t *, size_t, const uint8_t *)",
}
_CONTRACT_MACROS = ("DATA_BYTES", "PARITY_BYTES", "CORRECTABLE", "ERR_UNCORRECTABLE", "ERR_LENGTH")


class BuildError(RuntimeError):
    """The emitted C did not compile cleanly, or its header breaks the contract.  `summary` is one line
    (compiler, flags, the compiler's first error line); the full text follows it in str()."""

    def __init__(self, summary: str, details: str = ""):
        self.summary = summary
        super().__init__(f"{summary}\n{details}" if details else summary)


def _run(cmd: list[str], **kwargs) -> subprocess.CompletedProcess:
    """Run a compiler; a missing or unusable one is a BuildError naming it."""
    try:
        return subprocess.run(cmd, capture_output=True, text=True, errors="replace", **kwargs)
    except OSError as exc:
        raise BuildError(f"cannot run the C compiler {cmd[0]!r} (set CC): {exc.strerror or exc}") from None


def _failed(cmd: list[str], res: subprocess.CompletedProcess) -> BuildError:
    lines = [line for line in res.stderr.splitlines() if line.strip()]
    first = next((line for line in lines if re.search(r"(^|: )(fatal )?error:", line)), lines[0] if lines else
                 f"exit status {res.returncode} and no message")
    return BuildError(f"{' '.join(cmd)} failed: {first.strip()}", res.stderr)


def compiler() -> str:
    return os.environ.get("CC", "cc")


def cache_root() -> Path:
    return Path(os.environ.get("BITMEND_CACHE", Path.home() / ".cache" / "bitmend"))


def compile_object(c_file: Path, obj: Path, cc: str | None = None, extra: tuple = ()) -> None:
    """Compile one C file with the strict flags; raise BuildError with the compiler's words."""
    cmd = [cc or compiler(), *STRICT_FLAGS, "-O2", "-fPIC", *extra, "-c", str(c_file), "-o", str(obj)]
    res = _run(cmd)
    if res.returncode != 0:
        raise _failed(cmd, res)


# -- header -> cffi declarations -------------------------------------------------------------------------

def _unnamed(node) -> str:
    """C text of a type with its declarator name removed: 'const uint8_t *'."""
    node = copy.deepcopy(node)
    inner = node
    while not isinstance(inner, c_ast.TypeDecl):
        inner = inner.type
    inner.declname = None
    return c_generator.CGenerator().visit(node)


def _signature(decl: c_ast.Decl) -> str:
    """'int (const uint8_t *, size_t, uint8_t *)' for a function declaration."""
    args = decl.type.args.params if decl.type.args else []
    return f"{_unnamed(decl.type.type)} ({', '.join(_unnamed(p.type) for p in args)})"


def _norm(sig: str) -> str:
    return re.sub(r"\s+", "", sig)


def declarations(header: str, name: str, cc: str | None = None) -> tuple[str, dict[str, str]]:
    """(cdef text, {function name: signature}) from an emitted header; checks the contract."""
    body = "\n".join(line for line in header.splitlines() if not line.lstrip().startswith("#include"))
    cmd = [cc or compiler(), "-E", "-P", "-x", "c", "-"]
    res = _run(cmd, input=_PRELUDE + body)
    if res.returncode != 0:
        raise _failed(cmd + [f"(preprocessing {name}.h)"], res)
    ast = c_parser.CParser().parse(res.stdout, filename=f"{name}.h")
    gen = c_generator.CGenerator()
    typedefs, funcs, cdecls = [], {}, []
    prelude_names = set(re.findall(r"(\w+);", _PRELUDE))
    for node in ast.ext:
        if isinstance(node, c_ast.Typedef) and node.name not in prelude_names:
            if not node.name.startswith(name + "_"):
                raise BuildError(f"{name}.h: typedef {node.name} lacks the prefix {name}_")
            typedefs.append(gen.visit(node) + ";")
        elif isinstance(node, c_ast.Decl) and isinstance(node.type, c_ast.FuncDecl):
            if not node.name.startswith(name + "_"):
                raise BuildError(f"{name}.h: function {node.name} lacks the prefix {name}_")
            funcs[node.name] = _signature(node)
            cdecls.append(gen.visit(node) + ";")
    for short, want in _CONTRACT.items():
        got = funcs.get(f"{name}_{short}")
        if got is None or _norm(got) != _norm(want):
            raise BuildError(f"{name}.h: {name}_{short} must be declared as {want} (got {got})")
    upper = name.upper()
    macros = re.findall(rf"^#define ({upper}_\w+)[ \t]+\S", header, flags=re.M)
    for short in _CONTRACT_MACROS:
        if f"{upper}_{short}" not in macros:
            raise BuildError(f"{name}.h: macro {upper}_{short} missing")
    macros = [m for m in macros if m != f"{upper}_H"]
    cdef = "\n".join(typedefs + cdecls + [f"#define {m} ..." for m in macros])
    return cdef, funcs


# -- building and loading ------------------------------------------------------------------------------

_loaded: dict[str, "Module"] = {}


def build(name: str, files: dict[str, str], cc: str | None = None, extra_cdef: str = "") -> "Module":
    """Compile the emitted `<name>.h`/`<name>.c` (texts in `files`) and load them; cached.  Any further
    `.c` file in `files` (a test driver) is compiled with the same flags and linked in; `extra_cdef`
    declares its functions (to cffi, and to the glue code)."""
    cc = cc or compiler()
    header = files[f"{name}.h"]
    extras = [f"{k}\0{v}" for k, v in sorted(files.items()) if k not in (f"{name}.h", f"{name}.c")]
    key = hashlib.sha256("\0".join([header, files[f"{name}.c"], *extras, *([extra_cdef] if extra_cdef else []),
                                    cc, " ".join(STRICT_FLAGS), cffi.__version__, pycparser.__version__,
                                    sys.version]).encode()).hexdigest()[:20]
    if key in _loaded:
        return _loaded[key]
    modname = f"_bitmend_{name}_{key}"
    cdef, funcs = declarations(header, name, cc)
    final = cache_root() / "cffi" / key
    lib_path = next(final.glob(f"{modname}*.so"), None) if final.is_dir() else None
    if lib_path is None:
        lib_path = _compile(name, modname, files, cdef, extra_cdef, cc, final)
    try:
        mod = _load(modname, lib_path)
    except ImportError:                      # a damaged cache entry (truncated, foreign): build it again
        shutil.rmtree(final, ignore_errors=True)
        mod = _load(modname, _compile(name, modname, files, cdef, extra_cdef, cc, final))
    module = Module(name, mod.ffi, mod.lib, funcs)
    _loaded[key] = module
    return module


def _load(modname: str, lib_path: Path):
    spec = importlib.util.spec_from_file_location(modname, lib_path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _compile(name, modname, files, cdef, extra_cdef, cc, final: Path) -> Path:
    final.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory(dir=final) as tmp:
        work = Path(tmp)
        objs = []
        for fname, text in files.items():
            (work / fname).write_text(text)
        for fname in files:
            if fname.endswith(".c"):
                objs.append(str(work / (fname[:-2] + ".o")))
                compile_object(work / fname, Path(objs[-1]), cc)
        ffi = cffi.FFI()
        ffi.cdef(cdef + "\n" + extra_cdef)
        ffi.set_source(modname, f'#include "{name}.h"\n{extra_cdef}', include_dirs=[str(work)],
                       extra_objects=objs)
        env_cc = os.environ.get("CC")
        os.environ["CC"] = cc
        try:
            built = Path(ffi.compile(tmpdir=str(work), verbose=False))
        except Exception as exc:             # distutils' CompileError/LinkError, cffi's VerificationError
            first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
            raise BuildError(f"{cc}: building the cffi extension of {name} failed: {first}") from None
        finally:
            if env_cc is None:
                os.environ.pop("CC", None)
            else:
                os.environ["CC"] = env_cc
        target = final / built.name
        os.replace(built, target)            # atomic: a concurrent builder sees all of it or nothing
        for f in files:
            shutil.copyfile(work / f, final / f)
    return target


class GuardError(AssertionError):
    """The C wrote outside the buffers it was given."""


@dataclass
class Module:
    """Python view of one compiled module; buffers are guarded and results returned as bytes."""

    name: str
    ffi: object
    lib: object
    functions: dict

    def macro(self, short: str) -> int:
        return getattr(self.lib, f"{self.name.upper()}_{short}")

    def fn(self, short: str):
        return getattr(self.lib, f"{self.name}_{short}")

    def has(self, short: str) -> bool:
        return f"{self.name}_{short}" in self.functions

    # guarded buffers
    def _buf(self, content: bytes):
        raw = self.ffi.new("uint8_t[]", GUARD + len(content) + GUARD)
        self.ffi.memmove(raw, bytes([GUARD_BYTE]) * GUARD + bytes(content) + bytes([GUARD_BYTE]) * GUARD,
                         len(content) + 2 * GUARD)
        return raw, raw + GUARD

    def _take(self, raw, size: int, what: str) -> bytes:
        whole = bytes(self.ffi.buffer(raw, size + 2 * GUARD))
        if whole[:GUARD] != bytes([GUARD_BYTE]) * GUARD or whole[GUARD + size:] != bytes([GUARD_BYTE]) * GUARD:
            raise GuardError(f"{self.name}: a write outside the {what} buffer")
        return whole[GUARD:GUARD + size]

    def encode(self, data: bytes, parity_len: int) -> tuple[int, bytes]:
        d_raw, d = self._buf(data)
        p_raw, p = self._buf(bytes(parity_len))
        rc = self.fn("encode")(d, len(data), p)
        if self._take(d_raw, len(data), "data") != bytes(data):
            raise GuardError(f"{self.name}_encode changed its input")
        return rc, self._take(p_raw, parity_len, "parity")

    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        d_raw, d = self._buf(data)
        p_raw, p = self._buf(parity)
        rc = self.fn("decode")(d, len(data), p)
        return rc, self._take(d_raw, len(data), "data"), self._take(p_raw, len(parity), "parity")

    def decode_erasures(self, data: bytes, parity: bytes, positions, count: int | None = None
                        ) -> tuple[int, bytes, bytes]:
        """P_decode_erasures on guarded buffers.  `positions` (symbol indexes into data || parity) is passed
        as a guarded uint16_t array, or NULL when None; `count` defaults to its length."""
        d_raw, d = self._buf(data)
        p_raw, p = self._buf(parity)
        if positions is None:
            e_raw, e, packed = None, self.ffi.NULL, b""
        else:
            packed = b"".join(int(x).to_bytes(2, sys.byteorder) for x in positions)
            e_raw, e = self._buf(packed)
            e = self.ffi.cast("uint16_t *", e)
        n = len(packed) // 2 if count is None else count
        rc = self.fn("decode_erasures")(d, len(data), p, e, n)
        if e_raw is not None and self._take(e_raw, len(packed), "positions") != packed:
            raise GuardError(f"{self.name}_decode_erasures changed its positions")
        return rc, self._take(d_raw, len(data), "data"), self._take(p_raw, len(parity), "parity")

    def check(self, data: bytes, parity: bytes) -> int:
        d_raw, d = self._buf(data)
        p_raw, p = self._buf(parity)
        rc = self.fn("check")(d, len(data), p)
        if self._take(d_raw, len(data), "data") != bytes(data) or \
                self._take(p_raw, len(parity), "parity") != bytes(parity):
            raise GuardError(f"{self.name}_check changed its input")
        return rc

    def crc(self, data: bytes, pieces: list[int] | None = None) -> int:
        """One-shot CRC, or streamed in the given piece lengths when `pieces` is given."""
        d_raw, d = self._buf(data)
        if pieces is None:
            value = self.fn("crc")(d, len(data))
        else:
            state, at = self.fn("crc_start")(), 0
            for n in pieces:
                state = self.fn("crc_add")(state, d + at, n)
                at += n
            value = self.fn("crc_finish")(state)
        self._take(d_raw, len(data), "data")
        return int(value)
