"""Property-based tests of the spec front end (issue 13 items 2 and 7).

- Every spec the front end accepts generates C that compiles under the strict flags (random valid specs
  of every family, profile and table placement).
- Mutated specs (bytes flipped, control characters, huge numbers, deep nesting, keys and tables moved)
  end in exit 0 or 2, one well-formed line per problem, no traceback, and nothing written on error.

Bounded for the suite (derandomized, a few dozen examples, strict builds cached by content hash);
`make fuzz` sets BITMEND_FUZZ_EXAMPLES to run many more with fresh randomness.
"""
from __future__ import annotations

import contextlib
import hashlib
import io
import os
import re
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, Phase, assume, given, settings, strategies as st

from bitmend import cli, emit, harness, spec as specmod
from bitmend.codes import build
from conftest import EXAMPLES, make_spec

LONG_RUN = int(os.environ.get("BITMEND_FUZZ_EXAMPLES", "0"))


def bounded(examples: int):
    """Settings: a fixed, small run in the suite; many fresh examples under `make fuzz`."""
    phases = [Phase.explicit, Phase.generate] + ([Phase.shrink] if LONG_RUN else [])
    return settings(max_examples=LONG_RUN or examples, derandomize=not LONG_RUN, database=None,
                    deadline=None, suppress_health_check=list(HealthCheck), phases=phases)


# -- random valid specs compile ---------------------------------------------------------------------------

NAMES = st.from_regex(r"[a-z][a-z0-9_]{0,12}", fullmatch=True)
ATTR_ITEMS = st.one_of(st.from_regex(r'section\("\.[a-z_][a-z0-9_.]{0,10}"\)', fullmatch=True),
                       st.sampled_from([1, 2, 4, 8, 16, 64, 4096]).map(lambda n: f"aligned({n})"),
                       st.just("used"))
TABLE_ATTR = st.lists(ATTR_ITEMS, min_size=1, max_size=3).map(lambda items: f"__attribute__(({', '.join(items)}))")


@st.composite
def family_tables(draw) -> str:
    family = draw(st.sampled_from(list(specmod.FAMILIES)))
    if family == "crc-repetition":
        width = draw(st.integers(1, 64))
        poly = draw(st.integers(0, (1 << width) - 1)) | 1
        init = draw(st.integers(0, (1 << width) - 1))
        xor_out = draw(st.integers(0, (1 << width) - 1))
        refl = draw(st.booleans()), draw(st.booleans())
        return (f'family = "{family}"\n[crc]\nwidth = {width}\npoly = {poly:#x}\ninit = {init:#x}\n'
                f"xor_out = {xor_out:#x}\nreflect_in = {str(refl[0]).lower()}\nreflect_out = {str(refl[1]).lower()}\n"
                f"[repetition]\ndata_bytes = {draw(st.integers(1, 48))}\ncopies = {draw(st.integers(1, 5))}\n")
    if family == "hamming":
        return (f'family = "{family}"\n[hamming]\ndata_bits = {draw(st.integers(1, 300))}\n'
                f"secded = {str(draw(st.booleans())).lower()}\n")
    if family == "bch":
        m = draw(st.integers(3, 10))
        t = draw(st.integers(1, 6))
        text = f'family = "{family}"\n[bch]\nm = {m}\nt = {t}\n'
        if draw(st.booleans()):
            text += f"data_bits = {draw(st.integers(1, (1 << m) - 1))}\n"
        return text
    n = draw(st.integers(3, 255))
    k = draw(st.integers(1, n - 1))
    return (f'family = "{family}"\n[reed-solomon]\nn = {n}\nk = {k}\n'
            f"first_root = {draw(st.integers(0, 254))}\nroot_step = {draw(st.sampled_from([1, 2, 4, 7, 11, 254]))}\n")


@st.composite
def valid_specs(draw) -> str:
    text = f'[code]\nname = "{draw(NAMES)}"\n' + draw(family_tables())
    c = {}
    if draw(st.booleans()):
        c["profile"] = draw(st.sampled_from(specmod.PROFILES))
    if draw(st.booleans()):
        c["table_attr"] = draw(TABLE_ATTR)
    if c:
        text += "[c]\n" + "".join(f"{k} = '{v}'\n" for k, v in c.items())
    return text


