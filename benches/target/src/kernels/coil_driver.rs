//! Coil driver: [`CoilDriver::update`], one control tick of the demo valve's driver (estimator,
//! monitor, trip detector, off-timer and hold wired together) on a PWM output.

use embedded_hal::pwm::SetDutyCycle;
use lenz::drive::{
    CoilDriver, CoilDriverConfig, CoilDriverRaw, CoilPhase, CoilSense, DriveError,
    HoldEstimatorRaw, HoldMode, PullInSource,
};
use lenz::kernel::{
    EstimatorRaw, Fault, InverseTable, MonitorRaw, OffPath, SenseScale, TrackingOffTimerRaw,
    TripRaw,
};

use super::pwm::{Pwm, PwmError};
use super::{Checker, Kernel, estimator, monitor};
use crate::bench::{run, ticks};

/// The driver as the images run it: the configuration in flash, the PWM stand-in.
pub type Driver = CoilDriver<&'static CoilDriverConfig, Pwm>;

/// One generated sequence from a new driver.
pub struct Case {
    /// The configuration (from the plan constructor on the host).
    pub config: CoilDriverConfig,
    /// Per tick: (demand, output failing, current counts, supply counts), and the host's
    /// results: the phase (`None`: the tick returned an output error), the duty written and
    /// the estimate in µA.
    pub steps: &'static [((bool, bool, u16, u16), Option<CoilPhase>, u16, i32)],
}

include!(concat!(env!("OUT_DIR"), "/coil_driver.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_coil_driver(
    _: &(),
    d: &mut Driver,
    x: (bool, CoilSense),
) -> Result<CoilPhase, DriveError<PwmError>> {
    d.update(x.0, x.1)
}

/// State of the straightforward driver: the f32 estimator and monitor of the kernel modules,
/// the time in the phase in f32 seconds, and the output.
pub struct NaiveDriver {
    i_a: f32,
    mon: monitor::NaiveState,
    phase_s: f32,
    /// 0 idle, 1 pull-in, 2 hold, 3 releasing, 4 faulted.
    phase: u8,
    on: bool,
    out: Pwm,
}

/// Pull-in current, A; shortest pull-in, s; release current, A; hold duty; tick, s.
const NAIVE_PULL_IN_A: f32 = 0.45;
const NAIVE_PULL_IN_MIN_S: f32 = 5e-3;
const NAIVE_RELEASE_A: f32 = 0.075;
const NAIVE_HOLD_DUTY: f32 = 0.75;
const NAIVE_TICK_S: f32 = 100e-6;
/// Instantaneous trip level above the zero-current offset, counts.
const NAIVE_TRIP_COUNTS: u16 = 3000;

/// The demo driver's monitor for the straightforward version (its sense chain and settings).
const NAIVE_MONITOR: monitor::Naive = monitor::Naive {
    offset_counts: 100.0,
    a_per_count: 0.5e-3,
    min_valid_counts: 10,
    max_valid_counts: 4085,
    abs_tol_a: 0.05,
    rel_tol: 0.2,
    open_min_estimate_a: 0.1,
    open_max_a: 0.01,
    persistence: 5,
    stuck_samples: 1000,
    stuck_min_change_a: 0.05,
};

/// The same tick written the straightforward way: the f32/libm estimator and monitor of the
/// kernel modules (the estimator on the same demo valve, the monitor with the driver's
/// settings), the instantaneous trip compare, the phase logic in f32 amperes and seconds, the
/// duty as an f32 fraction of the PWM's steps.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_coil_driver(_: &(), d: &mut NaiveDriver, x: (bool, CoilSense)) -> u8 {
    let supply_mv = (f32::from(x.1.supply_counts) * 10.0) as i32;
    let est = estimator::lenz_naive_estimator(&estimator::NAIVE, &mut d.i_a, (d.on, supply_mv));
    let fault = monitor::lenz_naive_monitor(&NAIVE_MONITOR, &mut d.mon, (est, x.1.current_counts));
    let tripped = d.on && x.1.current_counts.saturating_sub(100) >= NAIVE_TRIP_COUNTS;
    d.phase_s += NAIVE_TICK_S;
    let next = if fault.is_some() || tripped || d.phase == 4 {
        4
    } else {
        match (d.phase, x.0) {
            (0, true) => 1,
            (1, true) if est >= NAIVE_PULL_IN_A && d.phase_s >= NAIVE_PULL_IN_MIN_S => 2,
            (1 | 2, false) => 3,
            (3, _) if est <= NAIVE_RELEASE_A => 0,
            (p, _) => p,
        }
    };
    if next != d.phase {
        d.phase = next;
        d.phase_s = 0.0;
    }
    let duty = match d.phase {
        1 => 1.0,
        2 => NAIVE_HOLD_DUTY,
        _ => 0.0,
    };
    d.on = duty > 0.0;
    let counts = (duty * f32::from(d.out.max_duty_cycle()) + 0.5) as u16;
    if counts != d.out.duty {
        let _ = d.out.set_duty_cycle(counts);
    }
    d.phase
}

