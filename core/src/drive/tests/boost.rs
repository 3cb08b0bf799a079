//! The boost duty loop: PWM transactions, output errors, and the loop closed around an averaged
//! model of the heater rail.

extern crate std;

use std::io::ErrorKind;

use embedded_hal_mock::eh1::MockError;
use embedded_hal_mock::eh1::pwm::{Mock as PwmMock, Transaction as Pwm};

use super::support::RecordingPwm;
use crate::boost::{BoostStage, BoostStageParams};
use crate::bounds::Range;
use crate::drive::{BoostLoop, BoostLoopConfig, BoostLoopParams, DriveError};
use crate::kernel::DutyLimiterParams;

/// Heater rail of the greenhouse demo (invented values; CHECKS section 3).
fn stage() -> BoostStage {
    BoostStageParams::new(10e-6, 500e3)
        .with_inductor_resistance_ohm(0.040)
        .with_switch_resistance_ohm(0.025)
        .with_diode_drop_v(0.35)
        .with_saturation_current_a(2.0)
        .with_min_off_time_s(100e-9)
        .validate()
        .unwrap()
}

const VIN_PER_COUNT: f32 = 6.6 / 4096.0;
const VOUT_PER_COUNT: f32 = 24.75 / 4096.0;

/// 1000-count PWM, 10 kHz tick, 10 ms soft start (10 counts per tick), cut at 14 V, resume at
/// 13 V; the demo file's gains.
fn config() -> BoostLoopConfig {
    BoostLoopConfig::new(
        &stage(),
        &BoostLoopParams {
            limiter: DutyLimiterParams {
                input_v: Range::new("input_v", 4.0, 6.0).unwrap(),
                output_v: 12.0,
                max_load_current_a: 0.55,
                light_load: None,
                input_v_per_count: VIN_PER_COUNT,
                output_v_per_count: VOUT_PER_COUNT,
                adc_max_counts: 4095,
                duty_full_scale: 1000,
                soft_start_s: 10e-3,
                tick_s: 100e-6,
                overvoltage_v: 14.0,
                resume_v: 13.0,
                inductance_tol: 0.1,
                resistance_tol: 0.1,
            },
            kp_per_v: 0.005,
            ki_per_v_tick: 0.001,
        },
    )
    .unwrap()
}

fn counts(v: f64, per_count: f32) -> u16 {
    (v / f64::from(per_count)).round().clamp(0.0, 4095.0) as u16
}

fn err() -> MockError {
    MockError::Io(ErrorKind::BrokenPipe)
}

/// Duty 0 at once; the soft start's 10-count steps; an overvoltage reading cuts to 0; nothing
/// is written while the duty does not change.
#[test]
fn soft_start_and_overvoltage_transactions() {
    let cfg = config();
    let (vin, low) = (counts(5.0, VIN_PER_COUNT), counts(4.65, VOUT_PER_COUNT));
    let mut b = BoostLoop::new(
        &cfg,
        PwmMock::new(&[
            Pwm::max_duty_cycle(1000),
            Pwm::set_duty_cycle(0),
            Pwm::set_duty_cycle(10),
            Pwm::set_duty_cycle(20),
            Pwm::set_duty_cycle(30),
            Pwm::set_duty_cycle(0),
        ]),
    )
    .unwrap();
    for want in [10, 20, 30] {
        assert_eq!(b.update(true, vin, low), Ok(want));
    }
    let over = counts(14.1, VOUT_PER_COUNT);
    assert_eq!(b.update(true, vin, over), Ok(0));
    assert!(b.overvoltage());
    // 13.5 V: above the resume level, still cut; disabled: still 0. No writes.
    assert_eq!(b.update(true, vin, counts(13.5, VOUT_PER_COUNT)), Ok(0));
    assert_eq!(b.update(false, vin, low), Ok(0));
    b.free().done();
}

