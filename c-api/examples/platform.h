/* What the demo needs from the machine it runs on: text output, the end of
 * the run, and (on the Cortex-M4F) a tick counter. platform_host.c and
 * platform_m4f.c implement it. */
#ifndef DELTAKIN_DEMO_PLATFORM_H
#define DELTAKIN_DEMO_PLATFORM_H
#include <stdint.h>

/* Writes a NUL-terminated string. */
void platform_write(const char *text);
/* Ends the run: exit status 0 when ok is non-zero, else 1. */
void platform_finish(int ok);
/* 1 when platform_ticks() counts instructions (SysTick under QEMU -icount). */
int platform_has_ticks(void);
/* SysTick's current value (counts down), 0 on the host. */
uint32_t platform_ticks(void);
/* Runs a loop of 2 * n instructions (subs; bne), for calibration. */
void platform_spin(uint32_t n);
#endif
