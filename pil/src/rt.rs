//! Vector table and reset handler.
//!
//! The reset handler (assembly, so no Rust code runs before memory is initialised) zeroes
//! `.bss`, copies `.data` from flash, enables the FPU on Cortex-M4F and calls the image's
//! `lenz_pil_main` (defined by [`crate::image!`]). Every other exception goes to one assembly
//! stub that passes the main stack pointer (the stacked frame, with the return address) and
//! the exception number to [`crate::runtime::exception`]. The linker script is the target
//! images' (`link.x`: the initial stack pointer, then `__EXCEPTIONS`).

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
    "",
    ".section .text.lenz_pil_exception,\"ax\",%progbits",
    ".global lenz_pil_exception",
    ".type lenz_pil_exception,%function",
    ".thumb_func",
    "lenz_pil_exception:",
    "    mrs r0, msp",
    "    mrs r1, ipsr",
    "    ldr r2, ={report}",
    "    bx r2",
    ".ltorg",
    start = sym start,
    report = sym crate::runtime::exception,
);

unsafe extern "C" {
    fn Reset();
    fn lenz_pil_exception();
    fn lenz_pil_main() -> !;
}

/// Exception vectors 1 ..= 15 (vector 0, the initial stack pointer, comes from `link.x`).
#[unsafe(link_section = ".vector_table.exceptions")]
#[unsafe(no_mangle)]
pub static __EXCEPTIONS: [unsafe extern "C" fn(); 15] = [
    Reset,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
    lenz_pil_exception,
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
    // SAFETY: the image defines `lenz_pil_main` with `lenz_pil::image!`; called once, here.
    unsafe { lenz_pil_main() }
}
