"""The harness itself: it must catch a broken contract, a warning, and a write outside the buffers."""
from __future__ import annotations

import pytest

from bitmend import harness

HEADER = """#ifndef EVIL_H
#define EVIL_H
#include <stddef.h>
#include <stdint.h>
#define EVIL_DATA_BYTES 4u
#define EVIL_PARITY_BYTES 1u
#define EVIL_CORRECTABLE 0
#define EVIL_ERR_UNCORRECTABLE (-1)
#define EVIL_ERR_LENGTH (-2)
int evil_encode(const uint8_t *data, size_t data_len, uint8_t *parity);
int evil_decode(uint8_t *data, size_t data_len, uint8_t *parity);
int evil_check(const uint8_t *data, size_t data_len, const uint8_t *parity);
#endif
"""
SOURCE = """#include "evil.h"
int evil_encode(const uint8_t *data, size_t data_len, uint8_t *parity)
{
    parity[0] = data[0];
    parity[%(over)s] = parity[0];    /* one byte past the parity buffer when over = 1 */
    return (int)data_len - 4;
}
int evil_decode(uint8_t *data, size_t data_len, uint8_t *parity)
{
    (void)parity;
    data[data_len] = 1;              /* always one byte past the data */
    return 0;
}
int evil_check(const uint8_t *data, size_t data_len, const uint8_t *parity)
{
    return data[data_len - 1u] != parity[0];
}
"""


def test_guard_bytes_catch_writes_outside_buffers():
    mod = harness.build("evil", {"evil.h": HEADER, "evil.c": SOURCE % {"over": 1}})
    with pytest.raises(harness.GuardError):
        mod.encode(b"abcd", 1)
    with pytest.raises(harness.GuardError):
        mod.decode(b"abcd", b"x")
    ok = harness.build("evil", {"evil.h": HEADER, "evil.c": SOURCE % {"over": 0}})
    assert ok.encode(b"abcd", 1) == (0, b"a")
    assert ok.macro("DATA_BYTES") == 4


def test_warning_is_a_build_error():
    bad = SOURCE.replace("return (int)data_len - 4;", "return data_len;")     # -Wconversion
    with pytest.raises(harness.BuildError, match="Wconversion|conversion"):
        harness.build("evil", {"evil.h": HEADER, "evil.c": bad % {"over": 0}})


@pytest.mark.parametrize("change,what", [
    ("int evil_check(const uint8_t *data, size_t data_len, const uint8_t *parity);\n", "evil_check"),
    ("int evil_decode(uint8_t *data, size_t data_len, uint8_t *parity);",
     "int evil_decode(uint8_t *data, int data_len, uint8_t *parity);"),
    ("#define EVIL_CORRECTABLE 0\n", "EVIL_CORRECTABLE"),
])
def test_header_contract_checked(change, what):
    header = HEADER.replace(change, "" if what in ("evil_check", "EVIL_CORRECTABLE") else what)
    with pytest.raises(harness.BuildError):
        harness.declarations(header, "evil")


def test_declarations_derived_from_header():
    cdef, funcs = harness.declarations(HEADER, "evil")
    assert set(funcs) == {"evil_encode", "evil_decode", "evil_check"}
    assert "#define EVIL_DATA_BYTES ..." in cdef
