"""The published CRC catalogue's parameter sets of width <= 64, by name: `[crc] preset = "CRC-16/KERMIT"`.

Source: the "Catalogue of parametrised CRC algorithms" (Greg Cook), every entry of width <= 64, as
shipped by the crccheck package (1.3.1), with the catalogue's aliases.  Each entry carries the catalogue's
check value, the CRC of the ASCII bytes "123456789"; tests/test_crc_presets.py holds every entry against
crccheck, against the entries of tests/crc_catalogue.py written from memory, and against the model and
the generated C.  Fields follow the catalogue: width, poly (normal form, without the x^width term), init,
reflect_in, reflect_out, xor_out, check.
"""
from __future__ import annotations

import difflib
from typing import NamedTuple

PARAMETERS = ("width", "poly", "init", "reflect_in", "reflect_out", "xor_out")


class Preset(NamedTuple):
    name: str
    width: int
    poly: int
    init: int
    reflect_in: bool
    reflect_out: bool
    xor_out: int
    check: int
    aliases: tuple[str, ...] = ()

    def parameters(self) -> dict:
        """The [crc] keys this preset stands for."""
        return {key: getattr(self, key) for key in PARAMETERS}


PRESETS: tuple[Preset, ...] = (
    Preset("CRC-3/GSM", 3, 0x3, 0x0, False, False, 0x7, 0x4),
    Preset("CRC-3/ROHC", 3, 0x3, 0x7, True, True, 0x0, 0x6),
    Preset("CRC-4/G-704", 4, 0x3, 0x0, True, True, 0x0, 0x7, ('CRC-4/ITU',)),
    Preset("CRC-4/INTERLAKEN", 4, 0x3, 0xF, False, False, 0xF, 0xB),
    Preset("CRC-5/EPC-C1G2", 5, 0x09, 0x09, False, False, 0x00, 0x00, ('CRC-5/EPC',)),
    Preset("CRC-5/G-704", 5, 0x15, 0x00, True, True, 0x00, 0x07, ('CRC-5/ITU',)),
    Preset("CRC-5/USB", 5, 0x05, 0x1F, True, True, 0x1F, 0x19),
    Preset("CRC-6/CDMA2000-A", 6, 0x27, 0x3F, False, False, 0x00, 0x0D),
    Preset("CRC-6/CDMA2000-B", 6, 0x07, 0x3F, False, False, 0x00, 0x3B),
    Preset("CRC-6/DARC", 6, 0x19, 0x00, True, True, 0x00, 0x26),
    Preset("CRC-6/G-704", 6, 0x03, 0x00, True, True, 0x00, 0x06, ('CRC-6/ITU',)),
    Preset("CRC-6/GSM", 6, 0x2F, 0x00, False, False, 0x3F, 0x13),
    Preset("CRC-7/MMC", 7, 0x09, 0x00, False, False, 0x00, 0x75, ('CRC-7',)),
    Preset("CRC-7/ROHC", 7, 0x4F, 0x7F, True, True, 0x00, 0x53),
    Preset("CRC-7/UMTS", 7, 0x45, 0x00, False, False, 0x00, 0x61),
    Preset("CRC-8/AUTOSAR", 8, 0x2F, 0xFF, False, False, 0xFF, 0xDF),
    Preset("CRC-8/BLUETOOTH", 8, 0xA7, 0x00, True, True, 0x00, 0x26),
    Preset("CRC-8/CDMA2000", 8, 0x9B, 0xFF, False, False, 0x00, 0xDA),
    Preset("CRC-8/DARC", 8, 0x39, 0x00, True, True, 0x00, 0x15),
    Preset("CRC-8/DVB-S2", 8, 0xD5, 0x00, False, False, 0x00, 0xBC),
    Preset("CRC-8/GSM-A", 8, 0x1D, 0x00, False, False, 0x00, 0x37),
    Preset("CRC-8/GSM-B", 8, 0x49, 0x00, False, False, 0xFF, 0x94),
    Preset("CRC-8/HITAG", 8, 0x1D, 0xFF, False, False, 0x00, 0xB4),
    Preset("CRC-8/I-432-1", 8, 0x07, 0x00, False, False, 0x55, 0xA1, ('CRC-8/ITU',)),
    Preset("CRC-8/I-CODE", 8, 0x1D, 0xFD, False, False, 0x00, 0x7E),
    Preset("CRC-8/LTE", 8, 0x9B, 0x00, False, False, 0x00, 0xEA),
    Preset("CRC-8/MAXIM-DOW", 8, 0x31, 0x00, True, True, 0x00, 0xA1, ('CRC-8/MAXIM', 'DOW-CRC')),
    Preset("CRC-8/MIFARE-MAD", 8, 0x1D, 0xC7, False, False, 0x00, 0x99),
    Preset("CRC-8/NRSC-5", 8, 0x31, 0xFF, False, False, 0x00, 0xF7),
    Preset("CRC-8/OPENSAFETY", 8, 0x2F, 0x00, False, False, 0x00, 0x3E),
    Preset("CRC-8/ROHC", 8, 0x07, 0xFF, True, True, 0x00, 0xD0),
    Preset("CRC-8/SAE-J1850", 8, 0x1D, 0xFF, False, False, 0xFF, 0x4B),
    Preset("CRC-8/SMBUS", 8, 0x07, 0x00, False, False, 0x00, 0xF4, ('CRC-8',)),
    Preset("CRC-8/TECH-3250", 8, 0x1D, 0xFF, True, True, 0x00, 0x97, ('CRC-8/AES', 'CRC-8/EBU')),
    Preset("CRC-8/WCDMA", 8, 0x9B, 0x00, True, True, 0x00, 0x25),
    Preset("CRC-10/ATM", 10, 0x233, 0x000, False, False, 0x000, 0x199, ('CRC-10', 'CRC-10/I-610')),
    Preset("CRC-10/CDMA2000", 10, 0x3D9, 0x3FF, False, False, 0x000, 0x233),
    Preset("CRC-10/GSM", 10, 0x175, 0x000, False, False, 0x3FF, 0x12A),
    Preset("CRC-11/FLEXRAY", 11, 0x385, 0x01A, False, False, 0x000, 0x5A3, ('CRC-11',)),
    Preset("CRC-11/UMTS", 11, 0x307, 0x000, False, False, 0x000, 0x061),
    Preset("CRC-12/CDMA2000", 12, 0xF13, 0xFFF, False, False, 0x000, 0xD4D),
    Preset("CRC-12/DECT", 12, 0x80F, 0x000, False, False, 0x000, 0xF5B, ('CRC-12-X',)),
    Preset("CRC-12/GSM", 12, 0xD31, 0x000, False, False, 0xFFF, 0xB34),
    Preset("CRC-12/UMTS", 12, 0x80F, 0x000, False, True, 0x000, 0xDAF, ('CRC-12/3GPP',)),
    Preset("CRC-13/BBC", 13, 0x1CF5, 0x0000, False, False, 0x0000, 0x04FA),
    Preset("CRC-14/DARC", 14, 0x0805, 0x0000, True, True, 0x0000, 0x082D),
    Preset("CRC-14/GSM", 14, 0x202D, 0x0000, False, False, 0x3FFF, 0x30AE),
    Preset("CRC-15/CAN", 15, 0x4599, 0x0000, False, False, 0x0000, 0x059E, ('CRC-15',)),
    Preset("CRC-15/MPT1327", 15, 0x6815, 0x0000, False, False, 0x0001, 0x2566),
    Preset("CRC-16/ARC", 16, 0x8005, 0x0000, True, True, 0x0000, 0xBB3D, ('ARC', 'CRC-16/LHA', 'CRC-IBM')),
    Preset("CRC-16/CDMA2000", 16, 0xC867, 0xFFFF, False, False, 0x0000, 0x4C06),
    Preset("CRC-16/CMS", 16, 0x8005, 0xFFFF, False, False, 0x0000, 0xAEE7),
    Preset("CRC-16/DDS-110", 16, 0x8005, 0x800D, False, False, 0x0000, 0x9ECF),
    Preset("CRC-16/DECT-R", 16, 0x0589, 0x0000, False, False, 0x0001, 0x007E, ('R-CRC-16',)),
    Preset("CRC-16/DECT-X", 16, 0x0589, 0x0000, False, False, 0x0000, 0x007F, ('X-CRC-16',)),
    Preset("CRC-16/DNP", 16, 0x3D65, 0x0000, True, True, 0xFFFF, 0xEA82),
    Preset("CRC-16/EN-13757", 16, 0x3D65, 0x0000, False, False, 0xFFFF, 0xC2B7),
    Preset("CRC-16/GENIBUS", 16, 0x1021, 0xFFFF, False, False, 0xFFFF, 0xD64E,
           ('CRC-16/DARC', 'CRC-16/EPC', 'CRC-16/EPC-C1G2', 'CRC-16/I-CODE')),
    Preset("CRC-16/GSM", 16, 0x1021, 0x0000, False, False, 0xFFFF, 0xCE3C),
    Preset("CRC-16/IBM-3740", 16, 0x1021, 0xFFFF, False, False, 0x0000, 0x29B1,
           ('CRC-16/AUTOSAR', 'CRC-16/CCITT-FALSE')),
    Preset("CRC-16/IBM-SDLC", 16, 0x1021, 0xFFFF, True, True, 0xFFFF, 0x906E,
           ('CRC-16/ISO-HDLC', 'CRC-16/ISO-IEC-14443-3-B', 'CRC-16/X-25', 'CRC-B', 'X-25')),
    Preset("CRC-16/ISO-IEC-14443-3-A", 16, 0x1021, 0xC6C6, True, True, 0x0000, 0xBF05, ('CRC-A',)),
    Preset("CRC-16/KERMIT", 16, 0x1021, 0x0000, True, True, 0x0000, 0x2189,
           ('CRC-16/CCITT', 'CRC-16/CCITT-TRUE', 'CRC-16/V-41-LSB', 'CRC-CCITT', 'KERMIT')),
    Preset("CRC-16/LJ1200", 16, 0x6F63, 0x0000, False, False, 0x0000, 0xBDF4),
    Preset("CRC-16/M17", 16, 0x5935, 0xFFFF, False, False, 0x0000, 0x772B),
    Preset("CRC-16/MAXIM-DOW", 16, 0x8005, 0x0000, True, True, 0xFFFF, 0x44C2, ('CRC-16/MAXIM',)),
    Preset("CRC-16/MCRF4XX", 16, 0x1021, 0xFFFF, True, True, 0x0000, 0x6F91),
    Preset("CRC-16/MODBUS", 16, 0x8005, 0xFFFF, True, True, 0x0000, 0x4B37, ('MODBUS',)),
    Preset("CRC-16/NRSC-5", 16, 0x080B, 0xFFFF, True, True, 0x0000, 0xA066),
    Preset("CRC-16/OPENSAFETY-A", 16, 0x5935, 0x0000, False, False, 0x0000, 0x5D38),
    Preset("CRC-16/OPENSAFETY-B", 16, 0x755B, 0x0000, False, False, 0x0000, 0x20FE),
    Preset("CRC-16/PROFIBUS", 16, 0x1DCF, 0xFFFF, False, False, 0xFFFF, 0xA819, ('CRC-16/IEC-61158-2',)),
    Preset("CRC-16/RIELLO", 16, 0x1021, 0xB2AA, True, True, 0x0000, 0x63D0),
    Preset("CRC-16/SPI-FUJITSU", 16, 0x1021, 0x1D0F, False, False, 0x0000, 0xE5CC, ('CRC-16/AUG-CCITT',)),
    Preset("CRC-16/T10-DIF", 16, 0x8BB7, 0x0000, False, False, 0x0000, 0xD0DB),
    Preset("CRC-16/TELEDISK", 16, 0xA097, 0x0000, False, False, 0x0000, 0x0FB3),
    Preset("CRC-16/TMS37157", 16, 0x1021, 0x89EC, True, True, 0x0000, 0x26B1),
    Preset("CRC-16/UMTS", 16, 0x8005, 0x0000, False, False, 0x0000, 0xFEE8,
           ('CRC-16/BUYPASS', 'CRC-16/VERIFONE')),
    Preset("CRC-16/USB", 16, 0x8005, 0xFFFF, True, True, 0xFFFF, 0xB4C8),
    Preset("CRC-16/XMODEM", 16, 0x1021, 0x0000, False, False, 0x0000, 0x31C3,
           ('CRC-16/ACORN', 'CRC-16/LTE', 'CRC-16/V-41-MSB', 'XMODEM', 'ZMODEM')),
    Preset("CRC-17/CAN-FD", 17, 0x1685B, 0x00000, False, False, 0x00000, 0x04F03),
    Preset("CRC-21/CAN-FD", 21, 0x102899, 0x000000, False, False, 0x000000, 0x0ED841),
    Preset("CRC-24/BLE", 24, 0x00065B, 0x555555, True, True, 0x000000, 0xC25A56),
    Preset("CRC-24/FLEXRAY-A", 24, 0x5D6DCB, 0xFEDCBA, False, False, 0x000000, 0x7979BD),
    Preset("CRC-24/FLEXRAY-B", 24, 0x5D6DCB, 0xABCDEF, False, False, 0x000000, 0x1F23B8),
    Preset("CRC-24/INTERLAKEN", 24, 0x328B63, 0xFFFFFF, False, False, 0xFFFFFF, 0xB4F3E6),
    Preset("CRC-24/LTE-A", 24, 0x864CFB, 0x000000, False, False, 0x000000, 0xCDE703),
    Preset("CRC-24/LTE-B", 24, 0x800063, 0x000000, False, False, 0x000000, 0x23EF52),
    Preset("CRC-24/OPENPGP", 24, 0x864CFB, 0xB704CE, False, False, 0x000000, 0x21CF02, ('CRC-24',)),
    Preset("CRC-24/OS-9", 24, 0x800063, 0xFFFFFF, False, False, 0xFFFFFF, 0x200FA5),
    Preset("CRC-30/CDMA", 30, 0x2030B9C7, 0x3FFFFFFF, False, False, 0x3FFFFFFF, 0x04C34ABF),
    Preset("CRC-31/PHILIPS", 31, 0x04C11DB7, 0x7FFFFFFF, False, False, 0x7FFFFFFF, 0x0CE9E46C),
    Preset("CRC-32/AIXM", 32, 0x814141AB, 0x00000000, False, False, 0x00000000, 0x3010BF7F, ('CRC-32Q',)),
    Preset("CRC-32/AUTOSAR", 32, 0xF4ACFB13, 0xFFFFFFFF, True, True, 0xFFFFFFFF, 0x1697D06A),
    Preset("CRC-32/BASE91-D", 32, 0xA833982B, 0xFFFFFFFF, True, True, 0xFFFFFFFF, 0x87315576, ('CRC-32D',)),
    Preset("CRC-32/BZIP2", 32, 0x04C11DB7, 0xFFFFFFFF, False, False, 0xFFFFFFFF, 0xFC891918,
           ('CRC-32/AAL5', 'CRC-32/DECT-B', 'B-CRC-32')),
    Preset("CRC-32/CD-ROM-EDC", 32, 0x8001801B, 0x00000000, True, True, 0x00000000, 0x6EC2EDC4),
    Preset("CRC-32/CKSUM", 32, 0x04C11DB7, 0x00000000, False, False, 0xFFFFFFFF, 0x765E7680,
           ('CKSUM', 'CRC-32/POSIX')),
    Preset("CRC-32/ISCSI", 32, 0x1EDC6F41, 0xFFFFFFFF, True, True, 0xFFFFFFFF, 0xE3069283,
           ('CRC-32/BASE91-C', 'CRC-32/CASTAGNOLI', 'CRC-32/INTERLAKEN', 'CRC-32C')),
    Preset("CRC-32/ISO-HDLC", 32, 0x04C11DB7, 0xFFFFFFFF, True, True, 0xFFFFFFFF, 0xCBF43926,
           ('CRC-32', 'CRC-32/ADCCP', 'CRC-32/V-42', 'CRC-32/XZ', 'PKZIP')),
    Preset("CRC-32/JAMCRC", 32, 0x04C11DB7, 0xFFFFFFFF, True, True, 0x00000000, 0x340BC6D9, ('JAMCRC',)),
    Preset("CRC-32/MEF", 32, 0x741B8CD7, 0xFFFFFFFF, True, True, 0x00000000, 0xD2C22F51),
    Preset("CRC-32/MPEG-2", 32, 0x04C11DB7, 0xFFFFFFFF, False, False, 0x00000000, 0x0376E6E7),
    Preset("CRC-32/XFER", 32, 0x000000AF, 0x00000000, False, False, 0x00000000, 0xBD0BE338, ('XFER',)),
    Preset("CRC-40/GSM", 40, 0x0004820009, 0x0000000000, False, False, 0xFFFFFFFFFF, 0xD4164FC646),
    Preset("CRC-64/ECMA-182", 64, 0x42F0E1EBA9EA3693, 0x0000000000000000, False, False, 0x0000000000000000,
           0x6C40DF5F0B497347, ('CRC-64',)),
    Preset("CRC-64/GO-ISO", 64, 0x000000000000001B, 0xFFFFFFFFFFFFFFFF, True, True, 0xFFFFFFFFFFFFFFFF,
           0xB90956C775A41001),
    Preset("CRC-64/MS", 64, 0x259C84CBA6426349, 0xFFFFFFFFFFFFFFFF, True, True, 0x0000000000000000,
           0x75D4B74F024ECEEA),
    Preset("CRC-64/NVME", 64, 0xAD93D23594C93659, 0xFFFFFFFFFFFFFFFF, True, True, 0xFFFFFFFFFFFFFFFF,
           0xAE8B14860A799888),
    Preset("CRC-64/REDIS", 64, 0xAD93D23594C935A9, 0x0000000000000000, True, True, 0x0000000000000000,
           0xE9C6D914C4B8D9CA),
    Preset("CRC-64/WE", 64, 0x42F0E1EBA9EA3693, 0xFFFFFFFFFFFFFFFF, False, False, 0xFFFFFFFFFFFFFFFF,
           0x62EC59E3F1A4F00A),
    Preset("CRC-64/XZ", 64, 0x42F0E1EBA9EA3693, 0xFFFFFFFFFFFFFFFF, True, True, 0xFFFFFFFFFFFFFFFF,
           0x995DC9BBDF1939FA, ('CRC-64/GO-ECMA',)),
)

