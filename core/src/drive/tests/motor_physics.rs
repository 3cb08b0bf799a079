//! The bridge motor driver in a loop with an f64 simulation of the motor equations
//! (`V = R·i + L·di/dt + k·ω`, `J·dω/dt = k·i − b·ω − T`, the DC machine equations of
//! [FKU] ch. 7 in `docs/references.md`), solved exactly per tick by the independent reference
//! `testing::motor64` (eigenvalue form of the 2×2 linear system).

extern crate std;

use std::vec::Vec;

use super::motor_support::*;
use super::support::RecordingPwm;
use crate::drive::{MotorDriver, MotorSense};
use crate::kernel::BridgeMode;
use crate::testing::motor64::M;

/// A direction pin that records its level.
#[derive(Default)]
struct Level(bool);

impl embedded_hal::digital::ErrorType for Level {
    type Error = core::convert::Infallible;
}

impl embedded_hal::digital::OutputPin for Level {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        self.0 = false;
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Self::Error> {
        self.0 = true;
        Ok(())
    }
}

const V_BUS: f64 = 12.0;
const T: f64 = 100e-6;

/// The vent motor at 20 °C (1.5 Ω: the winding at its reference temperature, no bridge
/// resistance stated), free of load.
fn plant() -> M {
    M {
        r: 1.5,
        l: 2e-3,
        k: 0.03,
        j: 2e-5,
        b: 1e-6,
    }
}

/// One tick of the plant under the bridge's outputs (the mean voltage of a PWM tick with slow
/// decay; coast: the diodes return the current to the rail until it reaches zero, then the
/// winding is open and the rotor runs down on its friction alone). Returns the new state.
fn step(m: &M, pwm: u16, a: bool, b: bool, (i, w): (f64, f64)) -> (f64, f64) {
    let d = f64::from(pwm) / 1000.0;
    let v = match (pwm, a, b) {
        (0, _, _) => {
            if i == 0.0 {
                return (0.0, w * (-m.b / m.j * T).exp());
            }
            let v = -i.signum() * V_BUS;
            let i1 = m.current(v, 0.0, i, w, T);
            if i1.signum() == i.signum() {
                return (i1, m.speed(v, 0.0, i, w, T));
            }
            // The zero crossing by bisection, then the open winding.
            let (mut lo, mut hi) = (0.0, T);
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if m.current(v, 0.0, i, w, mid).signum() == i.signum() {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            let w0 = m.speed(v, 0.0, i, w, hi);
            return (0.0, w0 * (-m.b / m.j * (T - hi)).exp());
        }
        (_, true, false) => d * V_BUS,
        (_, false, true) => -d * V_BUS,
        _ => 0.0,
    };
    (m.current(v, 0.0, i, w, T), m.speed(v, 0.0, i, w, T))
}

struct Run {
    /// Per tick: plant current, plant speed, estimate (rad/s), mode in force.
    trace: Vec<(f64, f64, f64, BridgeMode)>,
}

/// Runs the driver against the plant, `request(k)` at tick `k`.
fn run(ticks: u32, request: impl Fn(u32) -> i32) -> Run {
    let cfg = vent_config();
    let m = plant();
    let mut drv = MotorDriver::new(&cfg, RecordingPwm::new(1000), Level(true), Level(true))
        .map_err(|(e, _)| e)
        .unwrap();
    let mut x = (0.0, 0.0);
    let mut trace = Vec::new();
    for k in 0..ticks {
        let sense = MotorSense {
            current_counts: current_counts(x.0),
            supply_counts: supply_counts(V_BUS),
        };
        let c = drv.update(request(k), sense).unwrap();
        let (p, a, b) = drv.outputs();
        x = step(&m, p.duty, a.0, b.0, x);
        trace.push((x.0, x.1, f64::from(drv.speed_mrad_s()) * 1e-3, c.mode));
    }
    assert_eq!(drv.fault(), None);
    Run { trace }
}

/// Soft start to 40 % duty, run, reverse to −40 %: the current stays within the guard's 4 A
/// limit throughout, the speed estimate follows the plant, and the reversal drives only once
/// the rotor is below the reversal speed. Without the guard, the same reversal from the
/// running state peaks far above the limit (the check can fail).
#[test]
fn start_run_reverse_against_the_f64_motor() {
    let req = 26_214; // 0.4
    let r = run(8_000, |k| if k < 4_000 { req } else { -req });
    let peak = r.trace.iter().map(|t| t.0.abs()).fold(0.0, f64::max);
    // The limit, with one ADC count and the PWM's quantisation of the ramp as margin.
    assert!(peak <= 4.0 + 0.05, "peak {peak} A");
    // Steady at 40 %: no-load speed 0.4·12/0.03 ≈ 160 rad/s; the estimate within 1 rad/s.
    let (_, w, est, mode) = r.trace[3_999];
    assert_eq!(mode, BridgeMode::Forward);
    assert!((w - 160.0).abs() < 1.0, "{w}");
    assert!((est - w).abs() < 1.0, "estimate {est} against {w}");
    // The first reverse tick: the plant below the reversal speed (20 rad/s) plus the
    // estimator's error while braking, which the readings' rounding dominates: half a count
    // (2 mA) on each of the two samples, weighted by (G₁ + G₀)/k (module docs of the speed
    // estimator), about 2.7 rad/s here.
    let cfg = vent_config();
    let g = f64::from(cfg.speed().gain_end_q24()) + f64::from(cfg.speed().gain_start_q24());
    let quant = g / f64::from(1u32 << 24) * 2_000.0 / 30.0;
    assert!(quant < 3.0, "{quant}");
    let first = r.trace[4_000..]
        .iter()
        .position(|t| t.3 == BridgeMode::Reverse)
        .unwrap()
        + 4_000;
    let w_rev = r.trace[first - 1].1;
    assert!(w_rev.abs() <= 20.0 + quant, "reversed at {w_rev} rad/s");
    // Braking came first, then the dead time in coast.
    assert!(
        r.trace[4_000..first]
            .iter()
            .any(|t| t.3 == BridgeMode::Brake)
    );
    assert_eq!(r.trace[first - 1].3, BridgeMode::Coast);
    // At the end: steady reverse.
    let (_, w, est, _) = *r.trace.last().unwrap();
    assert!(
        (w + 160.0).abs() < 1.0 && (est - w).abs() < 1.0,
        "{w} {est}"
    );
    // The contrast: a direct reversal at 40 % from the steady run (f64 reference peak).
    let m = plant();
    let (i_run, w_run) = m.steady(0.4 * V_BUS, 0.0);
    let direct = m.peak(-0.4 * V_BUS, 0.0, i_run, w_run);
    assert!(direct > 4.0 + 1.0, "direct reversal peak {direct} A");
}
