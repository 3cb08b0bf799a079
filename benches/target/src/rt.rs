//! Minimal Cortex-M runtime: vector table, reset handler, fault and panic handlers.
//!
//! The reset handler (assembly, so no Rust code runs before memory is initialised) zeroes
//! `.bss`, copies `.data` from flash, then calls [`start`], which enables the FPU on Cortex-M4F
//! and calls the image's `lenz_target_main`. Every exception other than reset reports a fault
//! through semihosting and exits with a failure status, so a crash fails the run instead of
//! hanging it.

use crate::semihosting;

core::arch::global_asm!(
    ".section .text.Reset,\"ax\",%progbits",
    ".global Reset",
    ".type Reset,%function",
    ".thumb_func",
    "Reset:",
    "    ldr r0, =__sbss",
    "    ldr r1, =__ebss",
    "    movs r2, #0",
    "1:  cmp r0, r1",
    "    beq 2f",
    "    stmia r0!, {{r2}}",
    "    b 1b",
    "2:  ldr r0, =__sdata",
    "    ldr r1, =__edata",
    "    ldr r2, =__sidata",
    "3:  cmp r0, r1",
    "    beq 4f",
    "    ldmia r2!, {{r3}}",
    "    stmia r0!, {{r3}}",
    "    b 3b",
    "4:  bl {start}",
    "    b 4b",
    ".ltorg",
    start = sym start,
);

unsafe extern "C" {
    fn Reset();
}

unsafe extern "Rust" {
    /// The image's entry point (defined by each binary with `#[unsafe(no_mangle)]`).
    fn lenz_target_main() -> !;
}

/// Exception vectors 1 ..= 15 (vector 0, the initial stack pointer, comes from `link.x`).
#[unsafe(link_section = ".vector_table.exceptions")]
#[unsafe(no_mangle)]
pub static __EXCEPTIONS: [unsafe extern "C" fn(); 15] = [
    Reset, fault, fault, fault, fault, fault, fault, fault, fault, fault, fault, fault, fault,
    fault, fault,
];

/// Called by the reset handler once RAM is initialised.
extern "C" fn start() -> ! {
    #[cfg(lenz_fpu)]
    // SAFETY: CPACR is the architectural coprocessor access register; granting full access
    // to CP10/CP11 before the first floating-point instruction is what enables the FPU.
    unsafe {
        const CPACR: *mut u32 = 0xE000_ED88 as *mut u32;
        core::ptr::write_volatile(CPACR, core::ptr::read_volatile(CPACR) | (0xF << 20));
        core::arch::asm!("dsb", "isb");
    }
    // SAFETY: each binary defines `lenz_target_main`; it is called exactly once, here.
    unsafe { lenz_target_main() }
}

extern "C" fn fault() {
    semihosting::write_str("FAULT: exception taken (hard fault or unexpected interrupt)\n");
    semihosting::exit(false);
}

#[panic_handler]
fn panic(info: &core::panic::PanicInfo<'_>) -> ! {
    use core::fmt::Write;
    let _ = writeln!(semihosting::Out, "FAULT: panic: {info}");
    semihosting::exit(false)
}
