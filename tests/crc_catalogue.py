"""CRC parameter sets with their check values (the CRC of the ASCII bytes "123456789").

Source: Greg Cook, "Catalogue of parametrised CRC algorithms" (the published CRC catalogue); the entries
below were written from memory and each agrees with the same entry as shipped by the crccheck package
(tests/test_crc.py also walks every crccheck class, so a typo here would show up as a disagreement).
Fields: name, width, poly, init, reflect_in, reflect_out, xor_out, check.
"""
CATALOGUE = [
    ("CRC-3/ROHC", 3, 0x3, 0x7, True, True, 0x0, 0x6),
    ("CRC-4/G-704", 4, 0x3, 0x0, True, True, 0x0, 0x7),
    ("CRC-4/INTERLAKEN", 4, 0x3, 0xF, False, False, 0xF, 0xB),
    ("CRC-5/USB", 5, 0x05, 0x1F, True, True, 0x1F, 0x19),
    ("CRC-5/EPC-C1G2", 5, 0x09, 0x09, False, False, 0x00, 0x00),
    ("CRC-6/GSM", 6, 0x2F, 0x00, False, False, 0x3F, 0x13),
    ("CRC-7/MMC", 7, 0x09, 0x00, False, False, 0x00, 0x75),
    ("CRC-8/SMBUS", 8, 0x07, 0x00, False, False, 0x00, 0xF4),
    ("CRC-8/MAXIM-DOW", 8, 0x31, 0x00, True, True, 0x00, 0xA1),
    ("CRC-8/AUTOSAR", 8, 0x2F, 0xFF, False, False, 0xFF, 0xDF),
    ("CRC-8/SAE-J1850", 8, 0x1D, 0xFF, False, False, 0xFF, 0x4B),
    ("CRC-8/ROHC", 8, 0x07, 0xFF, True, True, 0x00, 0xD0),
    ("CRC-10/ATM", 10, 0x233, 0x000, False, False, 0x000, 0x199),
    ("CRC-12/UMTS", 12, 0x80F, 0x000, False, True, 0x000, 0xDAF),
    ("CRC-15/CAN", 15, 0x4599, 0x0000, False, False, 0x0000, 0x059E),
    ("CRC-16/ARC", 16, 0x8005, 0x0000, True, True, 0x0000, 0xBB3D),
    ("CRC-16/IBM-3740", 16, 0x1021, 0xFFFF, False, False, 0x0000, 0x29B1),
    ("CRC-16/XMODEM", 16, 0x1021, 0x0000, False, False, 0x0000, 0x31C3),
    ("CRC-16/KERMIT", 16, 0x1021, 0x0000, True, True, 0x0000, 0x2189),
    ("CRC-16/MODBUS", 16, 0x8005, 0xFFFF, True, True, 0x0000, 0x4B37),
    ("CRC-16/USB", 16, 0x8005, 0xFFFF, True, True, 0xFFFF, 0xB4C8),
    ("CRC-16/IBM-SDLC", 16, 0x1021, 0xFFFF, True, True, 0xFFFF, 0x906E),
    ("CRC-16/MAXIM-DOW", 16, 0x8005, 0x0000, True, True, 0xFFFF, 0x44C2),
    ("CRC-16/GENIBUS", 16, 0x1021, 0xFFFF, False, False, 0xFFFF, 0xD64E),
    ("CRC-16/DNP", 16, 0x3D65, 0x0000, True, True, 0xFFFF, 0xEA82),
    ("CRC-16/MCRF4XX", 16, 0x1021, 0xFFFF, True, True, 0x0000, 0x6F91),
    ("CRC-16/T10-DIF", 16, 0x8BB7, 0x0000, False, False, 0x0000, 0xD0DB),
    ("CRC-16/UMTS", 16, 0x8005, 0x0000, False, False, 0x0000, 0xFEE8),
    ("CRC-17/CAN-FD", 17, 0x1685B, 0x00000, False, False, 0x00000, 0x04F03),
    ("CRC-21/CAN-FD", 21, 0x102899, 0x000000, False, False, 0x000000, 0x0ED841),
    ("CRC-24/OPENPGP", 24, 0x864CFB, 0xB704CE, False, False, 0x000000, 0x21CF02),
    ("CRC-24/BLE", 24, 0x00065B, 0x555555, True, True, 0x000000, 0xC25A56),
    ("CRC-31/PHILIPS", 31, 0x04C11DB7, 0x7FFFFFFF, False, False, 0x7FFFFFFF, 0x0CE9E46C),
    ("CRC-32/ISO-HDLC", 32, 0x04C11DB7, 0xFFFFFFFF, True, True, 0xFFFFFFFF, 0xCBF43926),
    ("CRC-32/ISCSI", 32, 0x1EDC6F41, 0xFFFFFFFF, True, True, 0xFFFFFFFF, 0xE3069283),
    ("CRC-32/BZIP2", 32, 0x04C11DB7, 0xFFFFFFFF, False, False, 0xFFFFFFFF, 0xFC891918),
    ("CRC-32/MPEG-2", 32, 0x04C11DB7, 0xFFFFFFFF, False, False, 0x00000000, 0x0376E6E7),
    ("CRC-32/CKSUM", 32, 0x04C11DB7, 0x00000000, False, False, 0xFFFFFFFF, 0x765E7680),
    ("CRC-32/JAMCRC", 32, 0x04C11DB7, 0xFFFFFFFF, True, True, 0x00000000, 0x340BC6D9),
    ("CRC-32/XFER", 32, 0x000000AF, 0x00000000, False, False, 0x00000000, 0xBD0BE338),
    ("CRC-32/AIXM", 32, 0x814141AB, 0x00000000, False, False, 0x00000000, 0x3010BF7F),
    ("CRC-40/GSM", 40, 0x0004820009, 0x0000000000, False, False, 0xFFFFFFFFFF, 0xD4164FC646),
    ("CRC-64/ECMA-182", 64, 0x42F0E1EBA9EA3693, 0x0, False, False, 0x0, 0x6C40DF5F0B497347),
    ("CRC-64/XZ", 64, 0x42F0E1EBA9EA3693, 0xFFFFFFFFFFFFFFFF, True, True, 0xFFFFFFFFFFFFFFFF,
     0x995DC9BBDF1939FA),
    ("CRC-64/GO-ISO", 64, 0x1B, 0xFFFFFFFFFFFFFFFF, True, True, 0xFFFFFFFFFFFFFFFF, 0xB90956C775A41001),
]


def crccheck_entries() -> list[tuple]:
    """Every distinct parameter set of width <= 64 that crccheck ships, in the same tuple form."""
    import inspect

    import crccheck.crc as c

    seen, out = set(), []
    for name, cls in sorted(inspect.getmembers(c, inspect.isclass)):
        if not issubclass(cls, c.CrcBase) or not getattr(cls, "_width", 0) or cls._width > 64:
            continue
        if cls._check_result is None:
            continue
        key = (cls._width, cls._poly, cls._initvalue, cls._reflect_input, cls._reflect_output, cls._xor_output)
        if key in seen:
            continue
        seen.add(key)
        out.append((name, *key, cls._check_result))
    return out
