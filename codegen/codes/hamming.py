"""Hamming (SEC) and SECDED codes over k data bits.

Check bits: the fewest r with 2^r >= k + r + 1; SECDED adds one, r' = r + 1.  The parity-check matrix
H = [D | I]: check bit j is the XOR of the data bits whose column has a 1 in row j.  SECDED follows the
minimum odd-weight-column construction (Hsiao, 1970): data columns are distinct odd-weight columns of
weight >= 3, lightest first, the last weight class chosen to balance the rows; every single error gives an
odd syndrome equal to its column, every double error an even non-zero one.  SEC uses distinct columns of
weight >= 2, lightest first.  Columns are ints with row 0 as their most significant bit, so the packed
parity bytes, read big-endian and shifted right by the padding, are exactly the check-bit vector.

Word API (data_bits <= WORD_BITS_MAX): the data as one unsigned integer, data bit 0 its most significant
of data_bits bits (the data bytes read big-endian, padding dropped), and the check bits as one integer in
the same way.  `encode_word` / `decode_word` are defined through the byte API, so the two agree by
construction here and the tests hold the C's word functions against them.
"""
from __future__ import annotations

from itertools import combinations

import numpy as np

from ..spec import Spec
from .base import ERR_LENGTH, ERR_UNCORRECTABLE, CodeModel, Properties, ctype_bytes, ctype_for


def check_bits(k: int, secded: bool) -> int:
    """Fewest check bits: 2^r >= k + r + 1, plus the overall parity bit for SECDED."""
    r = 1
    while (1 << r) < k + r + 1:
        r += 1
    return r + 1 if secded else r


def choose_columns(rows: int, k: int, weights: list[int]) -> list[int]:
    """k distinct columns of `rows` bits, taking whole weight classes lightest first; within the class
    that is only partly needed, each pick is the column that keeps the row weights most even
    (smallest largest row weight, then smallest sum of squares, then smallest value)."""
    chosen: list[int] = []
    load = np.zeros(rows, dtype=np.int64)
    for w in weights:
        need = k - len(chosen)
        if need == 0:
            break
        cls = [sum(1 << (rows - 1 - i) for i in combo) for combo in combinations(range(rows), w)]
        bits = np.array([[c >> (rows - 1 - i) & 1 for i in range(rows)] for c in cls], dtype=np.int64)
        if len(cls) <= need:
            chosen.extend(cls)
            load += bits.sum(axis=0)
            continue
        free = np.ones(len(cls), dtype=bool)
        for _ in range(need):
            after = load + bits
            # lexsort keys: last key is primary
            order = np.lexsort((np.array(cls), (after ** 2).sum(axis=1), after.max(axis=1), ~free))
            best = int(order[0])
            free[best] = False
            chosen.append(cls[best])
            load += bits[best]
    return chosen


WORD_BITS_MAX = 64


