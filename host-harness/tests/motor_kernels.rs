//! The motor kernels against the motor plant: the speed estimator's stated error bound over
//! the tolerance range, jam detection latency and start blanking, and the bridge guard's
//! current limits on start, stop and reversal (with the unguarded firmware failing them).
//!
//! The plant is the f64 oracle of `lenz_harness::plant::motor` (exact linear segments,
//! checked against Dop853 in `plant_motor.rs`). Each control tick is one PWM period starting
//! with the on interval (slow decay), the current is sampled at the period's start, as the
//! speed estimator's docs assume. The vent motor's values are invented for the demo (CHECKS
//! C5.1).

use lenz::kernel::{
    BridgeCommand, BridgeGuardConfig, BridgeGuardParams, BridgeGuardState, BridgeMode,
    DUTY_ONE_Q16, JamConfig, JamParams, JamState, JamStatus, MotorFault, SpeedErrorTerms,
    SpeedEstimatorConfig, SpeedEstimatorState,
};
use lenz::motor::{Motor, MotorParams};
use lenz_harness::plant::{Decay, LoadProfile, MotorPlant, MotorSpec};

const TICK: f64 = 100e-6;
const LOAD: f64 = 0.02;

fn params(l: f32, r: f32, k: f32) -> MotorParams {
    MotorParams::new(l, r, k)
        .with_inertia_kg_m2(2e-5)
        .with_friction_nm_s_per_rad(1e-6)
}

fn plant_of(l: f64, r20: f64, k: f64, temp: f64) -> MotorPlant {
    let mut s = MotorSpec::new(l, r20, k, 2e-5);
    s.friction_nm_s_per_rad = 1e-6;
    s.temp_c = temp;
    let mut p = MotorPlant::new(s).unwrap();
    p.set_load_torque_nm(LOAD);
    p
}

/// Applies one tick's command to the plant.
fn apply(p: &mut MotorPlant, c: BridgeCommand) {
    let t1 = p.time_s() + TICK;
    match c.mode {
        BridgeMode::Forward | BridgeMode::Reverse => {
            let duty = f64::from(c.duty_q16) / f64::from(DUTY_ONE_Q16);
            p.advance_pwm(c.mode, duty, TICK, Decay::Slow, t1).unwrap();
        }
        mode => {
            p.set_bridge(mode);
            p.advance_to(t1);
        }
    }
}

fn ua(i: f64) -> i32 {
    (i * 1e6).round() as i32
}