_BY_NAME = {name.upper(): p for p in PRESETS for name in (p.name, *p.aliases)}


def find(name: str) -> Preset | None:
    """The preset called `name` (its catalogue name or an alias, any letter case), or None."""
    return _BY_NAME.get(name.upper())


def expand(values: dict, bad) -> dict | None:
    """The [crc] table with its preset's parameters filled in; None for an unknown or mistyped preset.

    Explicit keys may repeat a preset's value but not contradict it; each contradiction, and an unknown
    preset, is reported through `bad(table, key, message, got)`.  `preset` becomes the catalogue name.
    """
    if "preset" not in values:
        return values
    name = values["preset"]
    if not isinstance(name, str):
        bad("crc", "preset", "must be a string", name)
        return None
    preset = find(name)
    if preset is None:
        close = difflib.get_close_matches(name.upper(), _BY_NAME, n=3)
        hint = f"; close: {', '.join(close)}" if close else ""
        bad("crc", "preset", f"not a catalogue name ('bitmend list' shows them){hint}", name)
        return None
    merged = {**preset.parameters(), **values, "preset": preset.name}
    for key, want in preset.parameters().items():
        got = values.get(key, want)
        if type(got) is type(want) and got != want:
            hexed = type(want) is int and key != "width"
            shown = f"{want:#x}" if hexed else str(want).lower()
            bad("crc", key, f"contradicts preset {preset.name}, which has {key} = {shown}",
                f"{got:#x}" if hexed else got)
            merged[key] = want             # reported once here, not again as a range problem
    return merged
