"""Cycle counts on an AVR core: the emitted C and a driver built with avr-gcc, run in simavr.

simavr is cycle-accurate.  The driver reads Timer1 (prescaler 1, so one count per CPU cycle) before and
after each measured call and counts its overflows in an interrupt; the cost of reading the clock itself
(an empty measurement) is subtracted.  Each result goes out on UART0 as one line `label cycles`.
"""
from __future__ import annotations

import re
import shutil
import subprocess
from dataclasses import replace

from common import emitted

from bitmend.codes import build

MCU = "atmega1284p"            # 128 KiB flash, 16 KiB RAM
CFLAGS = ("-std=c99", "-Os")   # what AVR firmware is built with
CLOCK = 16_000_000

PRELUDE = r"""
#include <avr/interrupt.h>
#include <avr/io.h>
#include <avr/sleep.h>
#include <stdint.h>

static volatile uint16_t bench_overflows;
ISR(TIMER1_OVF_vect) { bench_overflows++; }

/* Cycles since the timer started: Timer1 counts CPU cycles, its overflows count the upper 16 bits. */
static uint32_t bench_now(void)
{
    uint8_t sreg = SREG;
    uint16_t low, high;

    cli();
    low = TCNT1;
    high = bench_overflows;
    if ((TIFR1 & (1 << TOV1)) != 0 && low < 0x8000u) {
        high++;                        /* overflowed just now, interrupt still pending */
    }
    SREG = sreg;
    return ((uint32_t)high << 16) | low;
}

static void bench_put(char c) { while ((UCSR0A & (1 << UDRE0)) == 0) {} UDR0 = (uint8_t)c; }

static void bench_report(const char *label, uint32_t cycles)
{
    char digits[11];
    int n = 0;

    while (*label != '\0') bench_put(*label++);
    bench_put(' ');
    do { digits[n++] = (char)('0' + cycles % 10u); cycles /= 10u; } while (cycles != 0u);
    while (n > 0) bench_put(digits[--n]);
    bench_put('\n');
}

static uint32_t bench_base;
/* Runs `stmt` once and reports its cycles. */
#define BENCH(label, stmt) \
    do { uint32_t a_ = bench_now(); stmt; bench_report(label, bench_now() - a_ - bench_base); } while (0)

static void bench_start(void)
{
    uint32_t a;

    UCSR0B = 1 << TXEN0;
    TCCR1A = 0;
    TIMSK1 = 1 << TOIE1;
    TCCR1B = 1 << CS10;
    sei();
    a = bench_now();
    bench_base = bench_now() - a;
}

static void bench_stop(void) { cli(); sleep_cpu(); }
"""


def available() -> bool:
    return shutil.which("avr-gcc") is not None and shutil.which("simavr") is not None


def cycles(model, driver_c: str) -> dict[str, int] | None:
    """Run `driver_c` (PRELUDE + a main() calling BENCH) linked with the model's C in simavr, its tables
    in flash (table_space "avr-progmem", as AVR firmware keeps them); the reported cycles by label.  None
    when avr-gcc or simavr is missing."""
    if not available():
        return None
    model = build(replace(model.spec, table_space="avr-progmem"))
    with emitted(model, PRELUDE + driver_c) as (work, source, driver):
        elf = work / "bench.elf"
        subprocess.run(["avr-gcc", f"-mmcu={MCU}", *CFLAGS, "-I", str(work), str(source), str(driver),
                        "-o", str(elf)], check=True)
        res = subprocess.run(["simavr", "-m", MCU, "-f", str(CLOCK), str(elf)], capture_output=True,
                             text=True, timeout=600)
    text = re.sub(r"\x1b\[[0-9;]*m", "", res.stdout + res.stderr)
    return {m.group(1): int(m.group(2)) for m in re.finditer(r"^(\S+) (\d+)\.?$", text, flags=re.M)}
