"""Cross builds of the emitted C for other cores: toolchains, cached objects, sections and helper calls.

A `Target` names a compiler and its core flags, and how a linked program runs there (an emulator, or
nothing for bare-metal parts measured by size only).  Objects are cached by a hash of the sources, the
compiler's identity and the flags (`$BITMEND_CACHE/target`), so a test run builds each once.
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

from . import harness
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