fn empty(_: &(), _: &mut Driver, _: (bool, CoilSense)) -> Result<CoilPhase, DriveError<PwmError>> {
    Ok(CoilPhase::Idle)
}

fn empty_naive(_: &(), _: &mut NaiveDriver, _: (bool, CoilSense)) -> u8 {
    0
}

/// A new driver on a fresh PWM.
fn driver(config: &'static CoilDriverConfig) -> Option<Driver> {
    CoilDriver::new(config, Pwm::new()).ok()
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let Some(mut d) = driver(&case.config) else {
            c.compare(n, 0, "driver did not start", "driver started");
            continue;
        };
        for (k, &((demand, fail, current, supply), phase, duty, est)) in
            case.steps.iter().enumerate()
        {
            d.output().fail.set(fail);
            let sense = CoilSense {
                current_counts: current,
                supply_counts: supply,
            };
            let got = lenz_kernel_coil_driver(&(), &mut d, (demand, sense)).ok();
            c.compare(
                n,
                k,
                (got, d.output().duty, d.estimate_ua()),
                (phase, duty, est),
            );
        }
    }
}

/// A driver in the hold: pulled in on the first bench reading's supply with a perfect sense.
fn holding() -> Option<Driver> {
    let mut d = driver(&BENCH_CONFIG)?;
    for _ in 0..1000 {
        let sense = CoilSense {
            current_counts: (100 + d.estimate_ua() / 500) as u16,
            supply_counts: BENCH_INPUTS.first()?.1,
        };
        if d.update(true, sense).ok()? == CoilPhase::Hold {
            return Some(d);
        }
    }
    None
}

fn naive_holding() -> NaiveDriver {
    let mut d = NaiveDriver {
        i_a: 0.0,
        mon: monitor::NAIVE_STATE,
        phase_s: 0.0,
        phase: 2,
        on: true,
        out: Pwm::new(),
    };
    d.i_a = NAIVE_PULL_IN_A;
    d
}

/// The bench readings as the tick's input (demand on).
static BENCH_SENSE: [(bool, CoilSense); 64] = {
    let mut out = [(
        true,
        CoilSense {
            current_counts: 0,
            supply_counts: 0,
        },
    ); 64];
    let mut i = 0;
    while i < 64 && i < BENCH_INPUTS.len() {
        out[i].1.current_counts = BENCH_INPUTS[i].0;
        out[i].1.supply_counts = BENCH_INPUTS[i].1;
        i += 1;
    }
    out
};

fn cost(n: u32) -> [Option<u32>; 4] {
    let (Some(mut d), Some(mut e)) = (holding(), holding()) else {
        crate::println!("FAIL coil_driver: the cost run could not set up a driver in the hold");
        crate::semihosting::exit(false)
    };
    let t = ticks(|| run(lenz_kernel_coil_driver, &(), &mut d, &BENCH_SENSE, n));
    let te = ticks(|| run(empty, &(), &mut e, &BENCH_SENSE, n));
    let (mut nd, mut ne) = (naive_holding(), naive_holding());
    let tn = ticks(|| run(lenz_naive_coil_driver, &(), &mut nd, &BENCH_SENSE, n));
    let en = ticks(|| run(empty_naive, &(), &mut ne, &BENCH_SENSE, n));
    [t, te, tn, en]
}

/// The coil driver's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "coil_driver",
    state_bytes: size_of::<Driver>(),
    naive_state_bytes: size_of::<NaiveDriver>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<(
    CoilDriverRaw,
    HoldEstimatorRaw,
    HoldMode,
    PullInSource,
    EstimatorRaw,
    MonitorRaw,
    OffPath,
    SenseScale,
    TrackingOffTimerRaw,
    TripRaw,
    Fault,
    InverseTable,
)> = None;
