/* Console output and exit status through semihosting (`bkpt 0xab`), as QEMU implements it
   with -semihosting-config enable=on,target=native. */
#ifndef LENZ_EXAMPLE_SEMIHOSTING_H
#define LENZ_EXAMPLE_SEMIHOSTING_H

#include <stdbool.h>
#include <stdint.h>

/* Writes a NUL-terminated string to the host console. */
void sh_puts(const char *s);
/* Writes a decimal number. */
void sh_put_i32(int32_t v);
void sh_put_u32(uint32_t v);
/* Ends the emulation: status 0 on success, 1 otherwise. */
void sh_exit(bool success) __attribute__((noreturn));

#endif
