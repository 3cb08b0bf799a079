//! Coil model against the published and computed values of the reference sheet
//! (`docs/references.md`, section 1). Each check names its source.

use lenz::{CoilParams, Error};
use lenz_checks::{assert_close, copper_resistance, rl_step};

/// CHECKS C1.1 coil: L = 40 mH, R = 24 Ω, V = 12 V.
fn reference_coil() -> lenz::Coil {
    CoilParams::new(0.040, 24.0).validate().unwrap()
}

#[test]
fn c1_1_rl_step_time_constant_table() {
    // Source: first-order step table 63.2 / 86.5 / 95.0 / 98.2 / 99.3 % at 1..5 τ (RLT,
    // published in many circuit texts; exact 1 − e^−n), values computed for this coil.
    let c = reference_coil();
    assert_close(
        "tau",
        c.time_constant_s(20.0).unwrap() as f64,
        1.666666667e-3,
        1e-7,
    );
    assert_close(
        "I_inf",
        c.steady_current_a(12.0, 20.0).unwrap() as f64,
        0.5,
        1e-7,
    );
    let tau = 1.666666667e-3f64;
    for (n, want) in [
        (1.0, 0.3160602794),
        (2.0, 0.4323323584),
        (3.0, 0.4751064658),
        (4.0, 0.4908421806),
        (5.0, 0.4966310265),
    ] {
        let got = c
            .current_after_a(12.0, 20.0, 0.0, (n * tau) as f32)
            .unwrap() as f64;
        assert_close(&format!("i({n} tau)"), got, want, 1e-6);
        // And the published percentage, rounded as printed (RLT).
        let pct = (got / 0.5 * 1000.0).round() / 10.0;
        let printed = [63.2, 86.5, 95.0, 98.2, 99.3][n as usize - 1];
        assert!((pct - printed).abs() < 1e-9, "{n} tau: {pct} %");
    }
}

#[test]
fn c1_1_times_to_fractions() {
    // Computed (closed form t = τ ln(1/(1 − p)), CHECKS C1.1): 50 / 90 / 95 / 99 %.
    let c = reference_coil();
    for (p, want) in [
        (0.50, 1.155245301e-3),
        (0.90, 3.837641822e-3),
        (0.95, 4.992887123e-3),
        (0.99, 7.675283643e-3),
    ] {
        let got = c.time_to_current_s(12.0, 20.0, 0.0, 0.5 * p).unwrap() as f64;
        assert_close(&format!("t to {p}"), got, want, 1e-5);
    }
    // Findings 1: 1 % settling is reached at 4.61 τ, not at 5 τ.
    let t99 = c.time_to_current_s(12.0, 20.0, 0.0, 0.495).unwrap() as f64;
    assert!((t99 / 1.666666667e-3 - 4.605).abs() < 0.001);
}

#[test]
fn c1_3_pwm_periodic_steady_state() {
    // Computed, CHECKS C1.3 (closed form F1.3 cross-checked with 100 periods of ODE
    // integration at 1e-13): 40 mH, 24 Ω, 12 V, 2 kHz, D = 0.6, Vf = 0.7 V.
    let c = CoilParams::new(0.040, 24.0)
        .with_diode_drop_v(0.7)
        .validate()
        .unwrap();
    let s = c.pwm_steady_state(12.0, 20.0, 0.6, 2000.0).unwrap();
    assert!(s.continuous);
    assert_close("imax", s.max_a as f64, 0.3071591096, 1e-5);
    assert_close("imin", s.min_a as f64, 0.2691275377, 1e-5);
    assert_close("mean", s.mean_a as f64, 0.2883333333, 1e-5);
    assert_close("ripple", s.ripple_a() as f64, 0.0380315719, 1e-4);
}

#[test]
fn c1_3_per_period_updates_reach_the_steady_state() {
    // Computed, CHECKS C1.3: per-period exact update from 0, end of period 1 / 5 / 20.
    // Each period: on for 0.3 ms (step response), then off for 0.2 ms freewheeling at 0.7 V.
    let c = CoilParams::new(0.040, 24.0)
        .with_diode_drop_v(0.7)
        .validate()
        .unwrap();
    let mut i = 0.0f64;
    let mut ends = Vec::new();
    for _ in 0..20 {
        i = c.current_after_a(12.0, 20.0, i as f32, 0.3e-3).unwrap() as f64;
        // Off: the diode's -0.7 V as a step to -0.7/24 A (current stays positive here).
        i = rl_step(-0.7, 24.0, 0.040, i, 0.2e-3);
        ends.push(i);
    }
    assert_close("period 1", ends[0], 0.06975295409, 1e-5);
    assert_close("period 5", ends[4], 0.2090770671, 1e-5);
    assert_close("period 20", ends[19], 0.2684604372, 1e-5);
}