def compiles_strictly(name: str, files: dict[str, str]) -> None:
    """gcc with the strict flags on the emitted .c (its own header beside it); cached by content."""
    key = hashlib.sha256("\0".join([files[f"{name}.h"], files[f"{name}.c"], harness.compiler(),
                                    " ".join(harness.STRICT_FLAGS)]).encode()).hexdigest()[:24]
    stamp = harness.cache_root() / "strict" / key
    if stamp.exists():
        return
    with tempfile.TemporaryDirectory() as tmp:
        for fname, text in files.items():
            Path(tmp, fname).write_text(text)
        harness.compile_object(Path(tmp, f"{name}.c"), Path(tmp, f"{name}.o"))
    stamp.parent.mkdir(parents=True, exist_ok=True)
    stamp.touch()


@bounded(24)
@given(valid_specs())
def test_every_accepted_spec_compiles_strictly(text):
    try:
        spec = make_spec(text, "random.toml")
        model = build(spec)
    except specmod.SpecError:
        assume(False)                       # refused up front: nothing to compile
        return
    compiles_strictly(spec.name, emit.render(model))


# -- mutated specs: exit 0 or 2, one clean line per problem, nothing written on error ---------------------

SEEDS = [p.read_text() for p in EXAMPLES]
NASTY = ["\n", "\r", "\x1b[2J", "\x00", "\u202e", "\"", "'", "[", "]", "{", "}", "=", "#", "\\", "\\u0000",
         "0x" + "f" * 300, "9" * 5000, "[" * 700, "{a=" * 700, "-1", "1e999", "nan", "inf", "true", "''' ",
         "[c]\n", "[code]\n", "[[code]]\n", 'name = "stdint"\n', "table_attr = '__attribute__((aligned(3)))'\n",
         "data_bytes = 65535\ncopies = 64\n", "m = 16\nt = 4000\n", "field_poly = " + "1" * 400 + "\n",
         "\udcff", "é", "k" * 3000]


@st.composite
def mutated_specs(draw) -> bytes:
    text = draw(st.sampled_from(SEEDS))
    for _ in range(draw(st.integers(1, 4))):
        at = draw(st.integers(0, len(text)))
        how = draw(st.sampled_from(["insert", "replace", "delete", "line"]))
        piece = draw(st.one_of(st.sampled_from(NASTY), st.text(max_size=8)))
        if how == "insert":
            text = text[:at] + piece + text[at:]
        elif how == "replace":
            text = text[:at] + piece + text[at + len(piece):]
        elif how == "delete":
            text = text[:at] + text[at + draw(st.integers(1, 40)):]
        else:
            lines = text.splitlines(keepends=True)
            i = draw(st.integers(0, max(0, len(lines) - 1)))
            text = "".join(lines[:i] + lines[i + 1:] + lines[i:i + 1])
    return text.encode("utf-8", "surrogateescape")


PROBLEM_LINE = re.compile(r"(spec\.toml: \[[^\]\x00-\x1f]*\]( [^\x00-\x1f]*)?|bitmend): [^\x00-\x1f]+")


@bounded(60)
@given(mutated_specs())
def test_mutated_specs_fail_cleanly(raw):
    with tempfile.TemporaryDirectory() as tmp:
        spec = Path(tmp, "spec.toml")
        spec.write_bytes(raw)
        out = Path(tmp, "out")
        err = io.StringIO()
        with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
            rc = cli.main(["generate", str(spec), "-o", str(out), "--depfile", str(Path(tmp, "d.d"))])
        lines = err.getvalue().splitlines()
        assert rc in (0, 2), (rc, lines)
        if rc == 2:
            assert lines and all(PROBLEM_LINE.fullmatch(line) for line in lines), lines
            assert not out.exists() and not Path(tmp, "d.d").exists()
        else:
            assert lines == [] and sorted(p.suffix for p in out.iterdir()) == [".c", ".h"]
