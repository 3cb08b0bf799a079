//! Vectors of the coil driver's tick: the demo valve's driver (invented values, the
//! configuration of the `lenz::drive` docs) with a fixed-duty hold and with a regulated-current
//! hold, on a PWM of 1000 steps whose writes can be made to fail, through pull-in, hold,
//! switch-off and release, an open coil, an overcurrent trip and an output failure. The
//! current reading follows the driver's own estimate (a perfect sense plus ADC noise), except
//! where a fault is drawn.

use std::cell::Cell;
use std::fmt::Write as _;

use lenz::drive::{
    CoilDriver, CoilDriverConfig, CoilDriverParams, CoilPhase, CoilSense, Hold, PullInSource,
};
use lenz::kernel::{MonitorParams, SenseScale, TripParams};
use lenz::turnoff::Clamp;
use lenz::{CoilParams, Range};

use super::Rng;

/// A PWM of 1000 steps whose writes fail while `fail` is set (the same as the target's).
pub struct Pwm {
    pub duty: u16,
    pub fail: Cell<bool>,
}

#[derive(Debug)]
pub struct PwmError;

impl embedded_hal::pwm::Error for PwmError {
    fn kind(&self) -> embedded_hal::pwm::ErrorKind {
        embedded_hal::pwm::ErrorKind::Other
    }
}

impl embedded_hal::pwm::ErrorType for Pwm {
    type Error = PwmError;
}

impl embedded_hal::pwm::SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), PwmError> {
        if self.fail.get() {
            return Err(PwmError);
        }
        self.duty = duty;
        Ok(())
    }
}

/// Sense chain of the demo (invented): 0.5 mA per count, zero at 100 counts.
const AMPS_PER_COUNT: f32 = 0.5e-3;

pub fn params(hold: Hold) -> CoilDriverParams {
    CoilDriverParams {
        coil: CoilParams::new(0.120, 32.0)
            .validate()
            .expect("demo coil is valid"),
        temp_c: 20.0,
        tick_s: 100e-6,
        clamp: Clamp::Zener {
            zener_v: 24.0,
            forward_v: 0.7,
        },
        supply_v: Range::new("supply_v", 21.6, 26.4).expect("valid range"),
        release_a: 0.075,
        pull_in_a: 0.45,
        pull_in_source: PullInSource::Estimate,
        pull_in_min_s: 5e-3,
        pull_in_max_s: 50e-3,
        hold,
        pwm_frequency_hz: 20e3,
        current_sense: SenseScale::new(AMPS_PER_COUNT, 100.0, 10, 4085).expect("valid scale"),
        supply_v_per_count: 0.01,
        supply_zero_counts: 0.0,
        monitor: MonitorParams {
            abs_tol_a: 0.05,
            rel_tol: 0.2,
            open_min_estimate_a: 0.1,
            open_max_a: 0.01,
            persistence: 5,
            stuck_samples: 1000,
            stuck_min_change_a: 0.05,
        },
        trip: TripParams {
            sample_period_s: 100e-6,
            amps_per_count: AMPS_PER_COUNT,
            instantaneous_counts: 3000,
            full_scale_counts: 3995,
            blanking_s: 0.0,
            persistence_n: 1,
            persistence_m: 1,
            stuck_samples: 0,
            inverse: None,
            thermal: None,
            retries: 0,
            retry_delay_s: 0.0,
        },
    }
}

/// `c` as a constant expression (the raw values' `Debug` form is a struct literal; the two
/// enums are named with their type).
pub fn config_expr(c: &CoilDriverConfig) -> String {
    format!("CoilDriverConfig::from_raw({:?})", c.raw())
        .replace("pull_in_source: ", "pull_in_source: PullInSource::")
        .replace("hold_mode: ", "hold_mode: HoldMode::")
}

/// What is drawn on the current reading.
#[derive(Clone, Copy, PartialEq)]
enum Sense {
    /// The estimate plus noise.
    Follow,
    /// An open coil: zero current.
    Open,
    /// A shorted coil: near full scale.
    Short,
}

/// One tick's inputs: demand, output failing, current and supply counts.
pub type Step = (bool, bool, u16, u16);

