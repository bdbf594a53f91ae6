/* The demo's platform on the Cortex-M4F (QEMU mps2-an386): start-up code,
 * semihosting output and exit, SysTick. No operating system, no heap use
 * by deltakin; newlib supplies snprintf and the maths library. */
#include <stdint.h>
#include <string.h>
#include "platform.h"

extern int main(void);
extern uint32_t _estack, _sidata, _sdata, _edata, _sbss, _ebss;

/* Semihosting call (Arm semihosting specification: operation in r0,
 * argument in r1, BKPT 0xAB on M-profile). */
static uint32_t semihost(uint32_t op, const void *arg) {
    register uint32_t r0 __asm__("r0") = op;
    register const void *r1 __asm__("r1") = arg;
    __asm__ volatile("bkpt 0xab" : "+r"(r0) : "r"(r1) : "memory");
    return r0;
}

#define SYS_WRITE0 0x04u
#define SYS_EXIT 0x18u
#define ADP_STOPPED_APPLICATION_EXIT 0x20026u
#define ADP_STOPPED_RUNTIME_ERROR 0x20023u

void platform_write(const char *text) { semihost(SYS_WRITE0, text); }

void platform_finish(int ok) {
    semihost(SYS_EXIT, (const void *)(uintptr_t)(ok ? ADP_STOPPED_APPLICATION_EXIT : ADP_STOPPED_RUNTIME_ERROR));
    for (;;) {
    }
}

#define SYST_CSR (*(volatile uint32_t *)0xE000E010u)
#define SYST_RVR (*(volatile uint32_t *)0xE000E014u)
#define SYST_CVR (*(volatile uint32_t *)0xE000E018u)
#define CPACR (*(volatile uint32_t *)0xE000ED88u)

int platform_has_ticks(void) { return 1; }
uint32_t platform_ticks(void) { return SYST_CVR; }

void platform_spin(uint32_t n) {
    __asm__ volatile("1: subs %0, %0, #1\n\tbne 1b" : "+r"(n) : : "cc");
}

void reset_handler(void) {
    CPACR |= 0xFu << 20; /* CP10 and CP11 full access: the FPU */
    __asm__ volatile("dsb\n\tisb");
    memcpy(&_sdata, &_sidata, (size_t)((char *)&_edata - (char *)&_sdata));
    memset(&_sbss, 0, (size_t)((char *)&_ebss - (char *)&_sbss));
    SYST_RVR = 0x00FFFFFFu;
    SYST_CVR = 0;
    SYST_CSR = 5u; /* enable, core clock, no interrupt */
    platform_finish(main() == 0);
}

static void hang(void) {
    platform_write("FAIL: fault exception\n");
    platform_finish(0);
}

__attribute__((section(".vectors"), used)) static const void *const vectors[16] = {
    &_estack, (void *)reset_handler, (void *)hang, (void *)hang, (void *)hang, (void *)hang, (void *)hang,
};
