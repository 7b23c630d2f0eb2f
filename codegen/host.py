"""The other end of the link in Python: the same bits as the device, from the same spec.

    from bitmend import load
    code = load("examples/soil_probe.toml")
    parity = code.encode(reading)
    status, reading, parity = code.decode(reading, parity)     # status < 0: uncorrectable, buffers as given

`load` compiles the spec's generated C through the harness (strict flags, cached by content hash), so a
gateway computes exactly what the firmware computes; without a working C compiler it falls back to the
Python model, which the test suite holds bit-exact against that C.  `code.backend` says which ("c" or
"model"), `code.fallback` why the model was used.

`encode_blocks` / `decode_blocks` apply a code to a whole byte string block by block (the `bitmend encode`
and `decode` verbs): blocks of P_DATA_BYTES, the last one shorter where the family allows it, each followed
by its parity, or with the parity kept apart.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from pathlib import Path

from . import emit, harness
from .codes import build
from .codes.base import CodeModel
from .spec import Spec, load as load_spec

BACKENDS = ("auto", "c", "model")


class Code:
    """One code from a spec: `encode`, `decode`, `check` on bytes, through the C or the model."""

    def __init__(self, model: CodeModel, backend: str = "auto", cc: str | None = None):
        if backend not in BACKENDS:
            raise ValueError(f"backend must be one of {', '.join(BACKENDS)} (got {backend!r})")
        self.model = model
        self.spec: Spec = model.spec
        self.name = model.spec.name
        self.properties = model.properties
        self.fallback = ""
        self._c = None
        if backend != "model":
            try:
                self._c = harness.build(self.name, emit.render(model), cc)
            except (harness.BuildError, OSError) as err:
                if backend == "c":
                    raise
                self.fallback = f"no working C compiler: {str(err).splitlines()[0]}"
        self.backend = "c" if self._c is not None else "model"

    @property
    def through(self) -> str:
        """What computes the bits, in words: "the compiled C" or "the Python model (why)"."""
        return "the compiled C" if self.backend == "c" else f"the Python model ({self.fallback or 'asked for'})"

    # -- lengths --------------------------------------------------------------------------------------------
    @property
    def data_bytes(self) -> int:
        return self.properties.data_bytes

    def data_lengths(self) -> range:
        """Every block length the code takes."""
        return self.model.data_lengths()

    def parity_len(self, data_len: int) -> int:
        return self.model.parity_len(data_len)

    def _need(self, data: bytes, parity: bytes | None = None) -> None:
        n, lens = len(data), self.model.data_lengths()
        if n not in lens:
            takes = f"{lens.start}..{lens.stop - 1}" if len(lens) > 1 else f"exactly {lens.start}"
            raise ValueError(f"{self.name}: a block of {n} bytes; this code takes {takes} bytes")
        if parity is not None and len(parity) != self.parity_len(n):
            raise ValueError(f"{self.name}: {len(parity)} parity bytes; a {n}-byte block has "
                             f"{self.parity_len(n)}")

    # -- the code -------------------------------------------------------------------------------------------
    def encode(self, data: bytes) -> bytes:
        """The parity of one block (P_encode).  ValueError for a block length the code does not take."""
        data = bytes(data)
        self._need(data)
        if self._c is None:
            return self.model.encode(data)
        rc, parity = self._c.encode(data, self.parity_len(len(data)))
        if rc != 0:
            raise RuntimeError(f"{self.name}_encode returned {rc}")
        return parity

    def decode(self, data: bytes, parity: bytes, erasures=None) -> tuple[int, bytes, bytes]:
        """(status, data, parity) as P_decode leaves them: status >= 0 counts the corrected errors, < 0 is
        uncorrectable with both returned exactly as given.  `erasures` (Reed-Solomon only): symbol
        positions in data || parity known to be unreliable (P_decode_erasures)."""
        data, parity = bytes(data), bytes(parity)
        self._need(data, parity)
        if erasures is not None:
            if not hasattr(self.model, "decode_erasures"):
                raise ValueError(f"{self.name}: this family takes no erasures")
            if self._c is None:
                return self.model.decode_erasures(data, parity, list(erasures))
            return self._c.decode_erasures(data, parity, list(erasures))
        if self._c is None:
            return self.model.decode(data, parity)
        return self._c.decode(data, parity)

    def check(self, data: bytes, parity: bytes) -> int:
        """0 when data || parity is a codeword, 1 when it holds errors (P_check)."""
        data, parity = bytes(data), bytes(parity)
        self._need(data, parity)
        return self.model.check(data, parity) if self._c is None else self._c.check(data, parity)

    def __repr__(self) -> str:
        p = self.properties
        return f"<Code {self.name} ({self.spec.family}, n={p.n} k={p.k} t={p.t}) through {self.backend}>"


def load(path: str | Path, profile: str | None = None, backend: str = "auto", cc: str | None = None) -> Code:
    """The code of one spec file.  `backend`: "auto" (the compiled C, else the model), "c" or "model";
    `profile` overrides the spec's [c] profile (all profiles give the same bits).  Raises SpecError for
    a bad spec."""
    spec = load_spec(path)
    return Code(build(spec.with_profile(profile) if profile else spec), backend, cc)


# -- whole byte strings, block by block ---------------------------------------------------------------------

@dataclass
class Decoded:
    data: bytes                                    # the corrected data (uncorrectable blocks as received)
    spans: list                                    # (first, end) data byte offsets of each block
    corrected: dict = field(default_factory=dict)  # block index -> errors corrected
    uncorrectable: list = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not self.uncorrectable

    def summary(self) -> list[str]:
        """What happened, in a firmware engineer's words: one line, then one per damaged block."""
        n = len(self.spans)
        clean = n - len(self.corrected) - len(self.uncorrectable)
        lines = [f"{n} block(s): {clean} clean, {len(self.corrected)} corrected, "
                 f"{len(self.uncorrectable)} uncorrectable"]
        for i in sorted([*self.corrected, *self.uncorrectable]):
            first, end = self.spans[i]
            what = f"{self.corrected[i]} error(s) corrected" if i in self.corrected else "uncorrectable"
            lines.append(f"  block {i} (data bytes {first}..{end - 1}): {what}")
        return lines


