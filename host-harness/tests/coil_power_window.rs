//! The `coil-power` window: the mean winding power "while held" is measured over the hold
//! phase, from the controller's first actuation after the pull-in that is not full on, not from
//! the pull-in itself. A controller that pulls in at full drive for a long time and then holds
//! at a low PWM duty is checked against the closed form of the PWM periodic steady state.

use lenz::CoilParams;
use lenz_harness::System;
use lenz_harness::closed_loop::{Actuation, Controller, Sensed};

/// Full drive for `PULL_TICKS` ticks after each on command, then PWM at `HOLD_DUTY`.
struct PullThenHold {
    on_ticks: u64,
}

/// 30 ms of full drive at the 100 µs tick: ten coil time constants, so the pull-in phase is
/// long and at full power.
const PULL_TICKS: u64 = 300;
/// Hold duty (a low one: the hold power is a small part of the full power).
const HOLD_DUTY: f64 = 0.25;

impl Controller for PullThenHold {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        if !s.demand {
            self.on_ticks = 0;
            return Actuation::OFF;
        }
        self.on_ticks += 1;
        if self.on_ticks <= PULL_TICKS {
            Actuation::ON
        } else {
            Actuation::pwm(HOLD_DUTY)
        }
    }
}

/// A linear coil without a thermal model (invented values): on at 10 ms, PWM hold from 40 ms
/// (10 ms + 300 ticks), off at 4.04 s, so the hold lasts exactly 4 s (80 000 PWM periods).
const FILE: &str = r#"
[system]
name = "pull then hold"
tick = "100us"
pwm_frequency = "20kHz"
sample_offset = "20us"
[system.supply]
min = "12V"
nominal = "12V"
max = "12V"
source_resistance = "0.1ohm"
[system.temperature]
min = 20
nominal = 20
max = 20
[system.coil]
inductance = "40mH"
resistance = "12ohm"
pull_in_current = "0.6A"
release_current = "0.1A"
[system.clamp.freewheel]
diode_drop = "0.7V"
[system.switch]
on_resistance = "50mohm"
breakdown = "40V"
[system.sense]
adc_bits = 12
adc_reference = "3.3V"
shunt = "50mohm"
gain = 20
bias = "80.57mV"
supply_divider = 0.175
output_divider = 0.05
[[scenario]]
name = "pull then hold"
duration = "4.05s"
[[scenario.event]]
at = "10ms"
command = "on"
[[scenario.event]]
at = "4040ms"
command = "off"
[[scenario.check]]
property = "pull-in-time"
max = "10ms"
[[scenario.check]]
property = "coil-power"
max = "2W"
"#;

/// `∫ i² dt` over `t` of a first-order segment `i(t) = I + (i₀ − I) e^(−t/τ)`:
/// `I² t + 2 I (i₀ − I) τ (1 − e^(−t/τ)) + (i₀ − I)² τ/2 (1 − e^(−2t/τ))` (closed form of the
/// RL step, any circuits text).
fn square_integral(i0: f64, target: f64, tau: f64, t: f64) -> f64 {
    let d = i0 - target;
    target * target * t
        + 2.0 * target * d * tau * -(-t / tau).exp_m1()
        + d * d * tau / 2.0 * -(-2.0 * t / tau).exp_m1()
}

#[test]
fn coil_power_is_the_mean_over_the_hold_phase() {
    let sys = System::from_toml("pull-hold.toml", FILE).unwrap_or_else(|e| panic!("{e}"));
    let r = sys
        .run_all(|_| PullThenHold { on_ticks: 0 })
        .unwrap_or_else(|e| panic!("{e}"));
    let got = r
        .property("pull then hold", "coil_power")
        .expect("checked")
        .value;

    // The PWM periodic steady state of the same coil (values typed from FILE): lenz::coil's
    // closed form for the current's valley and peak, then the winding's loss over one period
    // from the exponential segments between them.
    let coil = CoilParams::new(0.040, 12.0)
        .with_switch_resistance_ohm(0.05)
        .with_source_resistance_ohm(0.1)
        .with_shunt_resistance_ohm(0.05)
        .with_diode_drop_v(0.7)
        .validate()
        .unwrap();
    let ss = coil
        .pwm_steady_state(12.0, 20.0, HOLD_DUTY as f32, 20e3)
        .unwrap();
    assert!(ss.continuous, "the bound below needs continuous conduction");
    let (r_on, r_off) = (12.2_f64, 12.0_f64);
    let (tau_on, tau_off) = (0.040 / r_on, 0.040 / r_off);
    let (i_on, i_off) = (12.0 / r_on, -0.7 / r_off);
    let period = 1.0 / 20e3;
    let (t_on, t_off) = (HOLD_DUTY * period, (1.0 - HOLD_DUTY) * period);
    let (lo, hi) = (f64::from(ss.min_a), f64::from(ss.max_a));
    let energy = 12.0
        * (square_integral(lo, i_on, tau_on, t_on) + square_integral(hi, i_off, tau_off, t_off));
    let p_hold = energy / period;

    // The hold phase starts from the pull-in drive's current, 30 ms of the RL step from zero,
    // and settles to the periodic state: the difference e = i − i_ss obeys L de/dt = −R(t) e
    // (both segments linear), so over whole periods it decays as e₀ e^(−t/τ̄) with τ̄ = L / R̄,
    // R̄ = D R_on + (1 − D) R_off. Its extra winding loss R_w ∫ (2 i_ss e + e²) dt is
    // R_w (2 ī e₀ τ̄ + e₀² τ̄ / 2) with ī the mean of i_ss (the ripple, 1.5 % of ī, is not
    // correlated with the slow e), spread over the 4 s hold: 1.2 % of the hold power.
    let held_s = 4.0;
    let i_start = i_on * -(-0.030 / tau_on).exp_m1();
    let e0 = i_start - lo;
    let tau_bar = 0.040 / (HOLD_DUTY * r_on + (1.0 - HOLD_DUTY) * r_off);
    let mean = f64::from(ss.mean_a);
    let settling = 12.0 * (2.0 * mean * e0 * tau_bar + e0 * e0 * tau_bar / 2.0) / held_s;
    let expected = p_hold + settling;
    // Tolerance 0.01 %: the plant's integration, lenz::coil's f32 closed form and the settling
    // term's neglected ripple correlation (measured: 4e-7 relative).
    assert!(
        (got - expected).abs() <= 1e-4 * expected,
        "coil power {got} W against the hold's {p_hold} W + {settling} W of settling"
    );

    // The window from the pull-in would add the full drive between the pull-in and the hold
    // (30 ms from the on command, less the pull-in time) at no less than 12 Ω · (0.6 A)²: a
    // mean beyond the tolerance, so this test tells the two windows apart.
    let t_pull = r
        .property("pull then hold", "pull_in_time")
        .expect("checked")
        .value;
    let full_s = (PULL_TICKS as f64) * 100e-6 - t_pull;
    let from_pull_in = (12.0 * 0.36 * full_s + p_hold * held_s) / (full_s + held_s);
    assert!(
        from_pull_in > expected * (1.0 + 1e-4),
        "{from_pull_in} W against {expected} W: the test could not fail"
    );
    assert!(r.all_hold(), "{r}");
}
