/* The demo's platform on the host: stdout and the process exit status. */
#include <stdio.h>
#include <stdlib.h>
#include "platform.h"

void platform_write(const char *text) { fputs(text, stdout); }
void platform_finish(int ok) { exit(ok ? 0 : 1); }
int platform_has_ticks(void) { return 0; }
uint32_t platform_ticks(void) { return 0; }
void platform_spin(uint32_t n) { (void)n; }
