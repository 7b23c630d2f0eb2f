/*
 * libFuzzer target for one generated module (built by tests/test_fuzz_c.py with ASan and UBSan).
 * fuzz_config.h, written per module by the test, names the module (FUZZ_FN / FUZZ_MACRO), its
 * data lengths, parity length, unit width, t, and fuzz_mask: the bits of data || parity that carry
 * code bits at the full data length (padding bits excluded).
 *
 * Input: 2 bytes data_len selector, 1 byte mode, 1 byte error count, then data bytes, then 3 bytes
 * per error (24-bit position, value).  The contract checked on every input:
 *   - a data_len outside the accepted range: every function returns _ERR_LENGTH, buffers untouched;
 *   - encode returns 0 and check() accepts what encode wrote; decode of a clean word returns 0;
 *   - decode returning < 0 leaves data and parity exactly as passed in;
 *   - decode returning r >= 0 leaves a word check() accepts, and r equals the units it changed
 *     (saturating at 32767 as documented for CRC + repetition);
 *   - at the full length, errors only on code bits and at most t of them: r equals their count
 *     and the original word comes back exactly.
 * Out-of-bounds reads or writes, and undefined behaviour, are caught by the sanitizers.
 */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "fuzz_config.h"

#define CAT_(a, b) a##b
#define CAT(a, b) CAT_(a, b)
#define FN(x) CAT(FUZZ_FN, x)
#define MACRO(x) CAT(FUZZ_MACRO, x)

#define REQUIRE(cond) do { if (!(cond)) abort(); } while (0)

static size_t units_changed(const uint8_t *a, const uint8_t *b, size_t n, const uint8_t *mask)
{
    size_t count = 0;
    for (size_t i = 0; i < n; i++) {
        unsigned x = (unsigned)(a[i] ^ b[i]) & (mask ? mask[i] : 0xFFu);
        if (FUZZ_UNIT_BITS == 8) {
            count += x != 0;
        } else {
            for (; x; x >>= 1) count += x & 1u;
        }
    }
    return count;
}

static uint8_t *copy_of(const uint8_t *src, size_t n)
{
    uint8_t *p = malloc(n ? n : 1);
    REQUIRE(p != NULL);
    if (n) memcpy(p, src, n);
    return p;
}

int LLVMFuzzerTestOneInput(const uint8_t *in, size_t size)
{
    if (size < 4) return 0;
    size_t span = (size_t)FUZZ_MAX_LEN - FUZZ_MIN_LEN + 2;            /* one length past the end */
    size_t len = FUZZ_MIN_LEN + (((size_t)in[0] << 8 | in[1]) % span);
    if (FUZZ_MIN_LEN > 0 && in[0] == 0xFF && in[1] == 0xFF) len = FUZZ_MIN_LEN - 1;
    int full = (in[2] & 1) != 0;
    if (full) len = FUZZ_MAX_LEN;
    unsigned errors = in[3];
    in += 4;
    size -= 4;

    int valid = len >= FUZZ_MIN_LEN && len <= FUZZ_MAX_LEN;
    size_t plen = FUZZ_PARITY_LEN(valid ? len : FUZZ_MAX_LEN);
    uint8_t *data = malloc(len ? len : 1), *parity = calloc(plen ? plen : 1, 1);
    REQUIRE(data && parity);
    for (size_t i = 0; i < len; i++) data[i] = i < size ? in[i] : 0;
    size_t at = len < size ? len : size;

    int rc = FN(encode)(data, len, parity);
    if (!valid) {
        uint8_t *d0 = copy_of(data, len), *p0 = copy_of(parity, plen);
        REQUIRE(rc == MACRO(ERR_LENGTH));
        REQUIRE(FN(decode)(data, len, parity) == MACRO(ERR_LENGTH));
        REQUIRE(FN(check)(data, len, parity) == MACRO(ERR_LENGTH));
        REQUIRE(memcmp(d0, data, len) == 0 && memcmp(p0, parity, plen) == 0);
        free(d0); free(p0); free(data); free(parity);
        return 0;
    }
    REQUIRE(rc == 0);
    REQUIRE(FN(check)(data, len, parity) == 0);
    uint8_t *d0 = copy_of(data, len), *p0 = copy_of(parity, plen);
    REQUIRE(FN(decode)(data, len, parity) == 0);
    REQUIRE(memcmp(d0, data, len) == 0 && memcmp(p0, parity, plen) == 0);

    /* errors: XOR values at positions taken from the input */
    size_t bits = 8 * (len + plen);
    int on_code_bits = 1;
    for (unsigned k = 0; k < errors && at + 4 <= size; k++, at += 4) {
        size_t pos = ((size_t)in[at] << 16 | (size_t)in[at + 1] << 8 | in[at + 2]) % bits;
        uint8_t value = FUZZ_UNIT_BITS == 8 ? (uint8_t)(in[at + 3] ? in[at + 3] : 1)
                                            : (uint8_t)(0x80u >> (pos % 8));
        uint8_t *byte = pos / 8 < len ? &data[pos / 8] : &parity[pos / 8 - len];
        if (full && (value & ~fuzz_mask[pos / 8])) on_code_bits = 0;
        *byte ^= value;
    }
    uint8_t *d1 = copy_of(data, len), *p1 = copy_of(parity, plen);
    size_t injected = units_changed(d0, d1, len, NULL) + units_changed(p0, p1, plen, NULL);

    rc = FN(decode)(data, len, parity);
    if (rc < 0) {
        REQUIRE(rc == MACRO(ERR_UNCORRECTABLE));
        REQUIRE(memcmp(d1, data, len) == 0 && memcmp(p1, parity, plen) == 0);
    } else {
        size_t changed = units_changed(d1, data, len, NULL) + units_changed(p1, parity, plen, NULL);
        REQUIRE((size_t)rc == (changed < 32767u ? changed : 32767u));
        REQUIRE(FN(check)(data, len, parity) == 0);
    }
    if (full && on_code_bits && injected <= (size_t)MACRO(CORRECTABLE)) {
        REQUIRE((size_t)rc == injected);
        REQUIRE(memcmp(d0, data, len) == 0 && memcmp(p0, parity, plen) == 0);
    }
    free(d0); free(p0); free(d1); free(p1); free(data); free(parity);
    return 0;
}
