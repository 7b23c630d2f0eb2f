"""Every example in every profile on the small, 16-bit and big-endian cores (DESIGN.md section 5).

One matrix, built once per run in parallel and cached by content hash (codegen/target.py):
- strict-flag builds for Cortex-M0+, Cortex-M4, AVR (ATmega328p) and big-endian MIPS at -Os with the full
  checks (no RAM, tables at P_TABLE_BYTES, runtime helpers within the allow-list below), -O2 on each and
  -O3 on AVR compile-only (a warning is an error);
- the self-tests, whose answers are the model's, run under qemu (big-endian MIPS and 32-bit ARM
  userspace, -O2) and simavr (ATmega1284p, 16-bit int and size_t, tables in flash, -Os), and on the host.
A target whose toolchain is absent is skipped with the reason; CI installs them all.
"""
from __future__ import annotations

import dataclasses
import os
import re
from concurrent.futures import ThreadPoolExecutor
from functools import lru_cache

import pytest

from bitmend import emit, harness, spec as specmod, target
from bitmend.codes import build
from conftest import EXAMPLES

PROFILES = ("fast", "small", "tiny")
T = target.TARGETS
CHECKED = {"cortex-m0plus": T["cortex-m0plus"], "cortex-m4": T["cortex-m4"],
           "avr": dataclasses.replace(T["avr"], flags=("-mmcu=atmega328p",)), "mips": T["mips"]}
CHECK_LEVEL = "-Os"
COMPILE_ONLY = [(name, "-O2") for name in CHECKED] + [("avr", "-O3")]
RUNS = {"mips": ("-O2", "const"), "armhf": ("-O2", "const"), "avr": ("-Os", "avr-progmem")}

# Calls the emitted C may make into the compiler's runtime: gcc emits memcpy/memset/memmove for array
# copies and clears even in freestanding code (gcc manual, "Standards": freestanding needs them); AVR
# multiplies 32-bit values through __mulsi3 and friends, and an object with initialised data or .rodata
# references the start-up copy __do_copy_data; MIPS o32 position-independent code names its GOT pointer
# _gp_disp (a linker symbol, no call).  No division, and no 64-bit helper where 32 bits suffice: 64-bit
# shifts only in a module whose header declares a 64-bit value (a CRC wider than 32 bits, the SECDED word
# API of a 64-bit word).
# __bswapsi2: avr-gcc's byte reversal, for the word-wide remainders' big-endian assembly of four data bytes
ALLOWED_HELPERS = {"memcpy", "memset", "memmove", "__do_copy_data", "__do_clear_bss", "_gp_disp",
                   "__mulsi3", "__mulhi3", "__umulhisi3", "__mulhisi3", "__usmulhisi3", "__muluhisi3",
                   "__bswapsi2"}
WIDE_HELPERS = {"__aeabi_llsr", "__aeabi_llsl", "__lshrdi3", "__ashldi3"}

CASES = [(path, profile) for path in EXAMPLES for profile in PROFILES]


def model_of(path, profile, table_space="const"):
    return build(dataclasses.replace(specmod.load(path).with_profile(profile), table_space=table_space))


def _parallel(jobs: list) -> list:
    """Run the callables in `jobs` on as many threads as cores (the work is in compiler processes)."""
    with ThreadPoolExecutor(max_workers=os.cpu_count() or 2) as pool:
        return list(pool.map(lambda job: job(), jobs))


def _attempt(fn):
    def job():
        try:
            return fn()
        except harness.BuildError as err:
            return err
    return job


@lru_cache(maxsize=None)
def objects(tname: str, level: str) -> dict:
    """{(example, profile): object path or BuildError} for one target and level."""
    tg = CHECKED[tname]

    def one(path, profile):
        model = model_of(path, profile)
        return target.compile_object(emit.render(model), f"{model.spec.name}.c", tg.cc, (*tg.flags, level))

    keys = [(p.stem, prof) for p, prof in CASES]
    return dict(zip(keys, _parallel([_attempt(lambda p=p, prof=prof: one(p, prof)) for p, prof in CASES])))