#[test]
fn speed_estimate_stays_within_its_bound_over_the_tolerances() {
    // Plan: nominal motor at 20 °C. Actual: every corner of L ±20 %, R ±10 %, k ±5 % with the
    // winding at -20 or 80 °C. Start from rest at duty 0.8, 150 ms.
    let plan = params(2e-3, 1.5, 0.03).validate().unwrap();
    let cfg = SpeedEstimatorConfig::new(&plan, 20.0, TICK as f32, 0.0).unwrap();
    let duty = 0.8;
    let duty_q16 = (duty * 65_536.0f64).round() as i32;
    let mut worst_ratio = 0.0f64;
    let mut nominal_error = 0.0f64;
    let mut worst_error = 0.0f64;
    // Corners 0..=15 of the tolerances, then the nominal motor (corner 16).
    for corner in 0..17u32 {
        let fl = if corner & 1 == 0 { 0.8 } else { 1.2 };
        let fr = if corner & 2 == 0 { 0.9 } else { 1.1 };
        let fk = if corner & 4 == 0 { 0.95 } else { 1.05 };
        let temp = if corner & 8 == 0 { -20.0 } else { 80.0 };
        let nominal = corner & 16 != 0;
        let (fl, fr, fk, temp) = if nominal {
            (1.0, 1.0, 1.0, 20.0)
        } else {
            (fl, fr, fk, temp)
        };
        let (l, r, k) = (2e-3 * fl, 1.5 * fr, 0.03 * fk);
        let actual = params(l as f32, r as f32, k as f32).validate().unwrap();
        let mut p = plant_of(l, r, k, temp);
        let mut s = SpeedEstimatorState::new();
        let (mut i_prev, mut di_max, mut w_max, mut err_max) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
        for _ in 0..1500 {
            let t1 = p.time_s() + TICK;
            p.advance_pwm(BridgeMode::Forward, duty, TICK, Decay::Slow, t1)
                .unwrap();
            let i = p.current_a();
            let est = f64::from(cfg.update(&mut s, duty_q16, 12_000, ua(i))) * 1e-3;
            err_max = err_max.max((est - p.speed_rad_s()).abs());
            di_max = di_max.max((i - i_prev).abs());
            w_max = w_max.max(p.speed_rad_s().abs());
            i_prev = i;
        }
        let i_max = p.peak_current_a();
        // |dω/dt| ≤ (k·I + b·W + T)/J over the run.
        let a_max = (k * i_max + 1e-6 * w_max + LOAD) / 2e-5;
        // Applied voltage: the PWM term of the estimator's docs for the actual winding, and
        // the duty's rounding to Q16.
        let pwm = SpeedEstimatorConfig::pwm_voltage_error_v(
            &actual,
            temp as f32,
            TICK as f32,
            12.0,
            duty as f32,
        )
        .unwrap();
        let du = f64::from(pwm) + 12.0 * (f64::from(duty_q16) / 65_536.0 - duty).abs();
        // The sampled current is rounded to 1 µA: 1 µA of ΔI and of I.
        let terms = SpeedErrorTerms {
            current_max_a: (i_max + 1e-6) as f32,
            current_step_max_a: (di_max + 2e-6) as f32,
            speed_max_rad_s: w_max as f32,
            accel_max_rad_s2: a_max as f32,
            voltage_error_v: du as f32,
        };
        let bound = f64::from(
            SpeedEstimatorConfig::error_bound_rad_s(
                &plan,
                20.0,
                &actual,
                temp as f32,
                TICK as f32,
                0.0,
                &terms,
            )
            .unwrap(),
        );
        assert!(
            err_max <= bound,
            "corner {corner}: error {err_max} rad/s above the bound {bound}"
        );
        worst_ratio = worst_ratio.max(err_max / bound);
        if nominal {
            nominal_error = nominal_error.max(err_max);
        } else {
            worst_error = worst_error.max(err_max);
        }
    }
    // The bound is not vacuous: at the worst corner the error uses a good part of it, and the
    // tolerances show (the nominal motor is estimated far better).
    assert!(worst_ratio > 0.3, "{worst_ratio}");
    assert!(
        worst_error > 3.0 * nominal_error,
        "{worst_error} vs {nominal_error}"
    );
}

/// The demo firmware loop: guard, estimator, jam detector. `blanking_s` and `soft` (soft start
/// and brake-before-reversal) configure it. Returns the tick of the first fault, if any.
struct Firmware {
    guard: BridgeGuardConfig,
    gs: BridgeGuardState,
    est: SpeedEstimatorConfig,
    es: SpeedEstimatorState,
    jam: JamConfig,
    js: JamState,
}

