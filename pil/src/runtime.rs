//! The exchange loop, and the reports of the exception stub and the panic handler.

use core::sync::atomic::{AtomicU32, AtomicUsize, Ordering};

use crate::Image;
use crate::semihosting::{self, MODE_READ, MODE_WRITE};
use crate::systick::{self, MASK_24, lenz_pil_empty, lenz_pil_spin};
use crate::wire::{
    Act, Actuation, Bytes, FRAME_BYTES, Frame, Hello, InitFailed, PARAMS_MAX, Sensed, StopCause,
    Stopped, VERSION,
};

/// Calibration loop lengths (iterations of the two-instruction loop).
const N1: u32 = 1000;
const N2: u32 = 3000;
/// `InitFailed` code of the runtime itself: the parameter block is larger than it takes.
const PARAMS_TOO_LONG: u16 = u16::MAX;

/// The image-to-host FIFO's handle, for the exception and panic reports.
static OUT: AtomicUsize = AtomicUsize::new(usize::MAX);
/// The tick being run, for the reports.
static TICK: AtomicU32 = AtomicU32::new(0);

fn send(f: &Frame) {
    let h = OUT.load(Ordering::Relaxed);
    if h == usize::MAX || !semihosting::write_all(h, &f.encode()) {
        semihosting::exit(false);
    }
}

fn recv(h: usize) -> Option<Frame> {
    let mut b: Bytes = [0; FRAME_BYTES];
    if semihosting::read_exact(h, &mut b) {
        Frame::decode(&b)
    } else {
        None
    }
}

fn stop(cause: StopCause, pc: u32) -> ! {
    if OUT.load(Ordering::Relaxed) != usize::MAX {
        send(&Frame::Stopped(Stopped {
            cause,
            tick: TICK.load(Ordering::Relaxed),
            pc,
        }));
    } else {
        semihosting::console(b"lenz-pil: stopped before the exchange was open\n\0");
    }
    semihosting::exit(false)
}

/// Calls the image's tick function (the window's callee).
///
/// # Safety
///
/// `img`, `sensed` and `out` point to a live `I`, `Sensed` and `Actuation`, not aliased.
unsafe extern "C" fn trampoline<I: Image>(img: usize, sensed: usize, out: usize) {
    // SAFETY: the caller's contract.
    unsafe {
        let img = &mut *(img as *mut I);
        *(out as *mut Actuation) = img.tick(&*(sensed as *const Sensed));
    }
}

/// Runs the exchange with the harness (the sequence in [`crate::wire`]); never returns.
pub fn run<I: Image>() -> ! {
    let Some(input) = semihosting::open(b"lenz-pil-in\0", MODE_READ) else {
        semihosting::console(b"lenz-pil: cannot open lenz-pil-in (run by lenz sim --firmware)\n\0");
        semihosting::exit(false)
    };
    let Some(output) = semihosting::open(b"lenz-pil-out\0", MODE_WRITE) else {
        semihosting::console(b"lenz-pil: cannot open lenz-pil-out\n\0");
        semihosting::exit(false)
    };
    OUT.store(output, Ordering::Relaxed);
    // SAFETY: the spin loop and the empty function take register arguments only.
    let (t1, t2, empty) = unsafe {
        (
            systick::window(lenz_pil_spin, N1 as usize, 0, 0, MASK_24),
            systick::window(lenz_pil_spin, N2 as usize, 0, 0, MASK_24),
            systick::window(lenz_pil_empty, 0, 0, 0, MASK_24),
        )
    };
    send(&Frame::Hello(Hello {
        version: VERSION,
        n1: N1,
        t1,
        n2: N2,
        t2,
        empty,
        params_max: PARAMS_MAX as u32,
    }));
    let Some(Frame::Init(init)) = recv(input) else {
        semihosting::exit(false)
    };
    let len = init.params_len as usize;
    if len > PARAMS_MAX {
        send(&Frame::InitFailed(InitFailed {
            code: PARAMS_TOO_LONG,
        }));
        semihosting::exit(false);
    }
    let mut params = [0u8; PARAMS_MAX];
    let Some(block) = params.get_mut(..len) else {
        semihosting::exit(false)
    };
    if !semihosting::read_exact(input, block) {
        semihosting::exit(false);
    }
    let mut image = match I::init(block) {
        Ok(i) => i,
        Err(code) => {
            send(&Frame::InitFailed(InitFailed { code }));
            semihosting::exit(false)
        }
    };
    send(&Frame::Ready);
    let reload = init.limit_ticks;
    loop {
        match recv(input) {
            Some(Frame::Tick(sensed)) => {
                TICK.store(sensed.tick, Ordering::Relaxed);
                let mut act = Actuation::default();
                // SAFETY: the three pointers are to live locals, distinct, for the call.
                let raw = unsafe {
                    systick::window(
                        trampoline::<I>,
                        &raw mut image as usize,
                        &raw const sensed as usize,
                        &raw mut act as usize,
                        reload,
                    )
                };
                send(&Frame::Act(Act {
                    tick: sensed.tick,
                    actuation: act,
                    raw_ticks: raw,
                }));
            }
            Some(Frame::Stop) => semihosting::exit(true),
            _ => semihosting::exit(false),
        }
    }
}

/// Every exception but reset (from the stub in `rt.rs`): `sp` is the main stack pointer at
/// entry (the stacked frame: r0–r3, r12, lr, return address, xPSR), `ipsr` the exception
/// number. SysTick (15) is the instruction limit; anything else a fault.
///
/// # Safety
///
/// Called only by the exception stub, with the stack pointer at the stacked frame.
pub unsafe extern "C" fn exception(sp: *const u32, ipsr: u32) -> ! {
    let number = ipsr & 0x1FF;
    // SAFETY: the stub passes the stack pointer at exception entry, where the processor
    // pushed eight words; the return address is the seventh.
    let pc = unsafe { core::ptr::read_volatile(sp.wrapping_add(6)) };
    let cause = if number == 15 {
        StopCause::Limit
    } else {
        StopCause::Fault { exception: number }
    };
    stop(cause, pc)
}

#[cfg(feature = "panic-handler")]
#[panic_handler]
fn panic(_: &core::panic::PanicInfo<'_>) -> ! {
    stop(StopCause::Panic, 0)
}