class Hamming(CodeModel):
    template = "hamming"
    call_depth = 3                 # decode > syndrome > table lookups

    def stack_array_bytes(self) -> int:
        return self.data_bytes if self.word_api else 0      # decode_word's copy of the word as bytes

    def __init__(self, spec: Spec):
        super().__init__(spec)
        h = spec.table("hamming")
        self.k = h.data_bits
        self.secded = h.secded
        self.r = check_bits(self.k, self.secded)
        weights = list(range(3, self.r + 1, 2)) if self.secded else list(range(2, self.r + 1))
        self.columns = choose_columns(self.r, self.k, weights)           # data bit i -> column
        self.data_bytes = (self.k + 7) // 8
        self.parity_bytes = (self.r + 7) // 8
        self.col_ctype = ctype_for((1 << self.r) - 1)
        # H as a 0/1 matrix: rows x (k + r), data columns then the identity of the check bits
        cols = self.columns + [1 << (self.r - 1 - j) for j in range(self.r)]
        self.H = np.array([[c >> (self.r - 1 - i) & 1 for c in cols] for i in range(self.r)], dtype=np.uint8)

    @property
    def n(self) -> int:
        return self.k + self.r

    def _table_bytes(self) -> int:
        size = ctype_bytes(self.col_ctype)
        if self.spec.profile == "fast":
            return self.data_bytes * 256 * size + (1 << self.r) * ctype_bytes(ctype_for(self.n))
        if self.spec.profile == "small":
            return ((self.k + 3) // 4) * 16 * size
        return self.k * size

    @property
    def properties(self) -> Properties:
        return Properties(n=self.n, k=self.k, t=1, d=4 if self.secded else 3, unit_bits=1,
                          data_bytes=self.data_bytes, parity_bytes=self.parity_bytes,
                          table_bytes=self._table_bytes())

    def error_units(self, data_len: int) -> list[int]:
        return list(range(self.k)) + [8 * self.data_bytes + j for j in range(self.r)]

    # -- reference: straight from H, bit by bit ---------------------------------------------------------
    def _bits(self, data: bytes, parity: bytes) -> np.ndarray:
        d = np.unpackbits(np.frombuffer(bytes(data), dtype=np.uint8))[:self.k]
        p = np.unpackbits(np.frombuffer(bytes(parity[:self.parity_bytes]), dtype=np.uint8))[:self.r]
        return np.concatenate([d, p])

    def _syndrome(self, data: bytes, parity: bytes) -> np.ndarray:
        return (self.H.astype(np.int64) @ self._bits(data, parity)) % 2

    def encode(self, data: bytes) -> bytes:
        if len(data) != self.data_bytes:
            raise ValueError(f"data length {len(data)} != {self.data_bytes}")
        d = np.unpackbits(np.frombuffer(bytes(data), dtype=np.uint8))[:self.k]
        checks = (self.H[:, :self.k].astype(np.int64) @ d) % 2
        return np.packbits(checks.astype(np.uint8)).tobytes()

    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        data, parity = bytes(data), bytes(parity)
        if not self.length_ok(data, parity):
            return ERR_LENGTH, data, parity
        s = self._syndrome(data, parity)
        if not s.any():
            return 0, data, parity
        if self.secded and s.sum() % 2 == 0:
            return ERR_UNCORRECTABLE, data, parity          # double error detected
        match = np.flatnonzero((self.H == s[:, None]).all(axis=0))
        if match.size == 0:
            return ERR_UNCORRECTABLE, data, parity          # a syndrome no single error gives
        pos = int(match[0])
        d, p = bytearray(data), bytearray(parity)
        if pos < self.k:
            d[pos // 8] ^= 0x80 >> (pos % 8)
        else:
            j = pos - self.k
            p[j // 8] ^= 0x80 >> (j % 8)
        return 1, bytes(d), bytes(p)

    def check(self, data: bytes, parity: bytes) -> int:
        if not self.length_ok(data, parity):
            return ERR_LENGTH
        return int(self._syndrome(data, parity).any())

    # -- word API: the byte API on integers ---------------------------------------------------------------
    @property
    def word_api(self) -> bool:
        return self.k <= WORD_BITS_MAX

    def word_to_bytes(self, word: int) -> bytes:
        return ((word & ((1 << self.k) - 1)) << (8 * self.data_bytes - self.k)).to_bytes(self.data_bytes, "big")

    def bytes_to_word(self, data: bytes) -> int:
        return int.from_bytes(data, "big") >> (8 * self.data_bytes - self.k)

    def checks_to_bytes(self, checks: int) -> bytes:
        return ((checks & ((1 << self.r) - 1)) << (8 * self.parity_bytes - self.r)).to_bytes(self.parity_bytes,
                                                                                               "big")

    def bytes_to_checks(self, parity: bytes) -> int:
        return int.from_bytes(parity, "big") >> (8 * self.parity_bytes - self.r)

    def encode_word(self, word: int) -> int:
        """The check bits of a data word (bits above data_bits are ignored)."""
        return self.bytes_to_checks(self.encode(self.word_to_bytes(word)))

    def decode_word(self, word: int, checks: int) -> tuple[int, int, int]:
        """(status, word, checks) like `decode`; bits above data_bits / check_bits come back unchanged."""
        status, d, p = self.decode(self.word_to_bytes(word), self.checks_to_bytes(checks))
        if status <= 0:
            return status, word, checks
        high_w, high_c = word >> self.k << self.k, checks >> self.r << self.r
        return status, high_w | self.bytes_to_word(d), high_c | self.bytes_to_checks(p)

    # -- rendering ------------------------------------------------------------------------------------
    def family_context(self) -> dict:
        profile = self.spec.profile
        word_ctype = ctype_for((1 << self.k) - 1) if self.word_api else ""
        ctx = {
            "secded": self.secded,
            "check_bits": self.r,
            "data_bits": self.k,
            "col_ctype": self.col_ctype,
            "col_bits": ctype_bytes(self.col_ctype) * 8,
            "pad_parity": 8 * self.parity_bytes - self.r,
            "pad_data": 8 * self.data_bytes - self.k,
            "columns": self.columns,
            "row_weights": [int(x) for x in self.H[:, :self.k].sum(axis=1)],
            "byte_tables": [], "nibble_tables": [], "position_table": [], "pos_ctype": ctype_for(self.n),
            "word_api": self.word_api,
            "word_ctype": word_ctype,
            # a word is widened to this before a shift: never a (possibly 16-bit) signed int
            "word_shift": ("unsigned" if ctype_bytes(word_ctype) <= 2 else word_ctype) if self.word_api else "",
            "check_mask": (1 << self.r) - 1,
        }
        if profile == "fast":
            ctx["byte_tables"] = [self._span_table(8 * b, 8) for b in range(self.data_bytes)]
            pos = [0] * (1 << self.r)
            for i, col in enumerate(self.columns + [1 << (self.r - 1 - j) for j in range(self.r)]):
                pos[col] = i + 1
            ctx["position_table"] = pos
        elif profile == "small":
            ctx["nibble_tables"] = [self._span_table(4 * q, 4) for q in range((self.k + 3) // 4)]
        return ctx

    def _span_table(self, first_bit: int, width: int) -> list[int]:
        """Entry v: XOR of the columns of data bits first_bit.. whose bit is set in v (MSB = first_bit).
        Bits past k (padding) contribute nothing."""
        out = []
        for v in range(1 << width):
            acc = 0
            for i in range(width):
                bit = first_bit + i
                if bit < self.k and v >> (width - 1 - i) & 1:
                    acc ^= self.columns[bit]
            out.append(acc)
        return out