impl Firmware {
    fn new(m: &Motor, blanking_s: f32, soft: bool) -> Self {
        let guard = if soft {
            BridgeGuardConfig::new(
                m,
                &BridgeGuardParams {
                    supply_v: 12.0,
                    temp_c: 20.0,
                    max_temp_c: 20.0,
                    load_torque_nm: LOAD as f32,
                    current_limit_a: 4.0,
                    tick_s: TICK as f32,
                    dead_time_s: 200e-6,
                    // Above the 33.3 rad/s at which the load turns the braked rotor.
                    reverse_speed_rad_s: 40.0,
                    probe_interval_s: 2e-3,
                    resume_margin_rad_s: None,
                },
            )
            .unwrap()
        } else {
            // Unguarded: full step, brake at any speed, reverse at any speed.
            BridgeGuardConfig::from_raw(lenz::kernel::BridgeGuardRaw {
                slew_q16: DUTY_ONE_Q16,
                brake_speed_mrad_s: i32::MAX,
                reverse_speed_mrad_s: i32::MAX,
                dead_ticks: 0,
                probe_ticks: 0,
                resume_duty_q24: 0,
                resume_margin_mrad_s: i32::MAX,
            })
        };
        let jam = JamConfig::new(&JamParams {
            jam_current_a: 3.0,
            jam_speed_rad_s: 50.0,
            persistence_s: 5e-3,
            blanking_s,
            overload_current_a: None,
            overload_s: 0.0,
            open_current_a: None,
            open_min_duty: 1.0,
            tick_s: TICK as f32,
        })
        .unwrap();
        Self {
            guard,
            gs: BridgeGuardState::new(),
            est: SpeedEstimatorConfig::new(m, 20.0, TICK as f32, 0.0).unwrap(),
            es: SpeedEstimatorState::new(),
            jam,
            js: JamState::new(),
        }
    }

    /// One tick against the plant; returns the jam verdict.
    fn tick(&mut self, p: &mut MotorPlant, request_q16: i32) -> JamStatus {
        let request = if self.js.fault().is_some() {
            0
        } else {
            request_q16
        };
        let c = self
            .guard
            .update(&mut self.gs, request, self.es.speed_mrad_s());
        apply(p, c);
        let i = ua(p.current_a());
        let w = if c.mode == BridgeMode::Coast {
            self.est.hold(&mut self.es, i)
        } else {
            self.est
                .update(&mut self.es, c.signed_duty_q16(), 12_000, i)
        };
        self.jam.update(&mut self.js, c.signed_duty_q16(), i, w)
    }
}

fn vent() -> Motor {
    params(2e-3, 1.5, 0.03).validate().unwrap()
}

#[test]
fn jam_is_detected_within_its_latency_and_the_start_is_blanked() {
    let m = vent();
    // Blanking from the plan: the slowest healthy start (10.8 V, 80 °C) with the guard's ramp
    // passes 50 rad/s after this long; one and a half times that.
    let probe = Firmware::new(&m, 0.0, true);
    let ramp = TICK as f32 * DUTY_ONE_Q16 as f32 / probe.guard.slew_q16() as f32;
    let t_speed = m
        .ramp_time_to_speed_s(10.8, 80.0, LOAD as f32, ramp, 50.0)
        .unwrap();
    let blanking = 1.5 * t_speed;
    let mut fw = Firmware::new(&m, blanking, true);
    let mut p = plant_of(2e-3, 1.5, 0.03, 20.0);
    p.set_load_profile(LoadProfile {
        steps: vec![(0.0, LOAD)],
        jam_at_s: Some(0.3),
    });
    let mut fault_at = None;
    for n in 0..4000u32 {
        if let JamStatus::Fault(f) = fw.tick(&mut p, DUTY_ONE_Q16) {
            assert_eq!(f, MotorFault::Jam);
            fault_at = Some(f64::from(n + 1) * TICK);
            break;
        }
    }
    let t = fault_at.expect("the jam is detected");
    // No nuisance trip before the jam; detected within the 5 ms persistence plus the time the
    // current takes to reach 3 A (about τ_e·ln(8/(8−3)) ≈ 0.6 ms) and two ticks.
    assert!(t > 0.3, "tripped at {t} before the jam");
    let latency = t - 0.3;
    assert!((5e-3..=7e-3).contains(&latency), "latency {latency}");
    // After the fault the firmware stops the bridge: the winding current decays.
    for _ in 0..200 {
        fw.tick(&mut p, DUTY_ONE_Q16);
    }
    assert!(p.current_a().abs() < 0.1, "{}", p.current_a());
}