#[test]
fn an_output_error_latches_off_until_cleared() {
    let cfg = config();
    let (vin, low) = (counts(5.0, VIN_PER_COUNT), counts(8.0, VOUT_PER_COUNT));
    let mut b = BoostLoop::new(
        &cfg,
        PwmMock::new(&[
            Pwm::max_duty_cycle(1000),
            Pwm::set_duty_cycle(0),
            Pwm::set_duty_cycle(10).with_error(err()),
            Pwm::set_duty_cycle(0),
            Pwm::set_duty_cycle(10),
        ]),
    )
    .unwrap();
    assert_eq!(b.update(true, vin, low), Err(DriveError::Output(err())));
    assert!(b.faulted());
    for _ in 0..10 {
        assert_eq!(b.update(true, vin, low), Ok(0));
    }
    b.clear_fault();
    assert_eq!(b.update(true, vin, low), Ok(10));
    b.free().done();
}

#[test]
fn the_pwm_must_count_the_limiters_full_scale() {
    let cfg = config();
    let (e, mut out) = BoostLoop::new(
        &cfg,
        PwmMock::new(&[Pwm::max_duty_cycle(999), Pwm::set_duty_cycle(0)]),
    )
    .unwrap_err();
    assert_eq!(
        e,
        DriveError::Resolution {
            max_duty_cycle: 999
        }
    );
    out.done();
}

/// The loop closed around the averaged CCM model of the stage with its losses
/// (`L di/dt = V_in − i(R_L + D·R_on) − (1 − D)(v + V_D)`, `C dv/dt = (1 − D)·i − v/R`; the
/// loss model of CHECKS F3.2, from memory: Erickson and Maksimović ch. 3), integrated with RK4
/// at 1 µs: the output settles at 12 V (within two duty counts' worth, 63 mV) and never
/// reaches the overvoltage cut; an input step from 5 V to 4.5 V is regulated out.
#[test]
fn regulates_the_averaged_stage() {
    let cfg = config();
    let mut b = BoostLoop::new(&cfg, RecordingPwm::new(1000)).unwrap();
    let (l, rl, ron, vd, c, r) = (10e-6, 0.040, 0.025, 0.35, 22e-6, 24.0);
    let mut x = [0.0f64, 5.0 - vd]; // input up before the enable: precharged through the diode
    let mut vin = 5.0;
    let mut peak: f64 = 0.0;
    let mut settled = (f64::MAX, f64::MIN);
    for k in 0..2000 {
        if k == 1000 {
            vin = 4.5;
        }
        let d = f64::from(
            b.update(
                true,
                counts(vin, VIN_PER_COUNT),
                counts(x[1], VOUT_PER_COUNT),
            )
            .unwrap(),
        ) / 1000.0;
        let f = |s: [f64; 2]| {
            let i = s[0].max(0.0);
            [
                (vin - i * (rl + d * ron) - (1.0 - d) * (s[1] + vd)) / l,
                ((1.0 - d) * i - s[1] / r) / c,
            ]
        };
        for _ in 0..100 {
            let h = 1e-6;
            let k1 = f(x);
            let k2 = f([x[0] + h / 2.0 * k1[0], x[1] + h / 2.0 * k1[1]]);
            let k3 = f([x[0] + h / 2.0 * k2[0], x[1] + h / 2.0 * k2[1]]);
            let k4 = f([x[0] + h * k3[0], x[1] + h * k3[1]]);
            x[0] += h / 6.0 * (k1[0] + 2.0 * k2[0] + 2.0 * k3[0] + k4[0]);
            x[1] += h / 6.0 * (k1[1] + 2.0 * k2[1] + 2.0 * k3[1] + k4[1]);
            x[0] = x[0].max(0.0);
        }
        peak = peak.max(x[1]);
        if (800..1000).contains(&k) || (1800..2000).contains(&k) {
            settled = (settled.0.min(x[1]), settled.1.max(x[1]));
        }
    }
    assert!(peak < 14.0, "peak {peak}");
    // One duty count moves the output by V_in/(1 − D)²/1000 ≈ 31 mV at 5 V in and D = 0.6
    // (ideal CCM gain slope, CHECKS F3.1), so the integer loop dithers by a count: two counts'
    // worth is the band.
    let band = 2.0 * 5.0 / (0.4f64 * 0.4) / 1000.0;
    assert!(
        settled.0 > 12.0 - band && settled.1 < 12.0 + band,
        "{settled:?} ± {band}"
    );
    assert!(!b.faulted());
}
