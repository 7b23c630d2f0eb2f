"""CRC with repetition: the frame is `copies` copies of (data || CRC).

The CRC follows the parametrised model of the published CRC catalogue: width, poly (normal form),
init, reflect_in, reflect_out, xor_out.  The CRC value is stored in ceil(width/8) bytes, its bits most
significant first, packed MSB-first and zero-padded at the end (plain big-endian when width is a multiple
of 8).  Decoding: copies >= 3 votes bitwise (a tie keeps copy 0's bit) and checks the CRC; when the voted
block fails, or copies <= 2, the first copy whose CRC passes is taken.
"""
from __future__ import annotations

import numpy as np

from ..spec import Spec
from .base import ERR_LENGTH, ERR_UNCORRECTABLE, CodeModel, Properties, ctype_bytes, ctype_for

CHECK_INPUT = b"123456789"  # the catalogue's check string: P_CRC_CHECK is the CRC of these bytes
MAX_COUNT = 32767          # corrected-bit counts saturate here: the smallest INT_MAX C allows


def reflect(value: int, width: int) -> int:
    """Reverse the low `width` bits of value."""
    out = 0
    for _ in range(width):
        out = (out << 1) | (value & 1)
        value >>= 1
    return out


class Crc:
    """One parametrised CRC: the bit-serial definition, plus the register tables the C uses."""

    def __init__(self, width: int, poly: int, init: int, reflect_in: bool, reflect_out: bool, xor_out: int):
        self.width, self.poly, self.init = width, poly, init
        self.reflect_in, self.reflect_out, self.xor_out = reflect_in, reflect_out, xor_out
        self.mask = (1 << width) - 1
        self.ctype = ctype_for(self.mask)
        self.reg_bits = ctype_bytes(self.ctype) * 8      # the C register is the whole P_crc_value_t
        self.nbytes = (width + 7) // 8

    def compute(self, data: bytes) -> int:
        """The CRC by its definition: one bit at a time, most significant register bit out first."""
        reg = self.init
        top = 1 << (self.width - 1)
        for byte in data:
            if self.reflect_in:
                byte = reflect(byte, 8)
            for i in range(7, -1, -1):
                feedback = bool(reg & top) ^ ((byte >> i) & 1)
                reg = (reg << 1) & self.mask
                if feedback:
                    reg ^= self.poly
        if self.reflect_out:
            reg = reflect(reg, self.width)
        return reg ^ self.xor_out

    def to_bytes(self, value: int) -> bytes:
        return (value << (8 * self.nbytes - self.width)).to_bytes(self.nbytes, "big")

    # -- the C register: reflected (shifts right) when reflect_in, else left-aligned in reg_bits ---------
    @property
    def shift(self) -> int:
        """How far the CRC sits above bit 0 in a left-aligned (non-reflected) register."""
        return 0 if self.reflect_in else self.reg_bits - self.width

    @property
    def reg_poly(self) -> int:
        return reflect(self.poly, self.width) if self.reflect_in else self.poly << self.shift

    @property
    def reg_init(self) -> int:
        return reflect(self.init, self.width) if self.reflect_in else self.init << self.shift

    @property
    def final_reflect(self) -> bool:
        """Whether the register's CRC must be bit-reversed on output (reflect_in != reflect_out)."""
        return self.reflect_in != self.reflect_out

    def table(self, index_bits: int) -> list[int]:
        """Register update for each index of `index_bits` bits (8: byte table, 4: nibble table)."""
        return self.tables(index_bits, 1)[0]

    def tables(self, index_bits: int, count: int) -> list[list[int]]:
        """`count` sliced tables: tables[j][v] is the register after a chunk v of `index_bits` bits enters
        a zero register and j further zero chunks follow.  A block of `count` chunks then updates the
        register as one XOR of a lookup per chunk (the division is linear in the register and the data).
        tables[0] is the one-chunk table; each next one is the previous one pushed through a zero chunk."""
        reg_mask = (1 << self.reg_bits) - 1
        top = 1 << (self.reg_bits - 1)
        rows = []
        for i in range(1 << index_bits):
            reg = i if self.reflect_in else i << (self.reg_bits - index_bits)
            for _ in range(index_bits):
                if self.reflect_in:
                    reg = (reg >> 1) ^ self.reg_poly if reg & 1 else reg >> 1
                else:
                    reg = ((reg << 1) ^ self.reg_poly if reg & top else reg << 1) & reg_mask
            rows.append(reg)
        out = [rows]
        low = (1 << index_bits) - 1
        for _ in range(1, count):
            prev = out[-1]
            if self.reflect_in:
                out.append([(x >> index_bits) ^ rows[x & low] for x in prev])
            else:
                out.append([((x << index_bits) & reg_mask) ^ rows[x >> (self.reg_bits - index_bits)]
                            for x in prev])
        return out

    @property
    def slices(self) -> int:
        """Bytes per step of the fast profile: as many as the register holds, within 4 KiB of tables."""
        reg_bytes = self.reg_bits // 8
        return max(1, min(reg_bytes, 4096 // (256 * reg_bytes)))

    def byte_shifts(self, count: int) -> list[int]:
        """Where byte j of a block of `count` bytes enters the register: bit 8j when reflected (the first
        byte lowest), else below the previous one from the top."""
        if self.reflect_in:
            return [8 * j for j in range(count)]
        return [self.reg_bits - 8 * (j + 1) for j in range(count)]

    @property
    def turned(self) -> bool:
        """Whether the tiny profile's bit loop keeps a reflected register turned (rotated right by one bit),
        so that the leaving bit sits on top: an all-ones mask is then one arithmetic shift or sign extension
        on the host (x86-64: 39 instead of 50 instructions per byte for CRC-32) and a shift-and-subtract
        on AVR (189 instead of 232 cycles).  Not for 8-bit registers (AVR pays a 16-bit rotate: 78 instead
        of 58 cycles for CRC-5/USB) nor 64-bit ones (avr-gcc shifts 64-bit values by 63 in a library loop:
        3538 instead of 723 cycles for CRC-64/XZ).  Measured with bench/bench_crc.py's drivers."""
        return self.reflect_in and 16 <= self.reg_bits <= 32

    @property
    def step_image(self) -> int:
        """What one division step of the tiny profile XORs into the register when the leaving bit is set:
        the polynomial; for a turned register the polynomial with its top bit cleared (the leaving bit,
        which sits there, drops out of the register before the turn)."""
        top = 1 << (self.reg_bits - 1)
        return self.reg_poly ^ top if self.turned else self.reg_poly


class CrcRepetition(CodeModel):
    template = "crc_repetition"
    call_depth = 5                 # decode > block_ok > pick > vote > get

    def __init__(self, spec: Spec):
        super().__init__(spec)
        c = spec.table("crc")
        self.crc = Crc(c.width, c.poly, c.init, c.reflect_in, c.reflect_out, c.xor_out)
        rep = spec.table("repetition")
        self.copies = rep.copies
        self.data_bytes = rep.data_bytes

    @property
    def correctable(self) -> int:
        """Bit errors always corrected.  With e <= ceil(copies/2) errors either every bit's vote is right,
        or all errors sit in one bit position; then every damaged copy carries exactly one flipped bit,
        which the CRC always detects (its polynomial has the x^width and x^0 terms), and a clean copy is
        left for the per-copy fallback."""
        return 0 if self.copies == 1 else (self.copies + 1) // 2

    @property
    def properties(self) -> Properties:
        block = self.data_bytes + self.crc.nbytes
        table = {"fast": 256 * self.crc.slices, "small": 32, "tiny": 0}[self.spec.profile] * ctype_bytes(self.crc.ctype)
        return Properties(n=self.copies * block * 8, k=self.data_bytes * 8, t=self.correctable,
                          d=2 * self.copies, unit_bits=1, data_bytes=self.data_bytes,
                          parity_bytes=self.parity_len(self.data_bytes), table_bytes=table)

    def data_lengths(self) -> range:
        return range(1, self.data_bytes + 1)

    def parity_len(self, data_len: int) -> int:
        return self.crc.nbytes + (self.copies - 1) * (data_len + self.crc.nbytes)

    # -- reference ------------------------------------------------------------------------------------
    def encode(self, data: bytes) -> bytes:
        if len(data) not in self.data_lengths():
            raise ValueError(f"data length {len(data)} not in 1..{self.data_bytes}")
        crc = self.crc.to_bytes(self.crc.compute(data))
        return crc + (data + crc) * (self.copies - 1)

    def _blocks(self, data: bytes, parity: bytes) -> list[bytes]:
        size = len(data) + self.crc.nbytes
        first = bytes(data) + bytes(parity[:self.crc.nbytes])
        rest = parity[self.crc.nbytes:]
        return [first] + [bytes(rest[i * size:(i + 1) * size]) for i in range(self.copies - 1)]

    def _block_ok(self, block: bytes, data_len: int) -> bool:
        return self.crc.to_bytes(self.crc.compute(block[:data_len])) == block[data_len:]

    def _vote(self, blocks: list[bytes]) -> bytes:
        """Bitwise majority over the copies; a tie (even copies) keeps copy 0's bit."""
        bits = np.unpackbits(np.frombuffer(b"".join(blocks), dtype=np.uint8).reshape(len(blocks), -1), axis=1)
        ones = 2 * bits.sum(axis=0, dtype=np.int64)
        voted = (ones > self.copies) | ((ones == self.copies) & (bits[0] == 1))
        return np.packbits(voted.astype(np.uint8)).tobytes()

    def decode(self, data: bytes, parity: bytes) -> tuple[int, bytes, bytes]:
        data, parity = bytes(data), bytes(parity)
        if not self.length_ok(data, parity):
            return ERR_LENGTH, data, parity
        n = len(data)
        blocks = self._blocks(data, parity)
        chosen = None
        if self.copies >= 3:
            voted = self._vote(blocks)
            if self._block_ok(voted, n):
                chosen = voted
        if chosen is None:
            chosen = next((b for b in blocks if self._block_ok(b, n)), None)
        if chosen is None:
            return ERR_UNCORRECTABLE, data, parity
        target = int.from_bytes(chosen, "big")
        changed = sum((int.from_bytes(b, "big") ^ target).bit_count() for b in blocks)
        used = self.parity_len(n)
        new_parity = chosen[n:] + chosen * (self.copies - 1) + parity[used:]
        return min(changed, MAX_COUNT), chosen[:n], new_parity

    def check(self, data: bytes, parity: bytes) -> int:
        if not self.length_ok(data, parity):
            return ERR_LENGTH
        blocks = self._blocks(data, parity)
        clean = self._block_ok(blocks[0], len(data)) and all(b == blocks[0] for b in blocks)
        return 0 if clean else 1

    # -- rendering ------------------------------------------------------------------------------------
    def family_context(self) -> dict:
        crc = self.crc
        profile = self.spec.profile
        # small and tiny XOR the data into the register two bytes at a time (a whole CRC-32 word would save
        # x86 another 1.5 instructions per byte in small, 1 in tiny, for about twice their loop's code)
        word = min(2, crc.reg_bits // 8)
        return {
            "crc_ctype": crc.ctype,
            "crc_check": crc.compute(CHECK_INPUT),
            "preset": self.spec.table("crc").preset,
            "reg_bits": crc.reg_bits,
            # type a register is widened to before a left shift: never a (possibly 16-bit) signed int
            "shift_type": "unsigned" if crc.reg_bits <= 16 else crc.ctype,
            "width": crc.width,
            "crc_bytes": crc.nbytes,
            "pad_bits": 8 * crc.nbytes - crc.width,
            "reflect_in": crc.reflect_in,
            "reflect_out": crc.reflect_out,
            "poly": crc.poly,
            "init": crc.init,
            "xor_out": crc.xor_out,
            "reg_poly": crc.reg_poly,
            "reg_init": crc.reg_init,
            "shift": crc.shift,
            "final_reflect": crc.final_reflect,
            "copies": self.copies,
            "max_count": MAX_COUNT,
            # fast: `slices` bytes per step, one table per byte position (sliced, crc.tables)
            "slices": crc.slices,
            "table_slices": sum(crc.tables(8, crc.slices), []) if profile == "fast" else [],
            "slice_bytes": [{"index": j, "shift": sh, "base": 256 * (crc.slices - 1 - j)}
                            for j, sh in enumerate(crc.byte_shifts(crc.slices))],
            "slice_keep": 8 * crc.slices if crc.slices < crc.reg_bits // 8 else 0,
            # small: a byte as two nibbles, the first one through table 1 (it has a nibble to go), then table 0
            "nibble_tables": crc.tables(4, 2) if profile == "small" else [],
            "word_bytes": word,
            "word_shifts": [{"index": j, "shift": sh} for j, sh in enumerate(crc.byte_shifts(word))],
            "byte_shift": crc.byte_shifts(1)[0],
            "turned": profile == "tiny" and crc.turned,
            "step_image": crc.step_image,
            "top_shift": crc.reg_bits - 1,
        }
