"""GF(2^m) arithmetic and polynomial helpers shared by the BCH and Reed-Solomon models.

Field elements are ints in the polynomial (conventional) basis: bit i is the coefficient of alpha^i.
Binary polynomials (over GF(2)) are ints too: bit i is the coefficient of x^i.
Polynomials over GF(2^m) are lists of field elements, highest degree first.
"""
from __future__ import annotations

from functools import cached_property

import numpy as np

# Minimum-weight primitive polynomials, one per degree, as listed in the usual textbook tables
# (Lin & Costello, Error Control Coding, table of primitive polynomials; from memory, each one is
# checked primitive by tests/test_gf.py against galois).
DEFAULT_PRIMITIVE = {
    3: 0b1011,                # x^3 + x + 1
    4: 0b10011,               # x^4 + x + 1
    5: 0b100101,              # x^5 + x^2 + 1
    6: 0b1000011,             # x^6 + x + 1
    7: 0b10001001,            # x^7 + x^3 + 1
    8: 0x11D,                 # x^8 + x^4 + x^3 + x^2 + 1
    9: 0x211,                 # x^9 + x^4 + 1
    10: 0x409,                # x^10 + x^3 + 1
    11: 0x805,                # x^11 + x^2 + 1
    12: 0x1053,               # x^12 + x^6 + x^4 + x + 1
    13: 0x201B,               # x^13 + x^4 + x^3 + x + 1
    14: 0x4443,               # x^14 + x^10 + x^6 + x + 1
    15: 0x8003,               # x^15 + x + 1
    16: 0x1100B,              # x^16 + x^12 + x^3 + x + 1
}


def degree(p: int) -> int:
    """Degree of a binary polynomial (-1 for the zero polynomial)."""
    return p.bit_length() - 1


def is_primitive(poly: int, m: int) -> bool:
    """True when the binary polynomial `poly` of degree m is primitive: x has order 2^m - 1 modulo it."""
    if degree(poly) != m or poly & 1 == 0:
        return False
    order = (1 << m) - 1
    top = 1 << m
    x = 1
    for i in range(1, order + 1):
        x <<= 1
        if x & top:
            x ^= poly
        if x == 1:
            return i == order
    return False


def bin_mul(a: int, b: int) -> int:
    """Product of two binary polynomials."""
    out = 0
    while b:
        if b & 1:
            out ^= a
        a <<= 1
        b >>= 1
    return out


def bin_mod(a: int, g: int) -> int:
    """Remainder of binary polynomial a modulo g."""
    dg = degree(g)
    while degree(a) >= dg:
        a ^= g << (degree(a) - dg)
    return a


def cyclotomic_coset(i: int, m: int) -> list[int]:
    """The exponents {i, 2i, 4i, ...} modulo 2^m - 1, in generation order."""
    order = (1 << m) - 1
    coset, j = [], i % order
    while j not in coset:
        coset.append(j)
        j = (2 * j) % order
    return coset


class Field:
    """GF(2^m) built from a primitive polynomial, with numpy exp/log tables."""

    def __init__(self, m: int, poly: int):
        if not is_primitive(poly, m):
            raise ValueError(f"{poly:#x} is not a primitive polynomial of degree {m}")
        self.m = m
        self.poly = poly
        self.order = (1 << m) - 1          # multiplicative group order
        exp = np.zeros(2 * self.order, dtype=np.int64)
        log = np.zeros(self.order + 1, dtype=np.int64)
        x = 1
        for i in range(self.order):
            exp[i] = x
            log[x] = i
            x <<= 1
            if x >> m:
                x ^= poly
        exp[self.order:] = exp[:self.order]
        self.exp = exp                      # exp[i] = alpha^i, valid for 0 <= i < 2*order
        self.log = log                      # log[x] for x != 0; log[0] is meaningless (0)

    @cached_property
    def exp_list(self) -> list[int]:
        return self.exp[:self.order].tolist()

    @cached_property
    def log_list(self) -> list[int]:
        return self.log.tolist()

    def alpha_pow(self, i: int) -> int:
        return int(self.exp[i % self.order])

    def mul(self, a: int, b: int) -> int:
        if a == 0 or b == 0:
            return 0
        return int(self.exp[self.log[a] + self.log[b]])

    def mul_array(self, a: np.ndarray, b) -> np.ndarray:
        """Elementwise products of an int64 array of field elements with another one or with a scalar."""
        b = np.asarray(b, dtype=np.int64)
        return np.where((a == 0) | (b == 0), 0, self.exp[self.log[a] + self.log[b]])

    def div(self, a: int, b: int) -> int:
        if b == 0:
            raise ZeroDivisionError("division by zero in GF(2^m)")
        if a == 0:
            return 0
        return int(self.exp[(self.log[a] - self.log[b]) % self.order])

    def inv(self, a: int) -> int:
        return self.div(1, a)

    def poly_eval(self, coeffs: list[int], x: int) -> int:
        """Evaluate a polynomial over the field (highest degree first) at x by Horner's rule."""
        acc = 0
        for c in coeffs:
            acc = self.mul(acc, x) ^ c
        return acc

    def poly_mul(self, a: list[int], b: list[int]) -> list[int]:
        out = [0] * (len(a) + len(b) - 1)
        for i, ca in enumerate(a):
            if ca:
                for j, cb in enumerate(b):
                    out[i + j] ^= self.mul(ca, cb)
        return out

    def quadratic_solver(self) -> list[tuple[int, int, int]]:
        """A way to solve y^2 + y = c: the map L(y) = y^2 + y is linear over GF(2) (its kernel is {0, 1}),
        so Gaussian elimination on the images L(alpha^k) gives m - 1 rows (pivot bit, image, preimage),
        pivots highest first.  Reducing c by the rows in order (XOR a row's image into c when c has its
        pivot bit, and its preimage into y) leaves c = 0 exactly when c = L(y); then y and y + 1 are the
        solutions."""
        rows = []
        for k in range(self.m):
            y = 1 << k
            v = self.mul(y, y) ^ y
            for bit, image, pre in rows:
                if v & bit:
                    v ^= image
                    y ^= pre
            if v:
                bit = 1 << (v.bit_length() - 1)
                rows = [(b, i ^ v, p ^ y) if i & bit else (b, i, p) for b, i, p in rows]
                rows.append((bit, v, y))
        return sorted(rows, reverse=True)

    def minimal_polynomial(self, i: int) -> int:
        """Minimal polynomial over GF(2) of alpha^i, as a binary polynomial."""
        poly = [1]
        for j in cyclotomic_coset(i, self.m):
            poly = self.poly_mul(poly, [1, self.alpha_pow(j)])
        if any(c not in (0, 1) for c in poly):     # cannot happen for a true conjugacy class
            raise ArithmeticError("minimal polynomial has non-binary coefficients")
        return int("".join(str(c) for c in poly), 2)


