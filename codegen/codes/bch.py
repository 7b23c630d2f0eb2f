"""Binary BCH over GF(2^m): narrow-sense (roots alpha^1 .. alpha^2t), primitive parent length 2^m - 1,
shortened by leading zeros.

Code.  g(x) is the LCM of the minimal polynomials of alpha, alpha^3, ..., alpha^(2t-1); r = deg g parity
bits, k = 2^m - 1 - r data bits for the parent code; `data_bits` (default k) may be fewer (shortened).

Layout (docs/DESIGN.md §4).  The message polynomial's coefficients, highest degree first, are the data
bits packed MSB-first: data bit i (i = 0 .. nd-1, nd = 8 * data_len or data_bits) is the coefficient of
x^(r + nd - 1 - i).  Parity = (message * x^r) mod g(x), its r coefficients highest degree first, packed
MSB-first: parity bit i is the coefficient of x^(r - 1 - i).  When data_bits is a multiple of 8, any
data_len from 1 to data_bits / 8 is accepted (shortening by leading zero bits).  Otherwise data_len is
exactly ceil(data_bits / 8): the data bits are the first data_bits bits of the buffer and the trailing
pad bits of its last byte carry no code bit.  Pad bits (data and parity) are ignored by check and decode
and never changed by decode; encode writes the parity pad bits as zero.

Decoding (the reference the C follows): syndromes S_1 .. S_2t of the received word; all zero -> 0.
Otherwise Berlekamp-Massey gives the shortest LFSR (C(x), L); it is accepted only when L <= t and
deg C = L.  A Chien search over the transmitted positions 0 .. nd + r - 1 only must then find exactly L
roots (positions p with C(alpha^-p) = 0); those bits are flipped and L is returned.  Anything else is
uncorrectable and leaves both buffers as given, so the decoder is exactly bounded-distance (a binary word
whose locator has L <= t distinct roots with deg C = L is always within distance L of a codeword).
"""
from __future__ import annotations

import numpy as np

from ..gf import (DEFAULT_PRIMITIVE, Field, bin_mod, bin_mul, cyclotomic_coset, degree, field_context,
                  is_primitive, step_context)
from ..spec import Spec, SpecError
from .base import ERR_LENGTH, ERR_UNCORRECTABLE, CodeModel, Properties, ctype_bytes

WORD_BITS = 32            # the C holds the remainder in uint32_t words, left-aligned
STEP_TABLE_BYTES = 16384    # the fast profile's word-wide remainder tables at most (4 byte-wide ones for 104 bits)
UNROLL_WORDS = 8          # up to this many words the C keeps the remainder in scalar locals (registers)


def generator_exponents(m: int, t: int) -> list[list[int]]:
    """The cyclotomic cosets of alpha^1, alpha^3, ..., alpha^(2t-1) (each coset once), in order."""
    seen: set[int] = set()
    cosets = []
    for i in range(1, 2 * t, 2):
        if i % ((1 << m) - 1) in seen:
            continue
        coset = cyclotomic_coset(i, m)
        seen.update(coset)
        cosets.append(coset)
    return cosets


def parity_bits_for(m: int, t: int) -> int:
    """deg g(x) = the number of distinct conjugates of alpha^1 .. alpha^2t (independent of the field polynomial)."""
    return sum(len(c) for c in generator_exponents(m, t))


def generator_polynomial(field: Field, t: int) -> int:
    """g(x) as a binary polynomial (bit i = coefficient of x^i)."""
    g = 1
    for coset in generator_exponents(field.m, t):
        g = bin_mul(g, field.minimal_polynomial(coset[0]))
    return g


