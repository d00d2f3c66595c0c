/*
 * Vector table and reset handler for the Cortex-M4 of mps2-an386.
 *
 * The reset handler copies .data from code memory to data memory, zeroes
 * .bss, enables the floating-point unit (the hard-float ABI may use it
 * before main) and calls newlib's `_start`, which sets up semihosting
 * (standard input and output through the debugger, here QEMU), runs the
 * constructors and calls main; main's return value becomes the exit status
 * of the semihosted run. A fault ends the run with status 99 instead of
 * hanging. Symbols come from mps2-an386.ld.
 */
#include <stdint.h>

extern uint32_t __data_start__, __data_end__, __data_load__, __bss_start__, __bss_end__, __stack;
extern void _start(void) __attribute__((noreturn));
extern void _exit(int status) __attribute__((noreturn));

void reset_handler(void) __attribute__((noreturn));
static void fault_handler(void) __attribute__((noreturn));

#define CPACR (*(volatile uint32_t *)0xE000ED88u)

void reset_handler(void) {
    const uint32_t *from = &__data_load__;
    uint32_t *to = &__data_start__;
    while (to < &__data_end__) *to++ = *from++;
    for (to = &__bss_start__; to < &__bss_end__; to++) *to = 0;
    CPACR |= 0xFu << 20; /* full access to coprocessors 10 and 11: the FPU */
    __asm__ volatile("dsb\n\tisb" ::: "memory");
    _start();
}

static void fault_handler(void) { _exit(99); }

/* Initial stack pointer, then the exceptions of ARMv7-M (no interrupts are
 * enabled, so the device interrupts need no entries). */
__attribute__((section(".vectors"), used)) static void (*const vectors[16])(void) = {
    (void (*)(void))(&__stack), /* initial stack pointer */
    reset_handler,
    fault_handler, /* NMI */
    fault_handler, /* HardFault */
    fault_handler, /* MemManage */
    fault_handler, /* BusFault */
    fault_handler, /* UsageFault */
    0, 0, 0, 0,
    fault_handler, /* SVCall */
    fault_handler, /* DebugMonitor */
    0,
    fault_handler, /* PendSV */
    fault_handler, /* SysTick */
};
