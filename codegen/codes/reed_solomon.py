"""Shortened Reed-Solomon codes over GF(2^8): any primitive field polynomial, first root and root step.

The code: symbols are bytes, elements of GF(2^8) in the conventional (polynomial) basis of `field_poly`;
alpha is the root x of that polynomial and beta = alpha^root_step.  The generator is

    g(x) = prod_{i=0}^{n-k-1} (x - beta^(first_root + i))

A block of data_len = 1..k bytes is the message polynomial, first byte the highest degree (shortening by
leading zero symbols, which are not sent); the parity is the n-k symbols of data(x) * x^(n-k) mod g(x),
highest degree first.  The codeword is data || parity; position j of it (0 = first data byte) holds the
coefficient of x^(N-1-j), N = data_len + n - k.

Decoding is exactly bounded-distance: with e erasures (positions the caller marks as unreliable) and s
further symbol errors it corrects whenever 2s + e <= n - k, and otherwise either corrects to the unique
codeword within that distance or reports failure.  The steps, written for clarity rather than speed:
syndromes (numpy, directly from the definition), Berlekamp-Massey started from the erasure locator,
Chien search over the N transmitted positions only (a root in a shortened-away position is a failure),
Forney with the general first root and root step.  The generated C computes the same results by other
routes (syndromes from the remainder mod g(x), a Chien search over four positions per pass that
reads the odd part off at each root); the campaigns hold the two equal.

Only symbol_bits = 8 is supported; other values are a spec error on that key.
"""
from __future__ import annotations

import math

import numpy as np

from ..gf import Field, degree, field_context, is_primitive, step_context
from ..spec import Spec, SpecError
from .base import ERR_ARG, ERR_LENGTH, ERR_UNCORRECTABLE, CodeModel, Properties

TABLE = "reed-solomon"
SYMBOL_BITS = 8
ORDER = (1 << SYMBOL_BITS) - 1          # 255: the multiplicative group order
FAST_TABLE_BYTES = 16384                 # the fast profile's tables at most; the encoder gets what the decoder leaves
CHIEN_ROWS = 16                          # fast Chien search: multiplier rows for beta^-1 .. beta^-16 at most
CHIEN_BLOCK = {"fast": 16, "small": 4}  # Chien positions per pass over the terms
LOG_OF_ZERO = 2 * 255                   # fast profile: log[0]; exp is 0 from there on, so products need no tests
UNROLL_WORDS = 8                        # up to this many encoder words live in scalar locals (registers)
ZERO_LOG = 255                          # marks a zero coefficient in log-domain tables (logs are 0..254)