class Bch(CodeModel):
    template = "bch"
    # decode > berlekamp > inv_factor > inv > mul in the tiny profile (the others are shallower); one spare
    # level for the compiler's helpers
    call_depth = 6

    def __init__(self, spec: Spec):
        super().__init__(spec)
        b = spec.table("bch")
        m, t = b.m, b.t
        self.m, self.t = m, t
        self.order = (1 << m) - 1                      # parent length n = multiplicative order
        poly = DEFAULT_PRIMITIVE[m] if b.field_poly is None else b.field_poly
        problems = []
        if not is_primitive(poly, m):
            problems.append(spec.problem(
                "bch", "field_poly", f"must be a primitive polynomial of degree m = {m} (top bit 1 << {m}, "
                f"x of order 2^{m} - 1 = {self.order}); the default is {DEFAULT_PRIMITIVE[m]:#x}", hex(poly)))
        t_max = (self.order - 1) // 2
        r = None
        if t > t_max:
            problems.append(spec.problem(
                "bch", "t", f"too large for m = {m}: the designed distance 2t + 1 must not exceed "
                f"n = 2^m - 1 = {self.order}, so t is at most {t_max}", t))
        else:
            r = parity_bits_for(m, t)
            if r >= self.order:                     # kept for safety: t <= t_max always leaves a data bit
                problems.append(spec.problem("bch", "t", f"too large for m = {m}: no data bit left", t))
                r = None
        if r is not None:
            k = self.order - r
            if b.data_bits is not None and b.data_bits > k:
                problems.append(spec.problem(
                    "bch", "data_bits", f"must be at most k = {k} (n = {self.order} minus {r} parity bits "
                    f"for m = {m}, t = {t})", b.data_bits))
        if problems:
            raise SpecError(problems)

        self.field_poly = poly
        self.field = Field(m, poly)
        self.generator = generator_polynomial(self.field, t)
        self.r = degree(self.generator)
        assert self.r == r
        self.k_parent = self.order - self.r
        self.data_bits = self.k_parent if b.data_bits is None else b.data_bits
        self.aligned = self.data_bits % 8 == 0
        self.data_bytes = (self.data_bits + 7) // 8
        self.parity_bytes = (self.r + 7) // 8
        self.reg_words = (self.r + WORD_BITS - 1) // WORD_BITS
        self.gf_ctype = "uint8_t" if m <= 8 else "uint16_t"
        self._mask = (1 << self.r) - 1
        self._table8 = [bin_mod(v << self.r, self.generator) for v in range(256)]
        self._exp = self.field.exp_list
        self._log = self.field.log_list
        self._exp_np = self.field.exp[:self.order].copy()
        self.unrolled = self.reg_words <= UNROLL_WORDS
        self._log_np = self.field.log.copy()
        self._step = None
        # the direct solution of a degree-2 locator (t >= 2 only): gf.Field.quadratic_solver's rows
        self._quad = self.field.quadratic_solver() if t >= 2 else []

    @property
    def split(self) -> bool:
        """The C finds the roots of a locator of degree 3 or more by splitting it (profiles with tables)."""
        return self.t >= 3 and self.spec.profile != "tiny"

    @property
    def horner(self) -> bool:
        """The tiny profile's Chien search evaluates C(alpha^-p) by Horner's rule (deg C products of up to m
        shift-and-add steps a position) instead of stepping term i by i halvings (about t^2 / 2 halvings a
        position): cheaper once t exceeds about 4 m, counting a product step as two halvings."""
        return self.spec.profile == "tiny" and self.t > 4 * self.m

    # -- description -----------------------------------------------------------------------------------
    def table_bytes_for(self, profile: str) -> int:
        es = ctype_bytes(self.gf_ctype)
        gf = (self.order + (self.order + 1) + 3 * len(self._quad)) * es   # exp, log, quad rows
        word = WORD_BITS // 8 * self.reg_words
        return {"fast": 4 * len(self.step()["table"]) + gf, "small": 16 * word + gf, "tiny": word}[profile]

    @property
    def properties(self) -> Properties:
        return Properties(n=self.data_bits + self.r, k=self.data_bits, t=self.t, d=2 * self.t + 1, unit_bits=1,
                          data_bytes=self.data_bytes, parity_bytes=self.parity_bytes,
                          table_bytes=self.table_bytes_for(self.spec.profile))

    def data_lengths(self) -> range:
        if self.aligned:
            return range(1, self.data_bytes + 1)
        return range(self.data_bytes, self.data_bytes + 1)

    def parity_len(self, data_len: int) -> int:
        return self.parity_bytes

    def data_bits_for(self, data_len: int) -> int:
        return 8 * data_len if self.aligned else self.data_bits

    def error_units(self, data_len: int) -> list[int]:
        nd = self.data_bits_for(data_len)
        return list(range(nd)) + [8 * data_len + i for i in range(self.r)]

    def stack_array_bytes(self) -> int:
        """Local arrays of the generated decode chain (all counted at once, whatever the compiler inlines)."""
        es = ctype_bytes(self.gf_ctype)
        t = self.t
        decode = 4 * self.reg_words + 2 * t * es + (2 * t + 1) * es + 2 * t  # reg, synd, c, where
        locator = (2 * t + 1) * es                                           # berlekamp(): b
        if self.spec.profile == "tiny":
            roots = 0 if self.horner else t * es + 2 * t                    # term, power
        else:
            roots = t * es + 2 * 2 * t                                       # fac, off, deg
            if self.split:                                                   # slog, zlog, tr; u, v, quo;
                roots += (2 + self.m) * t * es + 3 * (t + 1) * es + (2 * t - 1) * es   # square_mod(): sq
        # the fast remainder keeps its register in an array when it is too long for scalar locals
        remainder = 4 * self.reg_words if self.spec.profile == "fast" and not self.unrolled else 0
        return decode + locator + roots + remainder

    # -- the reference -----------------------------------------------------------------------------------
    def remainder(self, data: bytes) -> int:
        """(message * x^r) mod g(x) for the data bits of `data` (byte-wise division, table from bin_mod)."""
        nd = self.data_bits_for(len(data))
        r, mask, table = self.r, self._mask, self._table8
        rem = 0
        full = nd // 8
        for byte in data[:full]:
            x = (rem << 8) ^ (byte << r)
            rem = (x & mask) ^ table[x >> r]
        tail = nd - 8 * full
        if tail:
            x = (rem << tail) ^ ((data[full] >> (8 - tail)) << r)
            rem = (x & mask) ^ table[x >> r]
        return rem

    def _parity_bytes(self, rem: int) -> bytes:
        pad = 8 * self.parity_bytes - self.r
        return (rem << pad).to_bytes(self.parity_bytes, "big")

    def encode(self, data: bytes) -> bytes:
        if len(data) not in self.data_lengths():
            raise ValueError(f"data length {len(data)} not accepted (allowed {self.data_lengths()})")
        return self._parity_bytes(self.remainder(bytes(data)))

    def _word_bits(self, data: bytes, parity: bytes) -> np.ndarray:
        """The received word's bits, index i holding the coefficient of x^(ns - 1 - i)."""
        nd = self.data_bits_for(len(data))
        dbits = np.unpackbits(np.frombuffer(bytes(data), dtype=np.uint8))[:nd]
        pbits = np.unpackbits(np.frombuffer(bytes(parity[:self.parity_bytes]), dtype=np.uint8))[:self.r]
        return np.concatenate([dbits, pbits])

    def syndromes(self, data: bytes, parity: bytes) -> list[int]:
        """S_j = R(alpha^j), j = 1 .. 2t, evaluated straight from the received word's set bits for odd j;
        S_2i = S_i^2 for a binary word."""
        bits = self._word_bits(data, parity)
        ns = bits.size
        degrees = (ns - 1 - np.flatnonzero(bits)).astype(np.int64)
        out = [0] * (2 * self.t + 1)                 # out[j] = S_j; out[0] unused
        for j in range(1, 2 * self.t + 1):
            if j % 2:
                out[j] = int(np.bitwise_xor.reduce(self._exp_np[(degrees * j) % self.order]))
            else:
                out[j] = self.field.mul(out[j // 2], out[j // 2])
        return out[1:]

    def _div(self, a: int, b: int) -> int:
        if a == 0:
            return 0
        return self._exp[(self._log[a] - self._log[b]) % self.order]

    def berlekamp_massey(self, synd: list[int]) -> tuple[list[int], int] | None:
        """Massey's shortest-LFSR synthesis over S_1 .. S_2t: (C coefficients c[0..t], L), or None when
        L > t or deg C != L (no error pattern of weight <= t fits).  Each step is a few array operations
        over the coefficients, so large t stays affordable."""
        t, mul = self.t, self.field.mul_array
        s = np.asarray(synd, dtype=np.int64)
        c = np.zeros(t + 1, dtype=np.int64)
        c[0] = 1
        prev = c.copy()
        length, shift, prev_d = 0, 1, 1
        for step in range(2 * t):
            # d = S_step+1 + sum_i c_i S_step+1-i, i = 1 .. L
            d = synd[step] ^ int(np.bitwise_xor.reduce(mul(c[1:length + 1], s[step - length:step][::-1])))
            if d == 0:
                shift += 1
                continue
            update = mul(prev[:max(0, t + 1 - shift)], self._div(d, prev_d))
            if 2 * length <= step:
                new_length = step + 1 - length
                if new_length > t:
                    return None
                copy = c.copy()
                c[shift:] ^= update
                prev, prev_d, length, shift = copy, d, new_length, 1
            else:
                c[shift:] ^= update
                shift += 1
        if c[length] == 0 or c[length + 1:].any():
            return None
        return c.tolist(), length

    def chien(self, c: list[int], length: int, ns: int) -> np.ndarray:
        """Positions p in 0 .. ns-1 with C(alpha^-p) = 0."""
        p = np.arange(ns, dtype=np.int64)
        value = np.ones(ns, dtype=np.int64)
        for i in range(1, length + 1):
            if c[i]:
                value ^= self._exp_np[(self._log[c[i]] - i * p) % self.order]
        return np.flatnonzero(value == 0)

    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        data, parity = bytes(data), bytes(parity)
        if not self.length_ok(data, parity):
            return ERR_LENGTH, data, parity
        synd = self.syndromes(data, parity)
        if not any(synd):
            return 0, data, parity
        found = self.berlekamp_massey(synd)
        if found is None:
            return ERR_UNCORRECTABLE, data, parity
        c, length = found
        nd = self.data_bits_for(len(data))
        ns = nd + self.r
        roots = self.chien(c, length, ns)
        if roots.size != length:
            return ERR_UNCORRECTABLE, data, parity
        d, p = bytearray(data), bytearray(parity)
        for pos in roots.tolist():
            if pos < self.r:
                q = self.r - 1 - pos
                p[q >> 3] ^= 0x80 >> (q & 7)
            else:
                q = ns - 1 - pos
                d[q >> 3] ^= 0x80 >> (q & 7)
        return length, bytes(d), bytes(p)

    def check(self, data: bytes, parity: bytes) -> int:
        if not self.length_ok(data, parity):
            return ERR_LENGTH
        return 0 if not any(self.syndromes(data, parity)) else 1

    # -- rendering ------------------------------------------------------------------------------------
    def _aligned_words(self, value: int) -> list[int]:
        """An r-bit remainder left-aligned in reg_words 32-bit words, most significant word first."""
        total = WORD_BITS * self.reg_words
        v = value << (total - self.r)
        return [(v >> (total - WORD_BITS * (w + 1))) & 0xFFFFFFFF for w in range(self.reg_words)]

    def step(self) -> dict:
        """The fast profile's word-wide remainder (templates/_gf.j2), built once."""
        if self._step is None:
            self._step = step_context(self.block_remainder, self.reg_words, self.unrolled, STEP_TABLE_BYTES)
        return self._step

    def block_remainder(self, u: int) -> int:
        """(u(x) * x^r) mod g(x) for a 32-bit block u of message bits, left-aligned in reg_words words: the
        image the fast profile's word-wide step tables are built from (gf.step_context)."""
        return bin_mod(u << self.r, self.generator) << (WORD_BITS * self.reg_words - self.r)

    def rem_table(self, index_bits: int) -> list[int]:
        """Row v (v < 2^index_bits) = (v(x) * x^r) mod g(x), left-aligned; rows flattened."""
        out = []
        for v in range(1 << index_bits):
            out.extend(self._aligned_words(self._table8[v]))
        return out

    def family_context(self) -> dict:
        profile = self.spec.profile
        tail = self.data_bits % 8
        pad = 8 * self.parity_bytes - self.r
        last_parity_mask = (0xFF << pad) & 0xFF
        t = self.t
        return {
            "m": self.m,
            "t": t,
            "two_t": 2 * t,
            "order": self.order,
            "k_parent": self.k_parent,
            "data_bits": self.data_bits,
            "parity_bits": self.r,
            "aligned": self.aligned,
            "tail_bits": tail,                      # data bits in the last data byte when not aligned
            "full_bytes": self.data_bits // 8,
            "data_pad_bits": (8 - tail) % 8,
            "parity_pad_bits": pad,
            "last_parity_index": self.parity_bytes - 1,
            "last_parity_mask": last_parity_mask,
            "reg_words": self.reg_words,
            "reg_bits": WORD_BITS * self.reg_words,
            "field": field_context(self.field, exp_doubled=False),
            "field_poly": self.field_poly,
            "field_poly_half": self.field_poly >> 1,            # (poly xor 1) >> 1 = alpha^-1, for halving
            "generator": self.generator,
            "gen_words": self._aligned_words(self.generator & self._mask),
            "rem_table": self.rem_table(4) if profile == "small" else [],
            "step": self.step() if profile == "fast" else None,
            "exp_table": self._exp if profile != "tiny" else [],
            "split": self.split,
            "horner": self.horner,
            "unrolled": self.unrolled,
            "words": [{"i": w, "next": w + 1, "last": w == self.reg_words - 1} for w in range(self.reg_words)],
            "main_shift": WORD_BITS - {"fast": 8, "small": 4, "tiny": 1}[profile],
            "log_table": self._log if profile != "tiny" else [],
            # the rows of the direct solution of a degree-2 locator, as three tables
            "quad_bits": [b for b, _, _ in self._quad] if profile != "tiny" else [],
            "quad_images": [i for _, i, _ in self._quad] if profile != "tiny" else [],
            "quad_pres": [p for _, _, p in self._quad] if profile != "tiny" else [],
            "table_bytes_fast": self.table_bytes_for("fast"),
            "table_bytes_small": self.table_bytes_for("small"),
            "table_bytes_tiny": self.table_bytes_for("tiny"),
            "stack_arrays": self.stack_array_bytes(),
            "gen_hex": f"0x{self.generator:X}",
            "field_poly_hex": f"0x{self.field_poly:X}",
            "tail_chunks": self.tail_chunks(profile),
        }

    def tail_chunks(self, profile: str) -> list[dict]:
        """How the C feeds the data bits of a partial last byte: (bits, shift, mask) steps, top bits first.
        value = (byte >> shift) & mask, fed `bits` at a time (at most the profile's table index width)."""
        tail = self.data_bits % 8
        width = {"fast": 8, "small": 4, "tiny": 1}[profile]
        chunks, done = [], 0
        while done < tail:
            bits = min(width, tail - done)
            done += bits
            chunks.append({"bits": bits, "shift": 8 - done, "mask": (1 << bits) - 1,
                           "reg_shift": WORD_BITS - bits})
        return chunks
