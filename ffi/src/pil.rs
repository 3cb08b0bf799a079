//! A C firmware image in the loop (feature `pil`, bare-metal targets): the `lenz-pil` runtime
//! with the image's init and tick functions defined in C (`pil/images/c/lenz_pil.h`), and the
//! decoding of the parameter block `lenz sim --firmware` sends a coil driver image.
//!
//! Not part of `lenz.h` (every item is `cbindgen:ignore`): the declarations are in
//! `pil/images/c/lenz_pil.h`, and the C image in the loop checks them (its actuations are
//! compared tick for tick with the Rust driver on the host).

use lenz::drive::CoilDriverRaw;
use lenz_pil::{Actuation, Image, Sensed};

use crate::LenzStatus;
use crate::coil_driver::LenzCoilDriverRaw;
use crate::opaque::Out;

/// One tick's readings, for the C image.
/// cbindgen:ignore
#[repr(C)]
pub struct LenzPilSensed {
    /// Tick number (wraps).
    pub tick: u32,
    /// Coil current reading, counts.
    pub current_counts: u16,
    /// Supply reading, counts.
    pub supply_counts: u16,
    /// Output reading, counts.
    pub output_counts: u16,
    /// The application's demand: 0 off, 1 on.
    pub demand: u8,
}

/// The C image's answer to a tick.
/// cbindgen:ignore
#[repr(C)]
pub struct LenzPilActuation {
    /// Duty for the next tick, counts of `duty_full_scale`.
    pub duty: u16,
    /// Full scale of `duty` (the PWM's top count).
    pub duty_full_scale: u16,
    /// Estimated coil current, µA (when `has_estimate`).
    pub estimate_ua: i32,
    /// 1 when `estimate_ua` holds an estimate.
    pub has_estimate: u8,
    /// 1 when the firmware has tripped (latched off).
    pub tripped: u8,
    /// 1 for reversed bridge polarity.
    pub reverse: u8,
}

unsafe extern "C" {
    /// The C image's init: 0, or its code for a parameter block it cannot use.
    /// cbindgen:ignore
    fn lenz_pil_image_init(block: *const u8, len: u32) -> u16;
    /// The C image's tick.
    /// cbindgen:ignore
    fn lenz_pil_image_tick(sensed: *const LenzPilSensed, out: *mut LenzPilActuation);
}

/// The C image, seen by the runtime.
struct CImage;

impl Image for CImage {
    fn init(params: &[u8]) -> Result<Self, u16> {
        // SAFETY: the C image's function; the block is valid for `len` bytes during the call.
        let code = unsafe { lenz_pil_image_init(params.as_ptr(), params.len() as u32) };
        if code == 0 { Ok(CImage) } else { Err(code) }
    }

    fn tick(&mut self, s: &Sensed) -> Actuation {
        let sensed = LenzPilSensed {
            tick: s.tick,
            current_counts: s.current_counts,
            supply_counts: s.supply_counts,
            output_counts: s.output_counts,
            demand: u8::from(s.demand),
        };
        let mut a = LenzPilActuation {
            duty: 0,
            duty_full_scale: 0,
            estimate_ua: 0,
            has_estimate: 0,
            tripped: 0,
            reverse: 0,
        };
        // SAFETY: the C image's function, with pointers to two live locals.
        unsafe { lenz_pil_image_tick(&sensed, &mut a) };
        Actuation {
            duty: a.duty,
            duty_full_scale: a.duty_full_scale,
            estimate_ua: (a.has_estimate != 0).then_some(a.estimate_ua),
            tripped: a.tripped != 0,
            reverse: a.reverse != 0,
        }
    }
}

lenz_pil::image!(CImage);

/// Decodes the parameter block `lenz sim --firmware` sends a coil driver image (the raw
/// configuration in postcard's encoding) into `raw_out`; `ok_out` = 1, or 0 for a block that
/// does not decode (then `raw_out` is not written).
///
/// # Safety
///
/// Each pointer is null or valid: `block` readable for `len` bytes, `raw_out` and `ok_out`
/// writable.
/// cbindgen:ignore
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_pil_coil_driver_raw(
    block: *const u8,
    len: u32,
    raw_out: *mut LenzCoilDriverRaw,
    ok_out: *mut u8,
) -> LenzStatus {
    LenzStatus::of((|| {
        if block.is_null() {
            return Err(LenzStatus::NullPointer);
        }
        // SAFETY: `raw_out` and `ok_out` are writable by the contract above.
        let (out, ok) = unsafe { (Out::new(raw_out)?, Out::new(ok_out)?) };
        // SAFETY: non-null, and readable for `len` bytes by the contract above (bytes need no
        // alignment).
        let bytes = unsafe { core::slice::from_raw_parts(block, len as usize) };
        match postcard::from_bytes::<CoilDriverRaw>(bytes) {
            Ok(raw) => {
                out.set(raw.into());
                ok.set(1);
            }
            Err(_) => ok.set(0),
        }
        Ok(())
    })())
}
