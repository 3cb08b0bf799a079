//! Instruction counting under `qemu-system-arm -icount`.
//!
//! # Method
//!
//! With `-icount shift=N` the emulator advances its virtual clock by exactly `2^N` ns per
//! executed instruction, and the SysTick timer (clocked by the processor clock, counting down
//! from `0xFF_FFFF`) runs on that virtual clock. So a tick count read from SysTick is a fixed
//! multiple of the number of instructions executed, whatever the machine's clock frequency.
//!
//! 1. **Calibration**: [`spin`] is an assembly loop of exactly two instructions per iteration
//!    (`subs`, `bne`). Timing it for `n₁` and `n₂` iterations gives the ticks per instruction
//!    `(t₂ − t₁) / (2·(n₂ − n₁))`; the constant cost of reading the timer cancels.
//! 2. **Per kernel**: [`run`] calls the kernel `n` times through a function pointer over the
//!    bench inputs, then runs the identical loop calling an empty function of the same
//!    signature (`movs r0, #0; bx lr` or similar). The difference divided by `n` and by the
//!    ticks per instruction is the instructions per call: everything the kernel function
//!    executes, less the two instructions of the empty function.
//!
//! The image prints raw tick counts; the host (`lenz cost`) does the arithmetic.

use core::hint::black_box;
use core::ptr::{read_volatile, write_volatile};

const SYST_CSR: *mut u32 = 0xE000_E010 as *mut u32;
const SYST_RVR: *mut u32 = 0xE000_E014 as *mut u32;
const SYST_CVR: *mut u32 = 0xE000_E018 as *mut u32;
const COUNTFLAG: u32 = 1 << 16;
const MASK_24: u32 = 0x00FF_FFFF;

/// Starts SysTick from the processor clock, free running over its 24-bit range.
pub fn start_timer() {
    // SAFETY: SysTick registers are architectural on every Cortex-M; no interrupt is enabled.
    unsafe {
        write_volatile(SYST_RVR, MASK_24);
        write_volatile(SYST_CVR, 0);
        write_volatile(SYST_CSR, 0b101);
    }
}

#[inline(always)]
fn now() -> u32 {
    // SAFETY: read of the SysTick current value register.
    unsafe { read_volatile(SYST_CVR) }
}

#[inline(always)]
fn take_countflag() -> bool {
    // SAFETY: reading CSR returns and clears COUNTFLAG.
    unsafe { read_volatile(SYST_CSR) & COUNTFLAG != 0 }
}

/// Restarts the counter from the top of its range (a write to the current value register
/// clears it and `COUNTFLAG`; it reloads on the next clock).
#[inline(always)]
fn restart() {
    // SAFETY: write of the SysTick current value register.
    unsafe { write_volatile(SYST_CVR, 0) }
}

/// Ticks taken by `f`, or `None` if the 24-bit counter wrapped (window too long: more than
/// 2²⁴ ticks). Each window starts with the counter restarted, so any window shorter than the
/// counter's range is measured, wherever the previous runs left it.
#[inline(always)]
pub fn ticks(f: impl FnOnce()) -> Option<u32> {
    restart();
    let _ = take_countflag();
    let t0 = now();
    f();
    let t1 = now();
    if take_countflag() {
        return None;
    }
    Some(t0.wrapping_sub(t1) & MASK_24)
}

/// Exactly `2·n` instructions for `n ≥ 1`.
#[inline(never)]
pub fn spin(n: u32) {
    // SAFETY: a register-only countdown loop.
    unsafe {
        core::arch::asm!(
            "2:",
            "subs {0}, #1",
            "bne 2b",
            inout(reg) n => _,
            options(nomem, nostack),
        );
    }
}

/// Calls `f` `n` times, cycling through `inputs`.
///
/// `f` comes through [`black_box`], so the call is never inlined or removed, and the loop is
/// the same machine code for the kernel and its empty stand-in.
#[inline(never)]
pub fn run<C, S, X: Copy, R>(
    f: fn(&C, &mut S, X) -> R,
    cfg: &C,
    state: &mut S,
    inputs: &[X],
    n: u32,
) {
    let f = black_box(f);
    let mut k = 0usize;
    for _ in 0..n {
        let x = match inputs.get(k) {
            Some(x) => *x,
            None => {
                k = 0;
                match inputs.first() {
                    Some(x) => *x,
                    None => return,
                }
            }
        };
        k += 1;
        black_box(f(cfg, state, x));
    }
}

/// Ticks of `n` calls of `f` and of `n` calls of `empty` over the same inputs, each from the
/// state `initial`.
pub fn measure<C, S: Copy, X: Copy, R>(
    f: fn(&C, &mut S, X) -> R,
    empty: fn(&C, &mut S, X) -> R,
    cfg: &C,
    initial: S,
    inputs: &[X],
    n: u32,
) -> (Option<u32>, Option<u32>) {
    let mut s = initial;
    let t = ticks(|| run(f, cfg, &mut s, inputs, n));
    let mut s = initial;
    let e = ticks(|| run(empty, cfg, &mut s, inputs, n));
    (t, e)
}