class ReedSolomon(CodeModel):
    template = "reed_solomon"
    # decode > correct > forney > beta_pow > pow > mul (tiny; the other profiles are shallower)
    call_depth = 6

    def __init__(self, spec: Spec):
        super().__init__(spec)
        p = spec.table(TABLE)
        problems = []
        if p.symbol_bits != SYMBOL_BITS:
            problems.append(spec.problem(TABLE, "symbol_bits", "only 8-bit symbols are supported",
                                         p.symbol_bits))
        if p.n > ORDER:
            problems.append(spec.problem(TABLE, "n", f"must be at most 2^symbol_bits - 1 = {ORDER}", p.n))
        if p.k >= p.n:
            problems.append(spec.problem(TABLE, "k", f"must be below n = {p.n}", p.k))
        if degree(p.field_poly) != SYMBOL_BITS or not is_primitive(p.field_poly, SYMBOL_BITS):
            problems.append(spec.problem(TABLE, "field_poly", "must be a primitive polynomial of degree 8 "
                                         "(x^8 term included, e.g. 0x11d)", hex(p.field_poly)))
        if math.gcd(p.root_step, ORDER) != 1:
            problems.append(spec.problem(TABLE, "root_step", f"must be coprime with 2^symbol_bits - 1 = "
                                         f"{ORDER}, so that beta = alpha^root_step is primitive", p.root_step))
        if problems:
            raise SpecError(problems)
        self.n, self.k = p.n, p.k
        self.nroots = p.n - p.k
        self.t = self.nroots // 2
        self.field_poly = p.field_poly
        self.first_root = p.first_root % ORDER
        self.root_step = p.root_step % ORDER
        self.gf = Field(SYMBOL_BITS, p.field_poly)
        self._exp = self.gf.exp_list + self.gf.exp_list     # exp[i] = alpha^i for 0 <= i < 510
        self._log = self.gf.log_list
        self.exp_np = np.array(self._exp, dtype=np.int64)
        self.log_np = np.array(self._log, dtype=np.int64)
        # log_alpha of beta^(first_root + i), the generator's roots
        self.root_logs = [(self.root_step * (self.first_root + i)) % ORDER for i in range(self.nroots)]
        gen = [1]
        for lg in self.root_logs:
            gen = self.gf.poly_mul(gen, [1, self._exp[lg]])         # (x - r) = (x + r) in GF(2^m)
        self.generator = gen                                         # highest degree first, gen[0] = 1
        self._gen_logs = [self._log[c] if c else None for c in gen]
        # parity of a single symbol 1 at data position j of a full-length block: x^(n-1-j) mod g(x)
        self._unit_parity_log = self._unit_parity_logs()
        self._tables = None
        self._step = None

    # -- description -----------------------------------------------------------------------------------
    @property
    def properties(self) -> Properties:
        return Properties(n=self.n, k=self.k, t=self.t, d=self.nroots + 1, unit_bits=SYMBOL_BITS,
                          data_bytes=self.k, parity_bytes=self.nroots,
                          table_bytes=sum(len(v) * self.table_entry_bytes(name) for name, v in self.c_tables().items()))

    def table_entry_bytes(self, name: str) -> int:
        """Bytes of one entry of the C table `name`: the encoder's words, the fast profile's logs (up to
        LOG_OF_ZERO), bytes otherwise."""
        return 4 if name == "step" else 2 if name == "log" and self.spec.profile == "fast" else 1

    def data_lengths(self) -> range:
        return range(1, self.k + 1)

    def parity_len(self, data_len: int) -> int:
        return self.nroots

    def error_units(self, data_len: int) -> list[int]:
        return [8 * j for j in range(data_len + self.nroots)]

    # -- field helpers ---------------------------------------------------------------------------------
    def _mul(self, a: int, b: int) -> int:
        if a == 0 or b == 0:
            return 0
        return self._exp[self._log[a] + self._log[b]]

    def _inv(self, a: int) -> int:
        return self._exp[(ORDER - self._log[a]) % ORDER]

    def _beta_pow(self, e: int) -> int:
        return self._exp[(self.root_step * e) % ORDER]

    # -- reference encoder ---------------------------------------------------------------------------------
    def _unit_parity_logs(self) -> np.ndarray:
        """Row j: logs of the parity of the unit message at position j (x^(nroots + k-1-j) mod g), by long
        division; ZERO_LOG marks a zero symbol."""
        rows = np.full((self.k, self.nroots), ZERO_LOG, dtype=np.int64)
        # x^(nroots + i) mod g for i = 0..k-1, starting from x^nroots mod g
        rem = self._times_x_mod_g([0] * self.nroots, carry=1)
        for i in range(self.k):
            row = self.k - 1 - i                     # data position holding x^(nroots + i)
            rows[row] = [self._log[c] if c else ZERO_LOG for c in rem]
            rem = self._times_x_mod_g(rem)
        return rows

    def _times_x_mod_g(self, rem: list[int], carry: int | None = None) -> list[int]:
        """(rem(x) * x) mod g(x) for rem of degree < nroots, highest degree first; `carry` overrides the
        coefficient shifted out (used to start from x^nroots)."""
        top = rem[0] if carry is None else carry
        out = rem[1:] + [0]
        if top:
            out = [c ^ self._mul(top, g) for c, g in zip(out, self.generator[1:])]
        return out

    def encode(self, data: bytes) -> bytes:
        """Parity = data(x) * x^(n-k) mod g(x), as the XOR of each data symbol times its unit parity."""
        data = bytes(data)
        if len(data) not in self.data_lengths():
            raise ValueError(f"data length {len(data)} not in 1..{self.k}")
        d = np.frombuffer(data, dtype=np.uint8).astype(np.int64)
        rows = self._unit_parity_log[self.k - len(data):]
        nz = d != 0
        if not nz.any():
            return bytes(self.nroots)
        logs = self.log_np[d[nz]][:, None] + rows[nz]
        vals = np.where(rows[nz] == ZERO_LOG, 0, self.exp_np[logs % ORDER])
        return np.bitwise_xor.reduce(vals, axis=0).astype(np.uint8).tobytes()

    def long_division_parity(self, data: bytes) -> bytes:
        """The same parity by plain polynomial long division (a second route, used in the tests)."""
        rem = [0] * self.nroots
        for byte in data:
            rem = self._times_x_mod_g(rem, carry=rem[0] ^ byte) if self.nroots else rem
        return bytes(rem)

    # -- reference decoder ---------------------------------------------------------------------------------
    def syndromes(self, word: bytes) -> list[int]:
        """S_i = r(beta^(first_root + i)), i = 0..n-k-1, for the word data || parity (numpy)."""
        r = np.frombuffer(bytes(word), dtype=np.uint8).astype(np.int64)
        total = len(r)
        powers = np.arange(total - 1, -1, -1, dtype=np.int64)      # x^power held at each position
        nz = r != 0
        if not nz.any():
            return [0] * self.nroots
        roots = np.array(self.root_logs, dtype=np.int64)[:, None]
        logs = (self.log_np[r[nz]][None, :] + roots * powers[nz][None, :]) % ORDER
        return np.bitwise_xor.reduce(self.exp_np[logs], axis=1).astype(int).tolist()

    def _berlekamp_massey(self, synd: list[int], gamma: list[int], e: int) -> tuple[list[int], int]:
        """Errata locator Lambda (lowest degree first) and the error count L, starting from the erasure
        locator gamma: Berlekamp-Massey run over the syndromes S_e..S_{n-k-1}."""
        lam = list(gamma) + [0] * (self.nroots + 1 - len(gamma))
        b = list(lam)
        errors = 0
        for r in range(e, self.nroots):
            delta = 0
            for j in range(0, r + 1):
                delta ^= self._mul(lam[j], synd[r - j])
            xb = [0] + b[:-1]
            if b[-1]:
                raise AssertionError("Berlekamp-Massey register overflow")   # cannot happen (deg bound)
            if delta == 0:
                b = xb
                continue
            new = [a ^ self._mul(delta, c) for a, c in zip(lam, xb)]
            if 2 * errors <= r - e:
                inv = self._inv(delta)
                b = [self._mul(c, inv) for c in lam]
                errors = r + 1 - errors - e
            else:
                b = xb
            lam = new
        return lam, errors

    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        return self.decode_erasures(data, parity, ())

    def decode_erasures(self, data: bytes, parity: bytes, positions) -> tuple[int, bytes, bytes]:
        """Decode with erasures at `positions` (indexes into data || parity, 0 = first data byte).
        ERR_ARG (buffers as given) for a position out of range, a repeated one, or more than n - k."""
        data, parity = bytes(data), bytes(parity)
        if not self.length_ok(data, parity):
            return ERR_LENGTH, data, parity
        total = len(data) + self.nroots
        positions = list(positions)
        if len(positions) > self.nroots or len(set(positions)) != len(positions) or \
                any(not isinstance(p, int) or p < 0 or p >= total for p in positions):
            return ERR_ARG, data, parity
        word = bytearray(data + parity[:self.nroots])
        synd = self.syndromes(word)
        if not any(synd):
            return 0, data, parity
        e = len(positions)
        # erasure locator Gamma(x) = prod (1 - X x), X = beta^power; lowest degree first
        gamma = [1]
        for pos in positions:
            x = self._beta_pow(total - 1 - pos)
            gamma = [a ^ self._mul(x, b) for a, b in zip(gamma + [0], [0] + gamma)]
        lam, errors = self._berlekamp_massey(synd, gamma, e)
        deg = max(i for i, c in enumerate(lam) if c)
        if 2 * errors + e > self.nroots or deg != e + errors:
            return ERR_UNCORRECTABLE, data, parity
        # Chien search over the transmitted positions only: Lambda(X^-1) = 0, X = beta^power
        powers = np.arange(total, dtype=np.int64)
        acc = np.zeros(total, dtype=np.int64)
        for i, c in enumerate(lam[:deg + 1]):
            if c:
                lg = (self._log[c] - self.root_step * i * powers) % ORDER
                acc ^= self.exp_np[lg]
        found = np.nonzero(acc == 0)[0].tolist()              # powers that are roots
        if len(found) != deg:
            return ERR_UNCORRECTABLE, data, parity
        # Forney: Y = X^(1 - first_root) * Omega(X^-1) / Lambda'(X^-1), Omega = S * Lambda mod x^(n-k)
        omega = [0] * self.nroots
        for i in range(self.nroots):
            for j in range(min(i, deg) + 1):
                omega[i] ^= self._mul(lam[j], synd[i - j])
        deriv = [lam[i] if i % 2 == 1 else 0 for i in range(1, deg + 1)]   # Lambda', lowest degree first
        fixes = []
        for power in found:
            x_inv = self._beta_pow(-power)
            num = self._eval_low(omega, x_inv)
            den = self._eval_low(deriv, x_inv)
            value = self._mul(self._mul(self._beta_pow(power * (1 - self.first_root)), num), self._inv(den))
            if value:
                fixes.append((total - 1 - power, value))
        for pos, value in fixes:
            word[pos] ^= value
        out_data = bytes(word[:len(data)])
        out_parity = bytes(word[len(data):]) + parity[self.nroots:]
        return len(fixes), out_data, out_parity

    def _eval_low(self, coeffs: list[int], x: int) -> int:
        """Evaluate a polynomial given lowest degree first."""
        acc = 0
        for c in reversed(coeffs):
            acc = self._mul(acc, x) ^ c
        return acc

    def check(self, data: bytes, parity: bytes) -> int:
        if not self.length_ok(data, parity):
            return ERR_LENGTH
        return 0 if not any(self.syndromes(bytes(data) + bytes(parity[:self.nroots]))) else 1

    # -- rendering -------------------------------------------------------------------------------------------
    def c_tables(self) -> dict[str, list[int]]:
        """The constant tables of the generated C for the spec's profile, by C name suffix (entry sizes:
        table_entry_bytes)."""
        if self._tables is None:
            self._tables = self._build_tables()
        return self._tables

    def _build_tables(self) -> dict[str, list[int]]:
        prof = self.spec.profile
        if prof == "tiny":
            return {"gen": self.generator[1:]}
        if prof == "small":
            return {"gen_log": [ZERO_LOG if lg is None else lg for lg in self._gen_logs[1:]],
                    "exp": self._exp[:ORDER], "log": [0] + self._log[1:]}
        decoder = self._fast_decoder_tables()
        return {"step": self.step()["table"], **decoder}

    def _fast_decoder_tables(self) -> dict[str, list[int]]:
        """The fast profile's decoder tables: exp[i] = alpha^i for i < 2 * 255 and 0 from LOG_OF_ZERO on (a
        sum of two logs, or of log[0], needs neither reduction nor a test); log, with log[0] = LOG_OF_ZERO;
        chien_mul row r - 1: x * beta^-r for every x, r = 1 .. chien_rows."""
        chien = []
        for r in range(1, self.chien_rows + 1):
            lg = (-self.root_step * r) % ORDER
            chien += [0] + [self._exp[self._log[x] + lg] for x in range(1, ORDER + 1)]
        return {"exp": self._exp[:2 * ORDER] + [0] * (2 * LOG_OF_ZERO - 2 * ORDER + 1),
                "log": [LOG_OF_ZERO] + self._log[1:], "chien_mul": chien}

    @property
    def chien_rows(self) -> int:
        """Fast profile: terms of degree up to this many are stepped by a table row in the Chien search."""
        return min(self.nroots, CHIEN_ROWS)

    def step(self) -> dict:
        """The fast profile's word-wide encoder (templates/_gf.j2), built once, in the bytes the decoder's
        tables leave of FAST_TABLE_BYTES."""
        if self._step is None:
            decoder = sum(len(v) * self.table_entry_bytes(name) for name, v in self._fast_decoder_tables().items())
            self._step = step_context(self.block_remainder, self.words, self.words <= UNROLL_WORDS,
                                      FAST_TABLE_BYTES - decoder)
        return self._step

    def block_remainder(self, u: int) -> int:
        """(u(x) * x^(n-k)) mod g(x) for a block u of four symbols (the first in the top byte), left-aligned
        in words 32-bit words: the image the fast profile's word-wide step tables are built from
        (gf.step_context)."""
        rem = self.long_division_parity(u.to_bytes(4, "big"))
        return int.from_bytes(rem + bytes(4 * self.words - self.nroots), "big")

    @property
    def words(self) -> int:
        """32-bit words of the fast encoder's register."""
        return (self.nroots + 3) // 4

    def stack_array_bytes(self) -> int:
        """Local arrays on the deepest chain: correct() holds remainder, syndromes, Lambda and the
        corrections (powers, values); the largest of its callees' arrays comes on top."""
        r = self.nroots
        correct = 4 * r + (r + 1)                      # rem, synd, where, value; lam
        callees = [
            (4 if self.words <= UNROLL_WORDS else 8) * self.words if self.spec.profile == "fast" else 0,  # remainder()
            r + 1,                                                  # berlekamp(): B
            2 * r if self.spec.profile == "tiny" else r + 1,        # chien(): terms (and steps)
            r,                                                      # forney(): omega
        ]
        return correct + max(callees)

    @property
    def chien_block(self) -> int:
        """Chien positions per pass over the locator's terms (profiles with tables)."""
        return CHIEN_BLOCK.get(self.spec.profile, 0)

    def family_context(self) -> dict:
        tables = self.c_tables()
        return {
            "nroots": self.nroots,
            "erasures_max": self.nroots,
            "words": self.words,
            "call_depth": self.call_depth,
            "t": self.t,
            "field_poly": self.field_poly,
            "field": field_context(self.gf, exp_doubled=self.spec.profile == "fast",
                                   zero_log=LOG_OF_ZERO if self.spec.profile == "fast" else None),
            "chien_rows": self.chien_rows if self.spec.profile == "fast" else 0,
            "chien_block": self.chien_block,
            "first_root": self.first_root,
            "root_step": self.root_step,
            "generator": self.generator,
            "tables": tables,
            "step": self.step() if self.spec.profile == "fast" else None,
            # log_alpha of beta^-1 (the Chien step per degree), and the tiny profile's beta and beta^-1
            "beta_inv_log": (ORDER - self.root_step) % ORDER,
            "beta": self._exp[self.root_step],
            "beta_inv": self._exp[(ORDER - self.root_step) % ORDER],
            "zero_log": ZERO_LOG,
            "order": ORDER,
        }
