/*
 * A host-side stand-in for firmware that uses the bitmend modules: it encodes, damages the stored or
 * received bytes the way a flash part or a radio link would, decodes, and prints what happened.
 * Static buffers only, as on a device.  Exit status 0 when every outcome is the expected one.
 */
#include <stdio.h>
#include <string.h>

#include "archive_block.h"
#include "beacon_telemetry.h"
#include "boot_header.h"
#include "cal_word.h"
#include "flash_page.h"
#include "mem_word.h"
#include "meter_reading.h"
#include "soil_probe.h"
#include "telemetry_downlink.h"

static int unexpected;

static void outcome(const char *what, int rc, int want, int restored)
{
    int ok = rc == want && restored;

    printf("  %-58s rc %3d  %s\n", what, rc, ok ? "as expected" : "UNEXPECTED");
    if (!ok) {
        unexpected++;
    }
}

static void flip(uint8_t *buf, unsigned bit)
{
    buf[bit / 8u] = (uint8_t)(buf[bit / 8u] ^ (0x80u >> (bit % 8u)));
}

static void fill(uint8_t *buf, size_t len, unsigned seed)
{
    size_t i;

    for (i = 0; i < len; i++) {
        seed = seed * 1103515245u + 12345u;
        buf[i] = (uint8_t)(seed >> 16);
    }
}

static int ones(const uint8_t *buf, size_t len)
{
    int n = 0;
    size_t i;
    unsigned b;

    for (i = 0; i < len; i++) {
        for (b = buf[i]; b != 0u; b &= b - 1u) {
            n++;
        }
    }
    return n;
}