#[test]
fn c1_4_copper_resistance() {
    // IEC 60028:1925 (via K. C. Agrawal, Industrial Power Engineering and Applications
    // Handbook, Table 30.1): rho20 = 1/58 Ω mm²/m, alpha20 = 0.00393 /K.
    assert_eq!(lenz::coil::COPPER_ALPHA20_PER_K, 0.00393);
    let c = CoilParams::new(0.1, 24.0).validate().unwrap();
    for (t, want) in [
        (-40.0, 18.3408),
        (20.0, 24.0),
        (25.0, 24.4716),
        (85.0, 30.1308),
        (125.0, 33.9036),
    ] {
        assert_close(
            &format!("R({t})"),
            c.resistance_ohm(t).unwrap() as f64,
            want,
            1e-6,
        );
    }
    // Same coil specified as 24 Ω at 25 °C (computed from IEC 60028).
    let c25 = CoilParams::new(0.1, 24.0)
        .with_reference_temp_c(25.0)
        .validate()
        .unwrap();
    for (t, want, wrong) in [
        (-40.0, 17.98735, 17.8692),
        (85.0, 29.55014, 29.6592),
        (125.0, 33.25023, 33.432),
    ] {
        let got = c25.resistance_ohm(t).unwrap() as f64;
        assert_close(&format!("R25 coil at {t}"), got, want, 1e-6);
        // Negative test (CHECKS Findings 2): the wrong R25·(1 + a20·(T − 25)) differs.
        assert!((got - wrong).abs() > 0.05, "{t}: {got} must not be {wrong}");
    }
    // 100 m of 0.20 mm copper wire at 20 °C: rho20 · len / A = 54.88101486 Ω (computed).
    let area_mm2 = std::f64::consts::PI * 0.1 * 0.1;
    assert_close("wire", (1.0 / 58.0) * 100.0 / area_mm2, 54.88101486, 1e-6);
    // Inferred zero of the linear model: 1/a20 − 20 = 234.4529 °C (handbooks: 234.5).
    assert_close("zero", 1.0 / 0.00393 - 20.0, 234.4529, 1e-4);
    // Temperature from resistance: R = 30.0 Ω with R20 = 24 Ω → 83.61323 °C (computed).
    assert_close(
        "T(30 ohm)",
        c.temperature_from_resistance_c(30.0).unwrap() as f64,
        83.61323,
        1e-5,
    );
    // And from a steady current at a known voltage: 12 V / 30 Ω = 0.4 A.
    assert_close(
        "T(0.4 A at 12 V)",
        c.temperature_from_steady_current_c(12.0, 0.4).unwrap() as f64,
        83.61323,
        1e-5,
    );
    // The f64 helper agrees with the f32 model over the range.
    for t in [-40.0, 0.0, 60.0, 150.0] {
        assert_close(
            "helper",
            c25.resistance_ohm(t as f32).unwrap() as f64,
            copper_resistance(24.0, 25.0, t),
            1e-6,
        );
    }
}

#[test]
fn c1_5_pull_in() {
    // Published worked example (C. K. Alexander, M. N. O. Sadiku, Fundamentals of Electric
    // Circuits, §7.9, attribution from memory): 12 V, 150 Ω, 30 mH, pull-in 50 mA → 0.1962 ms.
    let c = CoilParams::new(0.030, 150.0).validate().unwrap();
    let t = c.pull_in_time_s(12.0, 20.0, 0.050).unwrap() as f64;
    assert_close("textbook pull-in", t, 0.1961658506e-3, 1e-5);
    assert!((t * 1e3 * 10_000.0).round() / 10_000.0 == 0.1962);

    // Demo relay (invented, computed): 12 V, R20 = 120 Ω, L = 0.3 H, I_pull = 75 mA.
    let relay = CoilParams::new(0.3, 120.0).validate().unwrap();
    for (temp, want, tol) in [
        (-40.0, 2.785012482e-3, 1e-5),
        (20.0, 3.465735903e-3, 1e-5),
        (85.0, 5.655791491e-3, 1e-4),
    ] {
        let got = relay.pull_in_time_s(12.0, temp, 0.075).unwrap() as f64;
        assert_close(&format!("relay pull-in at {temp}"), got, want, tol);
    }
    // 125 °C: I_inf 70.789 mA < 75 mA: never pulls in, and the error reports the steady current.
    match relay.pull_in_time_s(12.0, 125.0, 0.075) {
        Err(Error::Unreachable { limit, .. }) => {
            assert_close("limit", limit as f64, 0.070789, 1e-4)
        }
        other => panic!("expected unreachable, got {other:?}"),
    }
    // Minimum supply for pull-in at 125 °C: 12.71385 V (computed) — just below it fails,
    // just above it pulls in.
    assert!(relay.pull_in_time_s(12.70, 125.0, 0.075).is_err());
    assert!(relay.pull_in_time_s(12.73, 125.0, 0.075).is_ok());
    assert_close(
        "V_min",
        0.075 * relay.resistance_ohm(125.0).unwrap() as f64,
        12.71385,
        1e-5,
    );
}

#[test]
fn c1_2_estimator_exact_update_and_not_euler() {
    // Computed, CHECKS C1.2: a = exp(−Ts/τ) = 0.9417645336, (1 − a)/R = 0.002426477767 A/V,
    // i after 10 exact steps = 0.225594182 A; forward Euler 0.230692443 A (+2.26 %).
    use lenz::kernel::{EstimatorConfig, EstimatorState};
    let cfg = EstimatorConfig::new(&reference_coil(), 20.0, 100e-6).unwrap();
    let one_minus_a = cfg.on_step_q31() as f64 / 2f64.powi(31);
    assert!((1.0 - one_minus_a - 0.9417645336).abs() < 1e-7);
    let g = cfg.on_conductance_q16() as f64 / 65536.0 * 1e-3; // A/V
    assert_close("(1-a)/R", one_minus_a * g, 0.002426477767, 1e-5);
    let mut s = EstimatorState::new();
    for _ in 0..10 {
        cfg.update(&mut s, true, 12_000);
    }
    let i = s.current_ua() as f64 * 1e-6;
    assert_close("10 exact steps", i, 0.225594182, 1e-4);
    assert!(
        (i - 0.230692443).abs() > 0.004,
        "the estimator must not be forward Euler"
    );
}
