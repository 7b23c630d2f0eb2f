"""What every code family model provides (docs/DESIGN.md §3).

A model is built from a validated Spec.  Its `encode`/`decode`/`check` are the Python reference: the
meaning of the C functions of the same name, bit for bit, including the return values.
"""
from __future__ import annotations

from abc import ABC, abstractmethod
from collections.abc import Sequence
from dataclasses import dataclass

from ..spec import PROFILES, Spec

OK = 0
ERR_UNCORRECTABLE = -1
ERR_LENGTH = -2
ERR_ARG = -3

# Stated stack bound: per call level (return address, saved registers, scalar locals) plus local arrays.
# tests/test_header_figures.py holds it against gcc -fcallgraph-info=su on the host.
FRAME_BYTES = 96

# Largest array a 16-bit target holds (PTRDIFF_MAX there); tables beyond it get an #error for such targets.
ARRAY_BYTES_16BIT = 32767


@dataclass(frozen=True)
class Properties:
    n: int                 # codeword length in units (bits, or symbols for RS)
    k: int                 # data length in units
    t: int                 # errors (units) always corrected
    d: int                 # minimum (or designed) distance, in units
    unit_bits: int         # 1 for binary codes, m for symbol codes
    data_bytes: int        # largest data block
    parity_bytes: int      # check bytes for the largest block
    table_bytes: int       # constant tables of the generated C for the spec's profile

    @property
    def rate(self) -> float:
        return self.k / self.n

    def as_dict(self) -> dict:
        return {"n": self.n, "k": self.k, "t": self.t, "d": self.d, "rate": self.rate,
                "unit_bits": self.unit_bits, "data_bytes": self.data_bytes,
                "parity_bytes": self.parity_bytes, "table_bytes": self.table_bytes}


class CodeModel(ABC):
    """Base of the family models.  Subclasses set `template` (the template pair's base name)."""

    template: str
    call_depth: int = 4            # deepest chain of the generated functions, outermost included

    def stack_array_bytes(self) -> int:
        """Bytes of local arrays in the deepest call chain of the generated C."""
        return 0

    def __init__(self, spec: Spec):
        self.spec = spec

    # -- description -----------------------------------------------------------------------------------
    @property
    @abstractmethod
    def properties(self) -> Properties: ...

    def data_lengths(self) -> range:
        """Every data_len the C accepts."""
        n = self.properties.data_bytes
        return range(n, n + 1)

    def parity_len(self, data_len: int) -> int:
        """Parity bytes that encode writes for this data_len."""
        return self.properties.parity_bytes

    def error_units(self, data_len: int) -> Sequence[int]:
        """Bit offsets, in the concatenation data || parity, where a unit of the code begins.

        An error in one unit is an XOR of a non-zero value of `unit_bits` bits starting there.  Padding bits
        that carry no code bit are excluded.
        """
        total = (data_len + self.parity_len(data_len)) * 8
        return range(total)                  # a range: 33 million offsets cost nothing until used

    # -- the reference -----------------------------------------------------------------------------------
    @abstractmethod
    def encode(self, data: bytes) -> bytes:
        """Parity for `data`; raises ValueError for a data length the code does not accept."""

    @abstractmethod
    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        """(status, data, parity): status >= 0 is the count of corrected units; < 0 leaves both as given."""

    @abstractmethod
    def check(self, data: bytes, parity: bytes) -> int:
        """0 for a codeword, 1 when errors are present, < 0 for a bad length."""

    def length_ok(self, data: bytes, parity: bytes) -> bool:
        return len(data) in self.data_lengths() and len(parity) >= self.parity_len(len(data))

    # -- rendering -----------------------------------------------------------------------------------------
    @abstractmethod
    def family_context(self) -> dict:
        """Family-specific values the templates print (tables as lists of ints)."""

    def template_context(self) -> dict:
        p = self.properties
        ctx = {
            "name": self.spec.name,
            "NAME": self.spec.name.upper(),
            "profile": self.spec.profile,
            "table_attr": self.spec.table_attr,
            "table_space": self.spec.table_space,
            "data_bytes": p.data_bytes,
            "parity_bytes": p.parity_bytes,
            "correctable": p.t,
            "table_bytes": p.table_bytes,
            "stack_bytes": self.call_depth * FRAME_BYTES + self.stack_array_bytes(),
            "n": p.n,
            "k": p.k,
            "d": p.d,
            "unit": "bit" if p.unit_bits == 1 else "symbol",
            "depth": 1,                 # codewords interleaved in one frame (codes/interleave.py)
        }
        if p.table_bytes > ARRAY_BYTES_16BIT:
            fit, fit_bytes = self.profile_for_16bit()
            ctx.update(tables_over_16bit=True,
                       table_fix=f'generate with [c] profile = \\"{fit}\\" ({fit_bytes} table bytes)')
        else:
            ctx.update(tables_over_16bit=False)
        ctx.update(self.family_context())
        return ctx

    def profile_for_16bit(self) -> tuple[str, int]:
        """(profile, its table bytes): the first profile whose tables together fit one 16-bit array, so every
        one of its arrays fits a 16-bit target; tiny (the last) holds a few KiB at most."""
        for profile in PROFILES:
            other = type(self)(self.spec.with_profile(profile)).properties.table_bytes
            if other <= ARRAY_BYTES_16BIT or profile == PROFILES[-1]:
                return profile, other


def ctype_for(max_value: int) -> str:
    """Smallest exact-width unsigned C type that holds max_value."""
    for bits in (8, 16, 32, 64):
        if max_value < (1 << bits):
            return f"uint{bits}_t"
    raise ValueError("value does not fit 64 bits")


def ctype_bytes(ctype: str) -> int:
    return int(ctype[4:-2]) // 8