def split(code: Code, size: int) -> list[int]:
    """Block lengths for `size` data bytes: full blocks, then a shorter last one.  ValueError when the code
    cannot take that last length."""
    full, rest = divmod(size, code.data_bytes)
    lengths = [code.data_bytes] * full + ([rest] if rest else [])
    if rest and rest not in code.data_lengths():
        raise ValueError(f"{size} bytes leave a last block of {rest}; {code.name} takes blocks of exactly "
                         f"{code.data_bytes} bytes (pad the input to a multiple)")
    return lengths


def encode_blocks(code: Code, data: bytes) -> tuple[list[bytes], list[bytes]]:
    """(data blocks, parity blocks) of `data`."""
    blocks, at = [], 0
    for n in split(code, len(data)):
        blocks.append(data[at:at + n])
        at += n
    return blocks, [code.encode(b) for b in blocks]


def interleave(blocks: list[bytes], parities: list[bytes]) -> bytes:
    return b"".join(b + p for b, p in zip(blocks, parities))


def deinterleave(code: Code, frame: bytes) -> tuple[list[bytes], list[bytes]]:
    """Blocks and parities from data || parity || data || parity ...; the last block may be shorter where
    the family allows it, and its length follows from what is left.  ValueError when nothing fits."""
    full = code.data_bytes + code.parity_len(code.data_bytes)
    count, rest = divmod(len(frame), full)
    lengths = [code.data_bytes] * count
    if rest:
        last = [n for n in code.data_lengths() if n + code.parity_len(n) == rest]
        if not last:
            raise ValueError(f"{len(frame)} bytes are not whole blocks of {code.name} "
                             f"({code.data_bytes} data + {code.parity_len(code.data_bytes)} parity bytes each)")
        lengths.append(last[0])
    blocks, parities, at = [], [], 0
    for n in lengths:
        blocks.append(frame[at:at + n])
        parities.append(frame[at + n:at + n + code.parity_len(n)])
        at += n + code.parity_len(n)
    return blocks, parities


def separate(code: Code, data: bytes, parity: bytes) -> tuple[list[bytes], list[bytes]]:
    """Blocks of `data` and their parities from a separate parity string."""
    lengths = split(code, len(data))
    want = sum(code.parity_len(n) for n in lengths)
    if len(parity) != want:
        raise ValueError(f"{len(parity)} parity bytes; {len(data)} data bytes in {len(lengths)} block(s) of "
                         f"{code.name} have {want}")
    blocks, parities, at, pat = [], [], 0, 0
    for n in lengths:
        blocks.append(data[at:at + n])
        parities.append(parity[pat:pat + code.parity_len(n)])
        at, pat = at + n, pat + code.parity_len(n)
    return blocks, parities


def decode_blocks(code: Code, blocks: list[bytes], parities: list[bytes]) -> Decoded:
    ends = list(itertools.accumulate(len(b) for b in blocks))
    out = Decoded(b"", [(end - len(b), end) for b, end in zip(blocks, ends)])
    fixed = []
    for i, (b, p) in enumerate(zip(blocks, parities)):
        status, d, _ = code.decode(b, p)
        if status < 0:
            out.uncorrectable.append(i)
        elif status > 0:
            out.corrected[i] = status
        fixed.append(d)
    out.data = b"".join(fixed)
    return out
