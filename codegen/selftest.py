"""Known-answer self-test of one module: vectors computed by the Python model, rendered as C.

`<name>_selftest.c` holds every vector in one byte table (in the module's table space) and
`int <name>_selftest(void)`, which replays each through the module's own functions and returns 0, or the
1-based index of the first vector whose result differs.  A vector is one data block: encode it (the
parity must be the model's), flip its error units, then check and decode (or decode with erasures) must
return the model's value and leave the model's bytes.  Record layout, all integers little-endian:

    0  encode's result (int8)     1  check's result (int8)     2  decode's result (int8)
    3  data_len (u16)             5  parity length (u16)
    7  input flips (u8)           8  output flips (u8)          9  erasures (u8)
    10 erasure positions (u16 each), data, parity (encode's answer),
       input flips (u16 offset into data || parity, u8 XOR mask each), output flips (same form)

Output flips turn the corrupted input into decode's answer.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import __version__, emit
from .codes.base import ERR_LENGTH, FRAME_BYTES, ARRAY_BYTES_16BIT, CodeModel
from .verify import apply_errors

DEFAULT_VECTORS = 12
MAX_VECTORS = 1000
TEMPLATES = ("selftest.h.j2", "selftest.c.j2")
HEAD_BYTES = 10
FLIP_BYTES = 3


@dataclass(frozen=True)
class Vector:
    kind: str
    data: bytes
    errors: tuple = ()                    # (bit offset in data || parity, XOR value of unit_bits bits)
    erasures: tuple | None = None         # unit indexes passed to decode_erasures


def vectors(model: CodeModel, count: int = DEFAULT_VECTORS, seed: int = 1) -> list[Vector]:
    """`count` vectors, the most telling first: clean all-zero, all-one and random data at several
    lengths, 1..t errors spread over data and parity, t + 1 errors, a length error, erasures where the
    model has them; then more random error patterns."""
    rng = np.random.default_rng(seed)
    p = model.properties
    lengths = list(model.data_lengths())
    full, short = lengths[-1], lengths[0]
    mid = lengths[len(lengths) // 2]

    def data(n: int) -> bytes:
        return rng.integers(0, 256, n, dtype=np.uint8).tobytes()

    def value() -> int:
        return 1 if p.unit_bits == 1 else int(rng.integers(1, 1 << p.unit_bits))

    def spread(n: int, w: int) -> tuple:
        """w error units: every other one in the parity, the rest in the data."""
        units = model.error_units(n)
        parity = [u for u in units if u >= 8 * n]
        data_units = [u for u in units if u < 8 * n]
        w_parity = min(len(parity), w // 2)
        w_data = min(len(data_units), w - w_parity)
        w_parity = min(len(parity), w - w_data)
        picks = list(rng.choice(parity, w_parity, replace=False)) + list(rng.choice(data_units, w_data, replace=False))
        return tuple(sorted((int(u), value()) for u in picks))

    out = [Vector("clean, all-zero data", bytes(full)), Vector("clean, all-one data", b"\xff" * full),
           Vector(f"clean, random data, {short} bytes", data(short))]
    out += [Vector(f"{w} error(s)", data(full), spread(full, w)) for w in sorted({p.t, 1})]
    out.append(Vector(f"{p.t + 1} errors (beyond t)", data(full), spread(full, p.t + 1)))
    out.append(Vector("length error", b""))
    if hasattr(model, "decode_erasures"):
        room = p.d - 1
        units = model.error_units(full)
        picks = sorted(int(i) for i in rng.choice(len(units), room, replace=False))
        out.append(Vector(f"{room} erasures", data(full), tuple((units[i], value()) for i in picks), tuple(picks)))
        e = room // 2
        picks = [int(i) for i in rng.choice(len(units), e + (room - e) // 2, replace=False)]
        out.append(Vector(f"{e} erasures + {(room - e) // 2} errors", data(full),
                          tuple(sorted((units[i], value()) for i in picks)), tuple(sorted(picks[:e]))))
    if mid not in (short, full):
        out.append(Vector(f"clean, random data, {mid} bytes", data(mid)))
    middle = list(range(2, p.t))                       # the weights between 1 and t, from the centre out
    middle.sort(key=lambda w: abs(2 * w - p.t))
    out += [Vector(f"{w} error(s)", data(full), spread(full, w)) for w in middle[:max(0, count - len(out))]]
    while len(out) < count:
        n = int(rng.choice(lengths))
        w = int(rng.integers(1, p.t + 2))
        out.append(Vector(f"{w} error(s), {n} bytes", data(n), spread(n, w)))
    return out[:count]


def _i8(value: int) -> int:
    return value & 0xFF


def _u16(value: int) -> bytes:
    return value.to_bytes(2, "little")


def _flips(before: bytes, after: bytes) -> list[tuple[int, int]]:
    return [(i, a ^ b) for i, (a, b) in enumerate(zip(before, after)) if a != b]


def record(model: CodeModel, vector: Vector) -> bytes:
    """The vector's bytes, with every answer the model's."""
    n = len(vector.data)
    plen = model.parity_len(max(n, 1))
    if n not in model.data_lengths():
        parity = bytes(plen)
        head = [ERR_LENGTH, model.check(vector.data, parity), model.decode(vector.data, parity)[0]]
        return bytes(map(_i8, head)) + _u16(n) + _u16(plen) + bytes(3) + parity
    parity = model.encode(vector.data)
    rd, rp = apply_errors(model, vector.data, parity, vector.errors)
    if vector.erasures is None:
        rc, od, op = model.decode(rd, rp)
    else:
        rc, od, op = model.decode_erasures(rd, rp, list(vector.erasures))
    flips_in = _flips(vector.data + parity, rd + rp)
    flips_out = _flips(rd + rp, od + op)
    erasures = vector.erasures or ()
    if max(len(flips_in), len(flips_out), len(erasures)) > 255:
        raise ValueError("a self-test vector holds more than 255 flips or erasures")
    out = bytes(map(_i8, [0, model.check(rd, rp), rc])) + _u16(n) + _u16(len(parity))
    out += bytes([len(flips_in), len(flips_out), len(erasures)])
    out += b"".join(_u16(e) for e in erasures) + vector.data + parity
    for offset, mask in flips_in + flips_out:
        out += _u16(offset) + bytes([mask])
    return out


def context(model: CodeModel, count: int = DEFAULT_VECTORS) -> dict:
    vecs = vectors(model, count)
    records = [record(model, v) for v in vecs]
    pool = b"".join(records)
    ctx = model.template_context()
    p = model.properties
    parity_max = max(model.parity_len(n) for n in (min(model.data_lengths()), p.data_bytes))
    erasures_max = p.d - 1 if hasattr(model, "decode_erasures") else 0
    buffers = p.data_bytes + parity_max + 2 * erasures_max
    ctx.update(
        vectors=[{"kind": v.kind, "bytes": len(r)} for v, r in zip(vecs, records)],
        pool=list(pool),
        pool_bytes=len(pool),
        parity_max=parity_max,
        erasures_max=erasures_max,
        has_erasures=erasures_max > 0,
        selftest_stack_bytes=2 * FRAME_BYTES + buffers + ctx["stack_bytes"],
        tables_over_16bit=len(pool) > ARRAY_BYTES_16BIT,
        table_fix="generate fewer vectors (--self-test-vectors)",
    )
    return ctx


def render(model: CodeModel, count: int = DEFAULT_VECTORS) -> dict[str, str]:
    """{file name: text}: `<name>_selftest.h` and `<name>_selftest.c`."""
    if count < 1:
        raise ValueError("a self-test needs at least one vector")
    return _render(model, context(model, count), tuple(t[:-3] for t in TEMPLATES))


def main_source(model: CodeModel) -> dict[str, str]:
    """{`<name>_selftest_main.c`: text}: a program that runs the self-test once and prints the result."""
    return _render(model, model.template_context(), ("selftest_main.c",))


def _render(model: CodeModel, ctx: dict, templates: tuple[str, ...]) -> dict[str, str]:
    env = emit.environment()
    spec = model.spec
    ctx.update(version=__version__, spec_file=spec.source_name, spec_sha256=spec.sha256)
    return {f"{spec.name}_{t}": env.get_template(f"{t}.j2").render(ctx)
            for t in templates}
