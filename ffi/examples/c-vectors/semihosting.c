#include "semihosting.h"

#define SYS_WRITE0 0x04
#define SYS_EXIT 0x18
#define EXIT_SUCCESS_REASON 0x20026 /* ADP_Stopped_ApplicationExit: QEMU exits with 0 */
#define EXIT_FAILURE_REASON 0x20023 /* ADP_Stopped_RunTimeErrorUnknown: QEMU exits with 1 */

static uint32_t semihost(uint32_t op, uintptr_t arg) {
    register uint32_t r0 __asm__("r0") = op;
    register uintptr_t r1 __asm__("r1") = arg;
    __asm__ volatile("bkpt 0xab" : "+r"(r0) : "r"(r1) : "memory");
    return r0;
}

void sh_puts(const char *s) {
    semihost(SYS_WRITE0, (uintptr_t)s);
}

void sh_put_u32(uint32_t v) {
    /* Digits by repeated subtraction of powers of ten: no division (Cortex-M0 has none). */
    static const uint32_t TENS[] = {1000000000u, 100000000u, 10000000u, 1000000u, 100000u,
                                    10000u, 1000u, 100u, 10u, 1u};
    char buf[11];
    uint32_t n = 0;
    bool leading = true;
    for (uint32_t i = 0; i < 10; i++) {
        char d = '0';
        while (v >= TENS[i]) {
            v -= TENS[i];
            d++;
        }
        if (d != '0' || !leading || i == 9) {
            buf[n++] = d;
            leading = false;
        }
    }
    buf[n] = 0;
    sh_puts(buf);
}

void sh_put_i32(int32_t v) {
    if (v < 0) {
        sh_puts("-");
        sh_put_u32(0u - (uint32_t)v);
    } else {
        sh_put_u32((uint32_t)v);
    }
}

void sh_exit(bool success) {
    semihost(SYS_EXIT, success ? EXIT_SUCCESS_REASON : EXIT_FAILURE_REASON);
    for (;;) {
    }
}
