"""Cross builds of the emitted C for other cores: toolchains, cached objects and programs, sections, helper
calls, and the self-test run through an emulator (`bitmend verify --cc/--run`).

A `Target` names a compiler and its core flags, and how a linked program runs there (an emulator, or
nothing for bare-metal parts measured by size only).  Objects and programs are cached by a hash of the
sources, the compiler's identity and the flags (`$BITMEND_CACHE/target`), so a test run builds each once.
"""
from __future__ import annotations

import functools
import hashlib
import os
import re
import shutil
import subprocess
import tempfile
from dataclasses import dataclass
from pathlib import Path

from . import emit, harness, selftest
from .harness import STRICT_FLAGS, cache_root


@dataclass(frozen=True)
class Target:
    name: str
    cc: str
    flags: tuple[str, ...]               # core selection, before the optimisation level
    run: tuple[str, ...] | None = None   # runs a linked program: the command before its path
    word_bits: int = 32                  # int and size_t width

    def missing(self) -> str | None:
        """Why this target cannot be used here, or None."""
        tools = [self.cc] + ([self.run[0]] if self.run else [])
        absent = [t for t in tools if shutil.which(t) is None]
        return f"{', '.join(absent)} not installed" if absent else None


TARGETS = {t.name: t for t in (
    Target("cortex-m0plus", "arm-none-eabi-gcc", ("-mcpu=cortex-m0plus", "-mthumb")),
    Target("cortex-m4", "arm-none-eabi-gcc", ("-mcpu=cortex-m4", "-mthumb")),
    Target("avr", "avr-gcc", ("-mmcu=atmega1284p",), ("simavr", "-m", "atmega1284p", "-f", "16000000"), 16),
    Target("mips", "mips-linux-gnu-gcc", (), ("qemu-mips", "-L", "/usr/mips-linux-gnu")),
    Target("powerpc", "powerpc-linux-gnu-gcc", (), ("qemu-ppc", "-L", "/usr/powerpc-linux-gnu")),
    Target("armhf", "arm-linux-gnueabihf-gcc", (), ("qemu-arm", "-L", "/usr/arm-linux-gnueabihf")),
)}


def binutil(cc: str, tool: str) -> str:
    """The binutils program `tool` (size, nm) that goes with compiler `cc`: arm-none-eabi-gcc ->
    arm-none-eabi-size; the host's own for other names."""
    stem = Path(cc).name
    if stem.endswith("gcc"):
        candidate = str(Path(cc).with_name(stem[:-3] + tool)) if os.sep in cc else stem[:-3] + tool
        if shutil.which(candidate):
            return candidate
    return tool


@functools.lru_cache(maxsize=None)
def _compiler_id(cc: str) -> str:
    res = harness._run([cc, "--version"])
    return res.stdout.splitlines()[0] if res.returncode == 0 and res.stdout else cc


def compile_object(files: dict[str, str], source: str, cc: str, flags: tuple[str, ...]) -> Path:
    """Compile `source` (one of `files`, {name: text}, written side by side) with the strict flags and
    `flags`; the object's path in the cache.  Extra outputs (-fstack-usage, -fcallgraph-info) sit beside
    it.  Raises BuildError with the compiler's words."""
    cmd = [cc, *STRICT_FLAGS, *flags, "-c", source, "-o", "m.o"]
    return _cached(cmd, _included(files, source), "m.o")


def _included(files: dict[str, str], source: str) -> dict[str, str]:
    """`source` and the files of `files` it includes (quoted includes, followed), so that a cached object
    depends on what it is made of and nothing else."""
    out, todo = {}, [source]
    while todo:
        name = todo.pop()
        if name in files and name not in out:
            out[name] = files[name]
            todo.extend(re.findall(r'^#include "([^"]+)"', files[name], flags=re.M))
    return out


def link(objects: list[Path], cc: str, flags: tuple[str, ...]) -> Path:
    """A program from cached objects, linked with `flags`; its path in the cache."""
    cmd = [cc, *flags, *map(str, objects), "-o", "prog"]
    return _cached(cmd, {}, "prog")


def _cached(cmd: list[str], files: dict[str, str], output: str) -> Path:
    """Run `cmd` in a fresh folder holding `files`, once per content: the path of `output` in the cache."""
    key = hashlib.sha256("\0".join([_compiler_id(cmd[0]), *cmd, *(f"{n}\0{t}" for n, t in sorted(files.items()))])
                         .encode()).hexdigest()[:24]
    final = cache_root() / "target" / key
    if (final / output).is_file():
        return final / output
    final.parent.mkdir(parents=True, exist_ok=True)
    work = Path(tempfile.mkdtemp(dir=final.parent))
    try:
        for name, text in files.items():
            (work / name).write_text(text)
        res = harness._run(cmd, cwd=work)
        if res.returncode != 0:
            raise harness._failed(cmd, res)
        try:
            os.rename(work, final)           # atomic: a concurrent builder sees all of it or nothing
        except OSError:
            if not (final / output).is_file():
                raise
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return final / output


def sections(obj: Path, cc: str) -> dict[str, int]:
    """{section: bytes} of an object, from `size -A`."""
    res = subprocess.run([binutil(cc, "size"), "-A", str(obj)], capture_output=True, text=True, check=True)
    out = {}
    for line in res.stdout.splitlines():
        m = re.match(r"(\.\S+)\s+(\d+)\s+\d+", line)
        if m:
            out[m.group(1)] = int(m.group(2))
    return out


