"""Interleaving: one frame protects `depth` codewords of a byte-oriented code (BCH with whole data bytes,
Reed-Solomon over 8-bit symbols), so a burst on the channel is spread over all of them.

Layout.  Byte j of codeword i is frame byte j * depth + i, in the data and in the parity alike: data_len
(a multiple of depth) frame data bytes hold depth codewords of data_len / depth bytes each, and the
frame's parity is depth times one codeword's parity, interleaved the same way.  Since the data part holds
depth * (data_len / depth) bytes, byte b of data || parity belongs to codeword b mod depth, at byte
b div depth of that codeword's data || parity.  A run of L consecutive frame bytes therefore puts at most
ceil(L / depth) bytes into any one codeword.

All or nothing.  decode returns the units corrected over all codewords, or the first negative code with
every codeword's bytes untouched when any one fails; check is 1 when any codeword holds errors.  RS
decode_erasures takes positions in the frame; a codeword given more erasures than it has parity symbols
cannot be decoded (ERR_UNCORRECTABLE).
"""
from __future__ import annotations

from .base import ERR_ARG, ERR_LENGTH, ERR_UNCORRECTABLE, CodeModel, Properties
from ..spec import SpecError

TABLE = "interleave"
INT16_MAX = 32767


class Interleaved(CodeModel):
    """A frame of `spec.depth` interleaved codewords of `inner`."""

    def __init__(self, inner: CodeModel):
        super().__init__(inner.spec)
        self.inner = inner
        self.depth = inner.spec.depth
        self.template = inner.template
        # above the codeword chain: _decode, and the frame pass, whose arguments and counters take about
        # two levels at -O0
        self.call_depth = inner.call_depth + 3
        problems = []
        if inner.data_lengths().start != 1:
            problems.append(inner.spec.problem(TABLE, "depth", "interleaving needs whole data bytes: "
                                               "[bch] data_bits a multiple of 8", self.depth))
        if self.depth * inner.properties.t > INT16_MAX:
            problems.append(inner.spec.problem(TABLE, "depth", f"depth x t must be at most {INT16_MAX}, so that "
                                               f"_decode's count fits a 16-bit int", self.depth))
        if problems:
            raise SpecError(problems)

    # -- description ---------------------------------------------------------------------------------
    @property
    def properties(self) -> Properties:
        p = self.inner.properties
        return Properties(n=p.n, k=p.k, t=p.t, d=p.d, unit_bits=p.unit_bits,
                          data_bytes=self.depth * p.data_bytes, parity_bytes=self.depth * p.parity_bytes,
                          table_bytes=p.table_bytes)

    def data_lengths(self) -> range:
        inner = self.inner.data_lengths()
        return range(self.depth * inner.start, self.depth * (inner.stop - 1) + 1, self.depth)

    def parity_len(self, data_len: int) -> int:
        return self.depth * self.inner.parity_len(data_len // self.depth)

    def error_units(self, data_len: int) -> list[int]:
        """Each codeword's units, moved to where its bytes sit in the frame."""
        per = data_len // self.depth
        units = []
        for i in range(self.depth):
            for b in self.inner.error_units(per):
                units.append(8 * ((b // 8) * self.depth + i) + b % 8)
        return sorted(units)

    def stack_array_bytes(self) -> int:
        """The frame function's copies of one codeword (data and parity) and its per-codeword flags, on
        top of the codeword chain."""
        p = self.inner.properties
        return p.data_bytes + p.parity_bytes + self.depth + self.inner.stack_array_bytes()

    # -- the layout ----------------------------------------------------------------------------------
    def split(self, frame: bytes) -> list[bytes]:
        """The depth codewords' parts of an interleaved buffer (data or parity)."""
        return [bytes(frame[i::self.depth]) for i in range(self.depth)]

    def join(self, parts: list[bytes]) -> bytes:
        out = bytearray(sum(len(p) for p in parts))
        for i, part in enumerate(parts):
            out[i::self.depth] = part
        return bytes(out)

    # -- the reference ---------------------------------------------------------------------------------
    def encode(self, data: bytes) -> bytes:
        if len(data) not in self.data_lengths():
            raise ValueError(f"data length {len(data)} is not one of {self.depth} x "
                             f"{self.inner.data_lengths().start}..{self.inner.data_lengths().stop - 1}")
        return self.join([self.inner.encode(part) for part in self.split(data)])

    def _lengths_ok(self, data: bytes, parity: bytes) -> bool:
        return len(data) in self.data_lengths() and len(parity) >= self.parity_len(len(data))

    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        return self._decode_each(data, parity, lambda i, d, p: self.inner.decode(d, p))

    def _decode_each(self, data: bytes, parity: bytes, decode_one) -> tuple[int, bytes, bytes]:
        data, parity = bytes(data), bytes(parity)
        if not self._lengths_ok(data, parity):
            return ERR_LENGTH, data, parity
        plen = self.parity_len(len(data))
        fixed, datas, parities = 0, [], []
        for i, (d, p) in enumerate(zip(self.split(data), self.split(parity[:plen]))):
            rc, d2, p2 = decode_one(i, d, p)
            if rc < 0:
                return rc, data, parity
            fixed += rc
            datas.append(d2)
            parities.append(p2)
        return fixed, self.join(datas), self.join(parities) + parity[plen:]

    def check(self, data: bytes, parity: bytes) -> int:
        if not self._lengths_ok(data, parity):
            return ERR_LENGTH
        plen = self.parity_len(len(data))
        results = [self.inner.check(d, p) for d, p in zip(self.split(data), self.split(parity[:plen]))]
        return 1 if 1 in results else 0

    # -- rendering -------------------------------------------------------------------------------------
    def family_context(self) -> dict:
        return self.inner.family_context()

    def template_context(self) -> dict:
        p = self.inner.properties
        ctx = super().template_context()
        ctx.update({"depth": self.depth, "codeword_data_bytes": p.data_bytes,
                    "codeword_parity_bytes": p.parity_bytes, "call_depth": self.call_depth})
        if "stack_arrays" in ctx:                   # BCH states its local arrays apart
            ctx["stack_arrays"] = self.stack_array_bytes()
        return ctx


class InterleavedErasures(Interleaved):
    """An interleaved code whose codewords take erasures (Reed-Solomon)."""

    def decode_erasures(self, data: bytes, parity: bytes, positions) -> tuple[int, bytes, bytes]:
        """Erasure positions index the frame's data || parity; each goes to its codeword."""
        data, parity = bytes(data), bytes(parity)
        if not self._lengths_ok(data, parity):
            return ERR_LENGTH, data, parity
        total = len(data) + self.parity_len(len(data))
        positions = list(positions)
        if len(positions) > self.erasures_max or len(set(positions)) != len(positions) or \
                any(not isinstance(p, int) or p < 0 or p >= total for p in positions):
            return ERR_ARG, data, parity
        per = [[p // self.depth for p in positions if p % self.depth == i] for i in range(self.depth)]
        if any(len(e) > self.inner.nroots for e in per):
            return ERR_UNCORRECTABLE, data, parity
        return self._decode_each(data, parity, lambda i, d, p: self.inner.decode_erasures(d, p, per[i]))

    def stack_array_bytes(self) -> int:
        """Also the list of one codeword's erasures (uint16_t, as many as its parity symbols)."""
        return super().stack_array_bytes() + 2 * self.inner.nroots

    @property
    def erasures_max(self) -> int:
        return self.depth * self.inner.nroots

    def template_context(self) -> dict:
        ctx = super().template_context()
        ctx["erasures_max"] = self.erasures_max
        return ctx