#[test]
fn a_start_without_blanking_trips_as_a_jam() {
    // The check can fail: a hard start (no soft start) without blanking looks like a jam.
    let m = vent();
    let mut fw = Firmware::new(&m, 0.0, false);
    let mut p = plant_of(2e-3, 1.5, 0.03, 20.0);
    let mut faults = 0;
    for _ in 0..2000 {
        if let JamStatus::Fault(_) = fw.tick(&mut p, DUTY_ONE_Q16) {
            faults += 1;
        }
    }
    assert!(faults > 0, "an unblanked hard start must look like a jam");
    // The same start with the plan's blanking runs clean.
    let ramp = 0.0;
    let blanking = 1.5
        * m.ramp_time_to_speed_s(10.8, 80.0, LOAD as f32, ramp, 50.0)
            .unwrap();
    let mut fw = Firmware::new(&m, blanking, false);
    let mut p = plant_of(2e-3, 1.5, 0.03, 20.0);
    for _ in 0..2000 {
        assert!(!matches!(
            fw.tick(&mut p, DUTY_ONE_Q16),
            JamStatus::Fault(_)
        ));
    }
}

#[test]
fn guarded_start_stop_and_reversal_keep_the_current_limit() {
    // Limit 4 A from the plan; the PWM ripple on top of the planned (mean) current is at most
    // V·T/(4L) = 0.15 A peak to peak.
    let ripple = 12.0 * TICK / (4.0 * 2e-3);
    let limit = 4.0 + ripple;
    let m = vent();
    let mut fw = Firmware::new(&m, 0.5, true);
    let mut p = plant_of(2e-3, 1.5, 0.03, 20.0);
    for _ in 0..3000 {
        fw.tick(&mut p, DUTY_ONE_Q16);
    }
    assert!(p.peak_current_a() <= limit, "start {}", p.peak_current_a());
    assert!(p.speed_rad_s() > 300.0);
    // Stop from full speed: coast (with brake probes) until slow enough, then brake. The
    // constant load torque of the linear model keeps acting on the braked rotor, which creeps
    // backwards at the braked steady speed −R·T/(k² + R·b) (textbook steady state at 0 V).
    p.reset_peaks();
    for _ in 0..6000 {
        fw.tick(&mut p, 0);
    }
    assert!(p.peak_current_a() <= limit, "stop {}", p.peak_current_a());
    assert_eq!(p.bridge(), BridgeMode::Brake);
    let creep = -1.5 * LOAD / (0.03 * 0.03 + 1.5 * 1e-6);
    assert!(
        (p.speed_rad_s() - creep).abs() < 0.5,
        "{} vs {creep}",
        p.speed_rad_s()
    );
    // Start again and reverse at full speed: coast, probe, brake, dead time, soft start the
    // other way.
    for _ in 0..3000 {
        fw.tick(&mut p, DUTY_ONE_Q16);
    }
    assert!(p.speed_rad_s() > 300.0);
    p.reset_peaks();
    for _ in 0..6000 {
        fw.tick(&mut p, -DUTY_ONE_Q16);
    }
    assert!(
        p.peak_current_a() <= limit,
        "reversal {}",
        p.peak_current_a()
    );
    assert!(p.speed_rad_s() < -300.0, "{}", p.speed_rad_s());
}

#[test]
fn unguarded_reversal_at_full_speed_exceeds_the_limit() {
    // The check can fail: reversing at full speed with no brake and no soft start drives the
    // current towards (V + k·ω)/R; the plan's reversal peak (13.8 A) is what the plant shows.
    let m = vent();
    let mut fw = Firmware::new(&m, 0.5, false);
    let mut p = plant_of(2e-3, 1.5, 0.03, 20.0);
    for _ in 0..3000 {
        fw.tick(&mut p, DUTY_ONE_Q16);
    }
    p.reset_peaks();
    for _ in 0..1000 {
        fw.tick(&mut p, -DUTY_ONE_Q16);
    }
    let plan = m
        .reversal_peak(12.0, 20.0, LOAD as f32)
        .unwrap()
        .magnitude_a();
    assert!(p.peak_current_a() > 4.0 + 0.15);
    assert!(
        (p.peak_current_a() / f64::from(plan) - 1.0).abs() < 0.02,
        "{} vs {plan}",
        p.peak_current_a()
    );
}