/// Runs `cfg` on the host with the readings drawn per tick by `plan` (demand, fail, sense),
/// returning the inputs and the host's results `(phase or error, duty, estimate µA)`.
fn run(
    rng: &mut Rng,
    cfg: &CoilDriverConfig,
    plan: &[(bool, bool, Sense)],
) -> Vec<(Step, Option<CoilPhase>, u16, i32)> {
    let pwm = Pwm {
        duty: 0,
        fail: Cell::new(false),
    };
    let mut drv = CoilDriver::new(cfg, pwm)
        .map_err(|(e, _)| e)
        .expect("demo driver starts");
    let mut out = Vec::new();
    for &(demand, fail, sense) in plan {
        let ua = drv.estimate_ua();
        let current = match sense {
            Sense::Follow => {
                (100 + (ua as f32 / 500.0).round() as i32 + rng.range(-2, 2)).clamp(0, 4095) as u16
            }
            Sense::Open => (100 + rng.range(0, 1)) as u16,
            Sense::Short => (4000 + rng.range(-3, 3)) as u16,
        };
        let supply = (2400 + rng.range(-30, 30)) as u16;
        drv.output().fail.set(fail);
        let r = drv.update(
            demand,
            CoilSense {
                current_counts: current,
                supply_counts: supply,
            },
        );
        out.push((
            (demand, fail, current, supply),
            r.ok(),
            drv.output().duty,
            drv.estimate_ua(),
        ));
    }
    out
}

pub fn generate() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0015);
    let fixed = CoilDriverConfig::new(&params(Hold::Duty { duty: 0.75 })).expect("demo driver");
    let regulated = CoilDriverConfig::new(&params(Hold::Current {
        current_a: 0.3,
        kp_per_a: 0.5,
        ki_per_a_tick: 0.02,
    }))
    .expect("demo driver");
    let cycle = |on: usize, off: usize| -> Vec<(bool, bool, Sense)> {
        (0..on + off)
            .map(|k| (k < on, false, Sense::Follow))
            .collect()
    };
    let mut cases = vec![(fixed, cycle(300, 200)), (regulated, cycle(250, 150))];
    // Open coil: the reading stays at zero current while the estimate rises.
    cases.push((fixed, (0..60).map(|_| (true, false, Sense::Open)).collect()));
    // A short after the pull-in: the instantaneous trip.
    cases.push((
        fixed,
        (0..120)
            .map(|k| {
                (
                    true,
                    false,
                    if k < 80 { Sense::Follow } else { Sense::Short },
                )
            })
            .collect(),
    ));
    // The output fails for three ticks from the switch-off at the end of the hold.
    cases.push((
        fixed,
        (0..160)
            .map(|k| (k < 100, (100..103).contains(&k), Sense::Follow))
            .collect(),
    ));

    let mut src =
        String::from("// Generated by gen/coil_driver.rs with the host build of lenz.\n\n");
    src.push_str("/// Generated sequences.\npub static CASES: &[Case] = &[\n");
    let mut seen = [false; 6];
    let mut bench_inputs = Vec::new();
    for (n, (config, plan)) in cases.iter().enumerate() {
        let _ = write!(
            src,
            "    Case {{ config: {}, steps: &[",
            config_expr(config)
        );
        for (k, ((demand, fail, current, supply), phase, duty, est)) in
            run(&mut rng, config, plan).into_iter().enumerate()
        {
            seen[match phase {
                Some(CoilPhase::Idle) => 0,
                Some(CoilPhase::PullIn) => 1,
                Some(CoilPhase::Hold) => 2,
                Some(CoilPhase::Releasing) => 3,
                Some(CoilPhase::Faulted) => 4,
                None => 5,
            }] = true;
            if n == 0 && (150..214).contains(&k) {
                bench_inputs.push((current, supply));
            }
            let phase = match phase {
                Some(p) => format!("Some(CoilPhase::{p:?})"),
                None => "None".to_string(),
            };
            let _ = write!(
                src,
                "(({demand}, {fail}, {current}, {supply}), {phase}, {duty}, {est}), "
            );
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    assert!(
        seen.iter().all(|&b| b),
        "coil driver vectors miss a phase: {seen:?}"
    );
    let _ = writeln!(
        src,
        "/// Configuration of the cost run (the demo valve, fixed-duty hold).\npub static BENCH_CONFIG: CoilDriverConfig = {};\n",
        config_expr(&fixed)
    );
    src.push_str(
        "/// Readings of the cost run, in the hold: current and supply counts.\npub static BENCH_INPUTS: &[(u16, u16)] = &[",
    );
    for (c, s) in &bench_inputs {
        let _ = write!(src, "({c}, {s}), ");
    }
    src.push_str("];\n");
    src
}