STEP_BITS = 32             # data bits per step of the word-wide remainder (one 32-bit word of data)


def chunk_widths(words: int, budget: int) -> list[int]:
    """How a 32-bit step splits into table indexes, most significant chunk first: the fewest chunks (four
    bytes at best) whose tables of 2^width rows of `words` words fit `budget` bytes; widths as equal as
    can be, wider ones first."""
    for count in range(STEP_BITS // 8, STEP_BITS + 1):
        base, extra = divmod(STEP_BITS, count)
        widths = [base + 1] * extra + [base] * (count - extra)
        if sum(1 << w for w in widths) * 4 * words <= budget:
            return widths
    return [1] * STEP_BITS


def step_context(block_remainder, words: int, unrolled: bool, budget: int) -> dict:
    """What templates/_gf.j2 prints for a word-wide remainder of `words` 32-bit words, for any division
    that is linear over GF(2) (binary BCH, and Reed-Solomon over GF(2^m), alike).

    The register holds the remainder left-aligned in `words` words.  One step with a data word D (32
    message bits, the first in the top bit): register' = (register shifted up a word) xor F(top word of
    register xor D), where F(u) = block_remainder(u) is the register after the block u enters a zero
    register.  F is linear, so it is the XOR of one row per chunk of u (chunk_widths): the chunk with its
    lowest bit at `low` and value v gives the row F(v << low).  A step of fewer bits (a last byte, or the
    tail bits of a message) uses the rows of the chunks below bit 8 the same way.  Rows are stored word by
    word: plane w holds word w (most significant first) of every row, so one index serves every word.
    Only the 32 single-bit images are computed by division; every other row is an XOR of them.
    """
    unit = [block_remainder(1 << b) for b in range(STEP_BITS)]
    chunks, rows, low = [], [], STEP_BITS
    for width in chunk_widths(words, budget):
        low -= width
        chunks.append({"shift": low, "mask": (1 << width) - 1, "base": len(rows)})
        for v in range(1 << width):
            value = 0
            for b in range(width):
                if v >> b & 1:
                    value ^= unit[low + b]
            rows.append(value)
    return {
        "table": [(value >> (32 * (words - 1 - w))) & 0xFFFFFFFF for w in range(words) for value in rows],
        "widths": chunk_widths(words, budget),
        "words": words,
        "last": words - 1,
        "unrolled": unrolled,
        "plane": len(rows),
        "planes": [{"i": w, "next": w + 1, "last": w == words - 1, "offset": w * len(rows)} for w in range(words)],
        "chunks": chunks,                                   # a 32-bit step: every chunk
        "tail": [c for c in chunks if c["shift"] < 8],      # a step of up to 8 bits
        "rest": {b: STEP_BITS - b for b in range(1, 9)},
    }


def field_context(field: Field, exp_doubled: bool, zero_log: int | None = None) -> dict:
    """What templates/_gf_decode.j2 prints for the decoders' arithmetic in `field` (BCH and Reed-Solomon alike).

    Elements are the smallest uintN_t that holds m bits; `uint` is an unsigned type wide enough for a sum of
    two logs (< 2 (2^m - 1)) and for the shift-and-add product's intermediate (< 2^(m+1)): plain `unsigned`
    (at least 16 bits) up to m = 8, else uint32_t.  `exp_doubled`: the exp table runs on to 2 (2^m - 1)
    entries, so a sum of two logs needs no reduction before the look-up.  `zero_log`: log[0] holds this
    value (at least 2 (2^m - 1)) and exp is 0 from there to 2 zero_log, so products and prepared multipliers
    need no test for zero; the logs are then uint16_t.
    """
    bits = 8 if field.m <= 8 else 16
    return {
        "m": field.m,
        "order": field.order,
        "elem": f"uint{bits}_t",
        "bits": bits,
        "uint": "unsigned" if field.m <= 8 else "uint32_t",
        "top": 1 << (field.m - 1),                      # x^(m-1): the bit that overflows on doubling
        "low": field.poly ^ (1 << field.m),             # alpha^m = the field polynomial without x^m
        "exp_doubled": exp_doubled,
        "zero_log": zero_log,
        "log_bits": 16 if zero_log is not None else bits,
    }