def symbols(obj: Path, cc: str) -> dict[str, tuple[str, int]]:
    """{symbol: (nm's type letter, size in bytes)} of the symbols an object defines, from `nm -S`."""
    res = subprocess.run([binutil(cc, "nm"), "-S", str(obj)], capture_output=True, text=True, check=True)
    out = {}
    for line in res.stdout.splitlines():
        parts = line.split()
        if len(parts) == 4:
            out[parts[3]] = (parts[2], int(parts[1], 16))
    return out


def undefined(obj: Path, cc: str) -> set[str]:
    """Symbols the object calls but does not define (the runtime helpers, for the emitted C)."""
    res = subprocess.run([binutil(cc, "nm"), "-u", str(obj)], capture_output=True, text=True, check=True)
    return {line.split()[-1] for line in res.stdout.splitlines() if line.strip()}


# -- the self-test on a target -------------------------------------------------------------------------

RUN_TIMEOUT = 120                        # seconds for one self-test under an emulator
_RESULT = re.compile(r"(\w+)_selftest (-?\d+)")
_ESCAPES = re.compile(r"\x1b\[[0-9;]*m")


@dataclass
class Outcome:
    """One spec in one profile on one target: built or not, and the self-test's result when it ran."""

    name: str
    profile: str
    vectors: int
    built: bool = False
    ran: bool = False
    result: int | None = None            # what <name>_selftest returned; None when no result came
    message: str = ""

    @property
    def ok(self) -> bool:
        return self.built and (not self.ran or self.result == 0)

    def as_dict(self) -> dict:
        return {"name": self.name, "profile": self.profile, "vectors": self.vectors, "built": self.built,
                "ran": self.ran, "result": self.result, "ok": self.ok, "message": self.message}


def program_files(model, vectors: int = selftest.DEFAULT_VECTORS) -> dict[str, str]:
    """The module, its self-test and the tiny main that prints the result."""
    return emit.render(model) | selftest.render(model, vectors) | selftest.main_source(model)


def build_program(files: dict[str, str], cc: str, cflags: tuple[str, ...], linked: bool) -> Path | None:
    """Compile every .c of `files`; link them when `linked`.  The program's path, or None."""
    objects = [compile_object(files, c, cc, cflags) for c in sorted(files) if c.endswith(".c")]
    return link(objects, cc, cflags) if linked else None


def run_program(program: Path, command: list[str], name: str, timeout: float = RUN_TIMEOUT) -> tuple[int | None, str]:
    """(the self-test's result, or None when the output holds none; what the run printed last)."""
    try:
        res = subprocess.run([*command, str(program)], capture_output=True, text=True, errors="replace",
                             timeout=timeout, stdin=subprocess.DEVNULL)
    except subprocess.TimeoutExpired:
        return None, f"no result within {timeout:g} s"
    text = _ESCAPES.sub("", res.stdout + "\n" + res.stderr)
    for m in _RESULT.finditer(text):
        if m.group(1) == name:
            return int(m.group(2)), ""
    last = [line.strip() for line in text.splitlines() if line.strip()]
    return None, f"no '{name}_selftest N' line in the output (exit status {res.returncode}" + \
        (f", last line: {last[-1][:120]})" if last else ")")


def verify(specs, cc: str, cflags: tuple[str, ...], command: list[str] | None, profiles=None,
           vectors: int = selftest.DEFAULT_VECTORS) -> list[Outcome]:
    """Cross-build each spec (in each profile) with its self-test; run it through `command` when given."""
    from .codes import build
    outcomes = []
    for spec in specs:
        for profile in profiles or [spec.profile]:
            model = build(spec.with_profile(profile))
            out = Outcome(spec.name, profile, vectors)
            outcomes.append(out)
            try:
                program = build_program(program_files(model, vectors), cc, cflags, command is not None)
            except harness.BuildError as err:
                out.message = err.summary
                continue
            out.built = True
            if program is not None:
                out.ran = True
                out.result, out.message = run_program(program, command, spec.name)
    return outcomes


def table(outcomes: list[Outcome], cc: str, cflags: tuple[str, ...], command: list[str] | None) -> str:
    lines = [f"compiler: {cc} {' '.join(cflags)}".rstrip(),
             f"run: {' '.join(command)} PROGRAM" if command else "run: not asked (--run CMD): built only",
             f"  {'spec':<24}{'profile':<9}{'build':<8}self-test"]
    for o in outcomes:
        if not o.built:
            verdict = "-"
        elif not o.ran:
            verdict = "not run"
        elif o.result == 0:
            verdict = f"pass ({o.vectors} vectors)"
        elif o.result is not None:
            verdict = f"FAIL at vector {o.result}"
        else:
            verdict = "FAIL: no result"
        lines.append(f"  {o.name:<24}{o.profile:<9}{'ok' if o.built else 'FAILED':<8}{verdict}")
        if o.message:
            lines.append(f"    ! {o.message}")
    bad = sum(not o.ok for o in outcomes)
    lines.append(f"  {len(outcomes)} build(s), {bad} failed" + ("" if bad else "   OK"))
    return "\n".join(lines)