@lru_cache(maxsize=None)
def self_tests(tname: str) -> dict:
    """{(example, profile): (result, message) or BuildError} of the self-test run under the emulator."""
    tg = T[tname]
    level, space = RUNS[tname]

    def one(path, profile):
        model = model_of(path, profile, space)
        program = target.build_program(target.program_files(model), tg.cc, (*tg.flags, level), linked=True)
        return target.run_program(program, list(tg.run), model.spec.name)

    keys = [(p.stem, prof) for p, prof in CASES]
    return dict(zip(keys, _parallel([_attempt(lambda p=p, prof=prof: one(p, prof)) for p, prof in CASES])))


def need(tg: target.Target) -> None:
    why = tg.missing()
    if why:
        pytest.skip(f"{tg.name}: {why}")


def failures(results: dict) -> list[str]:
    return [f"{k}: {v.summary}" for k, v in results.items() if isinstance(v, harness.BuildError)]


@pytest.mark.parametrize("tname,level", [(t, CHECK_LEVEL) for t in CHECKED] + COMPILE_ONLY,
                         ids=[f"{t}{lv}" for t, lv in [(t, CHECK_LEVEL) for t in CHECKED] + COMPILE_ONLY])
def test_every_example_and_profile_builds_warning_free(tname, level):
    need(CHECKED[tname])
    assert failures(objects(tname, level)) == []


@pytest.mark.parametrize("tname", list(CHECKED))
def test_no_ram_and_tables_at_the_stated_bytes(tname):
    """Each object: .data and .bss empty; the declared tables sum to P_TABLE_BYTES; each one the compiler
    kept is a read-only symbol (nm -S) of its declared size (a small table read only at constant indexes
    may be folded into the code); .rodata is the kept tables plus alignment padding (MIPS rounds the
    section to 16 bytes)."""
    tg = CHECKED[tname]
    need(tg)
    wrong = []
    for (stem, profile), obj in objects(tname, CHECK_LEVEL).items():
        if isinstance(obj, harness.BuildError):
            continue                                       # reported by the build test
        model = model_of(EXAMPLES_BY_STEM[stem], profile)
        declared = emit.tables(emit.render(model))
        sizes = target.sections(obj, tg.cc)
        syms = target.symbols(obj, tg.cc)
        ram = sum(b for s, b in sizes.items() if s.startswith((".data", ".bss", ".sdata", ".sbss")))
        rodata = sum(b for s, b in sizes.items() if s.startswith(".rodata"))
        stated = model.properties.table_bytes
        found = {n: syms[n] for n in declared if n in syms}
        kept = sum(declared[n] for n in found)
        if ram or found != {n: ("r", declared[n]) for n in found} or sum(declared.values()) != stated \
                or not kept <= rodata < kept + 16 + 3 * len(found):
            wrong.append(f"{stem} {profile}: RAM {ram}, .rodata {rodata}, P_TABLE_BYTES {stated}, tables {found}")
    assert wrong == []


@pytest.mark.parametrize("tname", list(CHECKED))
def test_runtime_helpers_within_the_allow_list(tname):
    tg = CHECKED[tname]
    need(tg)
    extra = {}
    for key, obj in objects(tname, CHECK_LEVEL).items():
        if not isinstance(obj, harness.BuildError):
            model = model_of(EXAMPLES_BY_STEM[key[0]], key[1])
            wide = re.search(r"^typedef uint64_t \w+;", emit.render(model)[f"{model.spec.name}.h"], flags=re.M)
            calls = target.undefined(obj, tg.cc) - ALLOWED_HELPERS - (WIDE_HELPERS if wide else set())
            if calls:
                extra[key] = sorted(calls)
    assert extra == {}


@pytest.mark.parametrize("tname", list(RUNS))
def test_self_tests_pass_under_the_emulator(tname):
    """Every vector's answer is the model's, so a pass means the core computes the host's bits."""
    need(T[tname])
    results = self_tests(tname)
    assert failures(results) == []
    assert {k: v for k, v in results.items() if v != (0, "")} == {}


EXAMPLES_BY_STEM = {p.stem: p for p in EXAMPLES}
