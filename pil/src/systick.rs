//! The counting window around one call (method in the [crate] docs).

use core::hint::black_box;
use core::ptr::{read_volatile, write_volatile};

const SYST_CSR: *mut u32 = 0xE000_E010 as *mut u32;
const SYST_RVR: *mut u32 = 0xE000_E014 as *mut u32;
const SYST_CVR: *mut u32 = 0xE000_E018 as *mut u32;
/// Enabled, interrupt on reaching zero, processor clock.
const CSR_RUN_WITH_INTERRUPT: u32 = 0b111;
/// The counter's range.
pub const MASK_24: u32 = 0x00FF_FFFF;

/// A function the window can call: three word arguments.
pub type Callee = unsafe extern "C" fn(usize, usize, usize);

unsafe extern "C" {
    /// Exactly `2·n` instructions for `n ≥ 1`, then `bx lr`.
    pub fn lenz_pil_spin(n: usize, b: usize, c: usize);
    /// `bx lr` alone.
    pub fn lenz_pil_empty(a: usize, b: usize, c: usize);
}

core::arch::global_asm!(
    ".section .text.lenz_pil_spin,\"ax\",%progbits",
    ".global lenz_pil_spin",
    ".type lenz_pil_spin,%function",
    ".thumb_func",
    "lenz_pil_spin:",
    "1:  subs r0, #1",
    "    bne 1b",
    "    bx lr",
    ".section .text.lenz_pil_empty,\"ax\",%progbits",
    ".global lenz_pil_empty",
    ".type lenz_pil_empty,%function",
    ".thumb_func",
    "lenz_pil_empty:",
    "    bx lr",
);

/// Calls `f(a, b, c)` with SysTick counting down from `reload` (its interrupt enabled: the
/// limit), and returns `reload − value` after the call.
///
/// # Safety
///
/// `f` must be safe to call with `a`, `b`, `c`.
#[inline(never)]
pub unsafe fn window(f: Callee, a: usize, b: usize, c: usize, reload: u32) -> u32 {
    let f = black_box(f);
    let reload = reload.clamp(1, MASK_24);
    // SAFETY: SysTick registers are architectural on every Cortex-M; the runtime is their
    // only user.
    unsafe {
        write_volatile(SYST_CSR, 0);
        write_volatile(SYST_RVR, reload);
        write_volatile(SYST_CVR, 0);
        write_volatile(SYST_CSR, CSR_RUN_WITH_INTERRUPT);
    }
    // SAFETY: the caller's contract.
    unsafe { f(a, b, c) };
    // SAFETY: as above.
    let v = unsafe {
        let v = read_volatile(SYST_CVR);
        write_volatile(SYST_CSR, 0);
        v
    };
    reload.wrapping_sub(v) & MASK_24
}