/* Radio packet: a 24-byte soil reading sent three times, each copy with its CRC-16. */
static void soil_probe_demo(void)
{
    static uint8_t reading[SOIL_PROBE_DATA_BYTES], sent[SOIL_PROBE_DATA_BYTES];
    static uint8_t parity[SOIL_PROBE_PARITY_BYTES], sent_parity[SOIL_PROBE_PARITY_BYTES];
    int rc;

    puts("soil_probe: CRC-16 x 3 over a 24-byte radio reading");
    fill(sent, sizeof sent, 7u);
    soil_probe_encode(sent, sizeof sent, sent_parity);

    memcpy(reading, sent, sizeof sent);
    memcpy(parity, sent_parity, sizeof parity);
    memset(&parity[SOIL_PROBE_CRC_BYTES], 0x00, SOIL_PROBE_DATA_BYTES);          /* copy 1 destroyed */
    rc = soil_probe_decode(reading, sizeof reading, parity);
    outcome("copy 1 zeroed by a burst: every lost 1 bit restored", rc, ones(sent, SOIL_PROBE_DATA_BYTES),
            memcmp(reading, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);

    memcpy(parity, sent_parity, sizeof parity);
    flip(reading, 37u);                                                          /* same bit, copies 0 and 2 */
    flip(&parity[SOIL_PROBE_CRC_BYTES + SOIL_PROBE_DATA_BYTES + SOIL_PROBE_CRC_BYTES], 37u);
    rc = soil_probe_decode(reading, sizeof reading, parity);
    outcome("bit 37 hit in two of three copies (vote wrong, copy 1 used)", rc, 2,
            memcmp(reading, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);

    flip(reading, 3u);
    flip(&parity[SOIL_PROBE_CRC_BYTES], 3u);
    flip(&parity[SOIL_PROBE_CRC_BYTES + SOIL_PROBE_DATA_BYTES + SOIL_PROBE_CRC_BYTES], 3u);
    memcpy(sent_parity, parity, sizeof parity);                                  /* remember the damage */
    memcpy(sent, reading, sizeof sent);
    rc = soil_probe_decode(reading, sizeof reading, parity);
    outcome("bit 3 hit in every copy: uncorrectable, buffers untouched", rc, SOIL_PROBE_ERR_UNCORRECTABLE,
            memcmp(reading, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);
}

/* EEPROM: 32-bit calibration words with SECDED. */
/* The same code on a 32-bit integer, as firmware holds the word in a register: same check bits. */
static void word_api_demo(void)
{
    const cal_word_word_t gain = 0x3F9D70A4u;                       /* the same float as below */
    uint8_t checks = cal_word_encode_word(gain);
    uint8_t bytes[CAL_WORD_PARITY_BYTES];
    static const uint8_t gain_bytes[CAL_WORD_DATA_BYTES] = {0x3F, 0x9D, 0x70, 0xA4};
    cal_word_word_t word = gain ^ 0x00100000u;                      /* data bit 11 flipped */
    uint8_t read = checks;
    int rc;

    cal_word_encode(gain_bytes, sizeof gain_bytes, bytes);
    outcome("word API: check bits equal the byte API's", checks == (uint8_t)(bytes[0] >> (8u * CAL_WORD_PARITY_BYTES - CAL_WORD_PARITY_BITS)), 1, 1);
    rc = cal_word_decode_word(&word, &read);
    outcome("word API: one flipped bit corrected in the register", rc, 1, word == gain && read == checks);
}

static void cal_word_demo(void)
{
    static const uint8_t gain[CAL_WORD_DATA_BYTES] = {0x3F, 0x9D, 0x70, 0xA4};  /* a float, big-endian */
    uint8_t word[CAL_WORD_DATA_BYTES];
    uint8_t check[CAL_WORD_PARITY_BYTES], stored[CAL_WORD_PARITY_BYTES];
    int rc;

    puts("cal_word: SECDED (39,32) over EEPROM calibration words");
    cal_word_encode(gain, sizeof gain, stored);
    memcpy(word, gain, sizeof word);
    memcpy(check, stored, sizeof check);
    flip(word, 12u);
    rc = cal_word_decode(word, sizeof word, check);
    outcome("one cell flipped: corrected", rc, 1, memcmp(word, gain, sizeof word) == 0);

    flip(word, 12u);
    flip(word, 30u);
    memcpy(check, stored, sizeof check);
    rc = cal_word_decode(word, sizeof word, check);
    flip(word, 12u);
    flip(word, 30u);
    outcome("two cells flipped: detected, word left as read", rc, CAL_WORD_ERR_UNCORRECTABLE,
            memcmp(word, gain, sizeof word) == 0);
    word_api_demo();
}

/* SRAM: 64-bit words with SECDED (72,64); one bit of the check byte fails. */
static void mem_word_demo(void)
{
    uint8_t word[MEM_WORD_DATA_BYTES], sent[MEM_WORD_DATA_BYTES];
    uint8_t check[MEM_WORD_PARITY_BYTES], stored[MEM_WORD_PARITY_BYTES];
    int rc;

    puts("mem_word: SECDED (72,64) over SRAM words");
    fill(sent, sizeof sent, 99u);
    mem_word_encode(sent, sizeof sent, stored);
    memcpy(word, sent, sizeof word);
    memcpy(check, stored, sizeof check);
    flip(check, 5u);
    rc = mem_word_decode(word, sizeof word, check);
    outcome("check bit 5 flipped: corrected", rc, 1,
            memcmp(word, sent, sizeof word) == 0 && memcmp(check, stored, sizeof check) == 0);
    outcome("wrong length rejected", mem_word_decode(word, sizeof word - 1u, check), MEM_WORD_ERR_LENGTH, 1);
}

/* Boot image header: CRC-32 detection only, and the CRC streamed while the header arrives. */
static void boot_header_demo(void)
{
    static uint8_t header[BOOT_HEADER_DATA_BYTES];
    uint8_t crc[BOOT_HEADER_PARITY_BYTES];
    boot_header_crc_value_t state;
    int rc;

    puts("boot_header: CRC-32 over a 64-byte image header");
    fill(header, sizeof header, 2024u);
    boot_header_encode(header, sizeof header, crc);
    state = boot_header_crc_start();
    state = boot_header_crc_add(state, header, 10u);
    state = boot_header_crc_add(state, &header[10], sizeof header - 10u);
    outcome("streamed CRC equals one-shot CRC", boot_header_crc_finish(state) == boot_header_crc(header, sizeof header), 1, 1);
    outcome("intact header passes", boot_header_check(header, sizeof header, crc), 0, 1);
    flip(header, 300u);
    rc = boot_header_decode(header, sizeof header, crc);
    outcome("one flipped bit: detected (no correction with one copy)", rc, BOOT_HEADER_ERR_UNCORRECTABLE, 1);
    outcome("CRC of \"123456789\" is the stated check value",
            boot_header_crc((const uint8_t *)"123456789", 9u) == BOOT_HEADER_CRC_CHECK, 1, 1);
}

/* Beacon telemetry frame: a 14-byte frame (shortened) with 8 RS check bytes; fades hit bytes. */
static void beacon_telemetry_demo(void)
{
    static uint8_t sent[14], frame[14];
    static uint8_t sent_parity[BEACON_TELEMETRY_PARITY_BYTES], parity[BEACON_TELEMETRY_PARITY_BYTES];
    static const uint16_t weak[3] = {2u, 3u, 17u};       /* bytes the radio flagged as weak */
    int rc;

    puts("beacon_telemetry: RS(28,20) shortened to a 14-byte frame + 8 check bytes");
    fill(sent, sizeof sent, 3u);
    beacon_telemetry_encode(sent, sizeof sent, sent_parity);

    memcpy(frame, sent, sizeof sent);
    memcpy(parity, sent_parity, sizeof parity);
    frame[5] ^= 0xFFu;                                               /* a fade: 3 bytes in a row */
    frame[6] ^= 0x5Au;
    frame[7] ^= 0x01u;
    parity[4] ^= 0x80u;                                              /* and one check byte */
    rc = beacon_telemetry_decode(frame, sizeof frame, parity);
    outcome("4 damaged bytes (burst + check byte): all repaired", rc, 4,
            memcmp(frame, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);

    frame[2] ^= 0x11u;                                               /* 2 weak bytes wrong, 1 right */
    frame[3] ^= 0x22u;
    frame[9] ^= 0x33u;                                               /* plus 2 unflagged errors */
    frame[12] ^= 0x44u;
    rc = beacon_telemetry_decode_erasures(frame, sizeof frame, parity, weak, 3u);
    outcome("3 erasures (2 wrong) + 2 errors: 2*2 + 3 <= 8, repaired", rc, 4,
            memcmp(frame, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);

    frame[0] ^= 1u;
    frame[1] ^= 2u;
    frame[2] ^= 3u;
    frame[3] ^= 4u;
    frame[4] ^= 5u;
    memcpy(sent_parity, parity, sizeof parity);                      /* keep the damaged copy */
    memcpy(sent, frame, sizeof frame);
    rc = beacon_telemetry_decode(frame, sizeof frame, parity);
    outcome("5 damaged bytes: beyond t = 4, reported, frame untouched", rc, BEACON_TELEMETRY_ERR_UNCORRECTABLE,
            memcmp(frame, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);
}

/* Archive record: 223 bytes + 32 check bytes (CCSDS parameters, conventional basis). */
static void archive_block_demo(void)
{
    static uint8_t stored[ARCHIVE_BLOCK_DATA_BYTES], record[ARCHIVE_BLOCK_DATA_BYTES];
    static uint8_t stored_parity[ARCHIVE_BLOCK_PARITY_BYTES], parity[ARCHIVE_BLOCK_PARITY_BYTES];
    static uint16_t unreadable[ARCHIVE_BLOCK_ERASURES_MAX];
    unsigned i;
    int lost = 0;
    int rc;

    puts("archive_block: RS(255,223), CCSDS parameter set, 223-byte record");
    fill(stored, sizeof stored, 11u);
    archive_block_encode(stored, sizeof stored, stored_parity);

    memcpy(record, stored, sizeof stored);
    memcpy(parity, stored_parity, sizeof parity);
    for (i = 0; i < 16u; i++) {
        record[13u * i] ^= (uint8_t)(i + 1u);                       /* 16 scattered bad bytes */
    }
    rc = archive_block_decode(record, sizeof record, parity);
    outcome("16 bad bytes: all repaired", rc, 16, memcmp(record, stored, sizeof stored) == 0);

    for (i = 0; i < ARCHIVE_BLOCK_ERASURES_MAX; i++) {
        unreadable[i] = (uint16_t)(100u + i);                        /* a 32-byte unreadable run */
        lost += record[100u + i] != 0u;                              /* bytes the zeroing changes */
        record[100u + i] = 0u;
    }
    rc = archive_block_decode_erasures(record, sizeof record, parity, unreadable, ARCHIVE_BLOCK_ERASURES_MAX);
    outcome("32 unreadable bytes flagged as erasures: all restored", rc, lost,
            memcmp(record, stored, sizeof stored) == 0);

    unreadable[1] = unreadable[0];
    rc = archive_block_decode_erasures(record, sizeof record, parity, unreadable, 2u);
    outcome("a repeated erasure position: argument error", rc, ARCHIVE_BLOCK_ERR_ARG, 1);
}
/* Telemetry frame: 892 bytes as four interleaved RS(255,223) codewords, 128 check bytes. */
static void telemetry_downlink_demo(void)
{
    static uint8_t sent[TELEMETRY_DOWNLINK_DATA_BYTES], frame[TELEMETRY_DOWNLINK_DATA_BYTES];
    static uint8_t sent_parity[TELEMETRY_DOWNLINK_PARITY_BYTES], parity[TELEMETRY_DOWNLINK_PARITY_BYTES];
    unsigned i;
    int rc;

    puts("telemetry_downlink: 4 x RS(255,223) interleaved byte by byte, 892-byte frame");
    fill(sent, sizeof sent, 29u);
    telemetry_downlink_encode(sent, sizeof sent, sent_parity);

    memcpy(frame, sent, sizeof sent);
    memcpy(parity, sent_parity, sizeof parity);
    for (i = 0; i < 64u; i++) {
        frame[300u + i] = (uint8_t)~frame[300u + i];                /* a fade: 64 bytes in a row */
    }
    rc = telemetry_downlink_decode(frame, sizeof frame, parity);
    outcome("a 64-byte fade: 16 bad bytes per codeword, all repaired", rc, 64,
            memcmp(frame, sent, sizeof sent) == 0);

    for (i = 0; i < 17u; i++) {
        frame[4u * i] ^= 0x5Au;                                      /* 17 bad bytes in codeword 0 */
    }
    rc = telemetry_downlink_decode(frame, sizeof frame, parity);
    for (i = 0; i < 17u; i++) {
        frame[4u * i] ^= 0x5Au;                                      /* undone: equal to sent if untouched */
    }
    outcome("17 bad bytes in one codeword: reported, frame untouched", rc, TELEMETRY_DOWNLINK_ERR_UNCORRECTABLE,
            memcmp(frame, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);
}

/* NAND page: 2 KiB as four 512-byte sectors, each with 13 parity bytes in the spare area (BCH, t = 8). */
static void flash_page_demo(void)
{
    enum { SECTORS = 4, SECTOR = FLASH_PAGE_DATA_BYTES, SPARE = SECTORS * FLASH_PAGE_PARITY_BYTES };
    static uint8_t page[SECTORS * SECTOR], written[SECTORS * SECTOR];
    static uint8_t spare[SPARE], written_spare[SPARE];
    unsigned s;
    unsigned e;
    int rc;

    puts("flash_page: BCH(m = 13, t = 8) per 512-byte sector, four sectors per 2 KiB page");
    fill(written, sizeof written, 11u);
    for (s = 0; s < SECTORS; s++) {
        flash_page_encode(&written[s * SECTOR], SECTOR, &written_spare[s * FLASH_PAGE_PARITY_BYTES]);
    }
    memcpy(page, written, sizeof page);
    memcpy(spare, written_spare, sizeof spare);
    for (e = 0; e < 8u; e++) {
        flip(&page[0], 97u + 509u * e);                                   /* sector 0: 8 bit errors */
    }
    flip(&spare[2u * FLASH_PAGE_PARITY_BYTES], 5u);                       /* sector 2: one in its parity */
    for (e = 0; e < 9u; e++) {
        flip(&page[3u * SECTOR], 13u + 450u * e);                         /* sector 3: 9 bit errors */
    }
    rc = flash_page_decode(&page[0], SECTOR, &spare[0]);
    outcome("sector 0, 8 bit errors: all corrected", rc, 8, memcmp(page, written, SECTOR) == 0);
    rc = flash_page_decode(&page[SECTOR], SECTOR, &spare[FLASH_PAGE_PARITY_BYTES]);
    outcome("sector 1, clean: nothing to do", rc, 0, memcmp(&page[SECTOR], &written[SECTOR], SECTOR) == 0);
    rc = flash_page_decode(&page[2u * SECTOR], SECTOR, &spare[2u * FLASH_PAGE_PARITY_BYTES]);
    outcome("sector 2, 1 error in the spare area: corrected", rc, 1,
            memcmp(spare, written_spare, 3u * FLASH_PAGE_PARITY_BYTES) == 0);
    memcpy(written, page, sizeof page);                                    /* keep the damaged sector */
    rc = flash_page_decode(&page[3u * SECTOR], SECTOR, &spare[3u * FLASH_PAGE_PARITY_BYTES]);
    outcome("sector 3, 9 bit errors: uncorrectable, sector left as read", rc, FLASH_PAGE_ERR_UNCORRECTABLE,
            memcmp(&page[3u * SECTOR], &written[3u * SECTOR], SECTOR) == 0
            && memcmp(&spare[3u * FLASH_PAGE_PARITY_BYTES], &written_spare[3u * FLASH_PAGE_PARITY_BYTES],
                      FLASH_PAGE_PARITY_BYTES) == 0);
}

/* Water meter: a 16-byte hourly reading with 3 BCH parity bytes (m = 8, t = 3, field 0x12B). */
static void meter_reading_demo(void)
{
    static uint8_t reading[METER_READING_DATA_BYTES], sent[METER_READING_DATA_BYTES];
    static uint8_t parity[METER_READING_PARITY_BYTES], sent_parity[METER_READING_PARITY_BYTES];
    int rc;

    puts("meter_reading: BCH(m = 8, t = 3) over a 16-byte reading");
    fill(sent, sizeof sent, 5u);
    meter_reading_encode(sent, sizeof sent, sent_parity);
    memcpy(reading, sent, sizeof sent);
    memcpy(parity, sent_parity, sizeof parity);
    flip(reading, 3u);
    flip(reading, 77u);
    flip(parity, 20u);
    rc = meter_reading_decode(reading, sizeof reading, parity);
    outcome("3 bit errors (2 in the reading, 1 in parity): corrected", rc, 3,
            memcmp(reading, sent, sizeof sent) == 0 && memcmp(parity, sent_parity, sizeof parity) == 0);
    rc = meter_reading_check(reading, sizeof reading, parity);
    outcome("check after decode: a codeword", rc, 0, 1);
}

int main(void)
{
    soil_probe_demo();
    cal_word_demo();
    mem_word_demo();
    boot_header_demo();
    beacon_telemetry_demo();
    archive_block_demo();
    telemetry_downlink_demo();
    flash_page_demo();
    meter_reading_demo();
    printf("%s\n", unexpected == 0 ? "all outcomes as expected" : "SOME OUTCOMES UNEXPECTED");
    return unexpected == 0 ? 0 : 1;
}
