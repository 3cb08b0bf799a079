//! Boost loop: [`BoostLoop::update`], one control tick of the heater rail's PI loop behind the
//! duty limiter on a PWM output.

use embedded_hal::pwm::SetDutyCycle;
use lenz::drive::{BoostLoop, BoostLoopConfig, BoostLoopRaw, DriveError};
use lenz::kernel::DutyLimiterRaw;

use super::pwm::{Pwm, PwmError};
use super::{Checker, Kernel, duty};
use crate::bench::{run, ticks};

/// The loop as the images run it: the configuration in flash, the PWM stand-in.
pub type Loop = BoostLoop<&'static BoostLoopConfig, Pwm>;

/// One generated sequence from a new loop.
pub struct Case {
    /// The configuration (from the plan constructor on the host).
    pub config: BoostLoopConfig,
    /// Per tick: (enable, output failing, input counts, output counts), and the host's
    /// results: the returned duty (`None`: an output error) and the duty written.
    pub steps: &'static [((bool, bool, u16, u16), Option<u16>, u16)],
}

/// The straightforward loop's settings (SI units).
#[derive(Clone, Copy)]
pub struct NaiveLoop {
    /// Wanted output, V.
    pub target_v: f32,
    /// Proportional gain, duty per volt.
    pub kp_per_v: f32,
    /// Integral gain, duty per volt per tick.
    pub ki_per_v_tick: f32,
    /// Output volts per count.
    pub vout_per_count_v: f32,
}

include!(concat!(env!("OUT_DIR"), "/boost_driver.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_boost_driver(
    _: &(),
    l: &mut Loop,
    x: (u16, u16),
) -> Result<u16, DriveError<PwmError>> {
    l.update(true, x.0, x.1)
}

/// State of the straightforward loop: the integrator, the f32 limiter of the duty module and
/// the output.
pub struct NaiveBoost {
    integ: f32,
    lim: duty::NaiveState,
    out: Pwm,
}

/// The same tick written the straightforward way: the PI in f32 volts and duty fractions,
/// the f32/libm limiter of the duty module (limits recomputed from the measured input each
/// tick), anti-windup by conditional integration, the duty written when it changes.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_boost_driver(_: &(), s: &mut NaiveBoost, x: (u16, u16)) -> u16 {
    let p = &NAIVE_LOOP;
    let e = p.target_v - f32::from(x.1) * p.vout_per_count_v;
    let before = s.integ;
    s.integ = (s.integ + p.ki_per_v_tick * e).clamp(0.0, 1.0);
    let request = ((p.kp_per_v * e + s.integ).clamp(0.0, 1.0) * 1000.0) as i32;
    let d = duty::lenz_naive_duty(&NAIVE_LIMITER, &mut s.lim, (request, x.0, x.1));
    if i32::from(d) < request && e > 0.0 {
        s.integ = before;
    }
    if d != s.out.duty {
        let _ = s.out.set_duty_cycle(d);
    }
    d
}

fn empty(_: &(), _: &mut Loop, _: (u16, u16)) -> Result<u16, DriveError<PwmError>> {
    Ok(0)
}

fn empty_naive(_: &(), _: &mut NaiveBoost, _: (u16, u16)) -> u16 {
    0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let Ok(mut l) = BoostLoop::new(&case.config, Pwm::new()) else {
            c.compare(n, 0, "loop did not start", "loop started");
            continue;
        };
        for (k, &((enable, fail, vin, vout), want, duty)) in case.steps.iter().enumerate() {
            l.output().fail.set(fail);
            let got = if enable {
                lenz_kernel_boost_driver(&(), &mut l, (vin, vout)).ok()
            } else {
                l.update(false, vin, vout).ok()
            };
            c.compare(n, k, (got, l.output().duty), (want, duty));
        }
    }
}

fn regulating() -> Option<Loop> {
    let mut l = BoostLoop::new(&BENCH_CONFIG, Pwm::new()).ok()?;
    for &(vin, vout) in BENCH_INPUTS {
        l.update(true, vin, vout).ok()?;
    }
    Some(l)
}

fn naive() -> NaiveBoost {
    NaiveBoost {
        integ: 0.5,
        lim: duty::NAIVE_STATE,
        out: Pwm::new(),
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (Some(mut l), Some(mut e)) = (regulating(), regulating()) else {
        crate::println!("FAIL boost_driver: the cost run could not set up a regulating loop");
        crate::semihosting::exit(false)
    };
    let t = ticks(|| run(lenz_kernel_boost_driver, &(), &mut l, BENCH_INPUTS, n));
    let te = ticks(|| run(empty, &(), &mut e, BENCH_INPUTS, n));
    let (mut nl, mut ne) = (naive(), naive());
    let tn = ticks(|| run(lenz_naive_boost_driver, &(), &mut nl, BENCH_INPUTS, n));
    let en = ticks(|| run(empty_naive, &(), &mut ne, BENCH_INPUTS, n));
    [t, te, tn, en]
}

/// The boost loop's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "boost_driver",
    state_bytes: size_of::<Loop>(),
    naive_state_bytes: size_of::<NaiveBoost>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<(BoostLoopRaw, DutyLimiterRaw)> = None;
