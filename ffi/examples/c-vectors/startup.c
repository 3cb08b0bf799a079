/* Minimal Cortex-M start-up: vector table, reset handler (copies .data, zeroes .bss,
   enables the FPU where there is one, runs main and exits through semihosting), and a fault
   handler that fails the run instead of hanging it. */
#include <stdint.h>

#include "semihosting.h"

extern uint32_t __sidata, __sdata, __edata, __sbss, __ebss, _stack_start;
int main(void);

void Reset_Handler(void) __attribute__((noreturn));
void Fault_Handler(void) __attribute__((noreturn));

typedef void (*Handler)(void);

struct VectorTable {
    uint32_t *initial_sp;
    Handler handlers[15];
};

__attribute__((section(".vector_table"), used)) const struct VectorTable VECTORS = {
    &_stack_start,
    {Reset_Handler, Fault_Handler, Fault_Handler, Fault_Handler, Fault_Handler,
     Fault_Handler, Fault_Handler, Fault_Handler, Fault_Handler, Fault_Handler,
     Fault_Handler, Fault_Handler, Fault_Handler, Fault_Handler, Fault_Handler},
};

void Reset_Handler(void) {
    const uint32_t *src = &__sidata;
    for (uint32_t *dst = &__sdata; dst < &__edata;) {
        *dst++ = *src++;
    }
    for (uint32_t *dst = &__sbss; dst < &__ebss;) {
        *dst++ = 0;
    }
#if defined(__ARM_FP)
    /* CPACR: full access to CP10 and CP11 before any floating-point instruction. */
    *(volatile uint32_t *)0xE000ED88u |= 0xFu << 20;
    __asm__ volatile("dsb\n\tisb" ::: "memory");
#endif
    sh_exit(main() == 0);
}

void Fault_Handler(void) {
    sh_puts("FAULT: exception taken (hard fault or unexpected interrupt)\n");
    sh_exit(false);
}
