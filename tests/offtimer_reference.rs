//! Off-timer kernel against the f64 closed form of the switch-off decay (reference sheet
//! docs/references.md F2.1, "computed": closed form cross-checked numerically).
//!
//! The property: the timer never reports "released" while the f64 closed-form current is still
//! above the threshold, with a stated tolerance of 1 µA (the kernel's current unit). And, so
//! that a timer that never releases cannot pass: it releases no later than the closed form
//! allows for its documented margin (tracking) or table granularity (planned).

use lenz::{
    CoilParams,
    kernel::{
        OffStatus, OffTimerState, PLANNED_TABLE_LEN, PlannedOffTimerConfig, TrackingOffTimerConfig,
    },
    turnoff::{Clamp, SwitchOff},
};
use lenz_checks::turnoff64 as r64;
use proptest::prelude::*;

/// Stated tolerance of the "never early" property, A.
const TOL_A: f64 = 1e-6;

fn clamp_strategy() -> impl Strategy<Value = Clamp> {
    prop_oneof![
        (0.0f32..2.0).prop_map(|forward_v| Clamp::Diode { forward_v }),
        (1.0f32..100.0, 0.0f32..1.0)
            .prop_map(|(zener_v, forward_v)| Clamp::Zener { zener_v, forward_v }),
        (1.0f32..150.0).prop_map(|extra| Clamp::Switch { clamp_v: extra }),
        (0.0f32..500.0, 0.0f32..1.0).prop_map(|(resistance_ohm, forward_v)| Clamp::Resistor {
            resistance_ohm,
            forward_v
        }),
    ]
}

/// f64 loop `(resistance, constant voltage)` of a clamp for a winding `r` and supply `vs`.
fn loop64(clamp: &Clamp, r: f64, vs: f64) -> (f64, f64) {
    match *clamp {
        Clamp::Diode { forward_v } => (r, forward_v as f64),
        Clamp::Zener { zener_v, forward_v } => (r, zener_v as f64 + forward_v as f64),
        Clamp::Switch { clamp_v } => (r, clamp_v as f64 - vs),
        Clamp::Resistor {
            resistance_ohm,
            forward_v,
        } => (r + resistance_ohm as f64, forward_v as f64),
        Clamp::Unclamped { .. } => unreachable!(),
    }
}

fn with_supply(clamp: Clamp, vs: f32) -> Clamp {
    match clamp {
        Clamp::Switch { clamp_v } => Clamp::Switch {
            clamp_v: vs + clamp_v,
        },
        other => other,
    }
}

#[test]
fn tracking_releases_on_the_closed_form_tick() {
    // Demo valve (invented), 24 V zener + 0.7 V: 75 mA is reached after 2.198044883 ms
    // (CHECKS C2.2, computed), so with 100 us ticks the first tick at or after it is the 22nd.
    let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
    let clamp = Clamp::Zener {
        zener_v: 24.0,
        forward_v: 0.7,
    };
    let t = TrackingOffTimerConfig::new(&coil, 20.0, 100e-6, &clamp, 0.075).unwrap();
    let mut s = OffTimerState::new();
    t.start(&mut s, 750_000);
    let k = (1..=1000)
        .find(|_| t.update(&mut s, 24_000) == OffStatus::Released)
        .unwrap();
    assert_eq!(k, 22);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn tracking_never_early_and_not_late(
        l in 1e-3f32..10.0, r in 1.0f32..1000.0, vs in 1.0f32..50.0,
        clamp in clamp_strategy(), ratio_exp in -3.0f32..-0.5,
        i0 in 0.01f32..5.0, thr_frac in 0.02f32..0.9,
    ) {
        let clamp = with_supply(clamp, vs);
        let coil = CoilParams::new(l, r).validate().unwrap();
        let (lr, vc) = loop64(&clamp, r as f64, vs as f64);
        let tau = l as f64 / lr;
        let tick = (tau * 10f64.powf(ratio_exp as f64)) as f32;
        let thr = thr_frac * i0;
        let Ok(timer) = TrackingOffTimerConfig::new(&coil, 20.0, tick, &clamp, thr) else {
            // Only a threshold too close to the margin may be refused.
            prop_assume!(false);
            unreachable!()
        };
        let i0_ua = (i0 as f64 * 1e6).round() as i32;
        let i0_a = i0_ua as f64 * 1e-6;
        let thr_a = timer.threshold_ua() as f64 * 1e-6;
        let supply_mv = (vs * 1000.0).round() as i32;
        // The kernel sees the supply in whole millivolts: use the same in the reference.
        let vc = if let Clamp::Switch { clamp_v } = clamp {
            clamp_v as f64 - supply_mv as f64 * 1e-3
        } else {
            vc
        };
        let mut s = OffTimerState::new();
        timer.start(&mut s, i0_ua);
        let margin_a = timer.margin_ua(i0_ua) as f64 * 1e-6;
        // Latest allowed release: the closed-form time to (threshold − margin − 1 uA), plus
        // one tick.
        let late_target = thr_a - margin_a - TOL_A;
        prop_assume!(late_target > 0.0);
        let t_late = r64::time_to(l as f64, lr, vc, i0_a, late_target).max(0.0);
        let k_late = (t_late / tick as f64).ceil() as u64 + 1;
        let mut released_at = None;
        for k in 1..=k_late + 2 {
            if timer.update(&mut s, supply_mv) == OffStatus::Released {
                released_at = Some(k);
                break;
            }
        }
        let k = released_at.expect("released");
        let i_ref = r64::current(l as f64, lr, vc, i0_a, k as f64 * tick as f64);
        prop_assert!(i_ref <= thr_a + TOL_A, "early at tick {k}: closed form {i_ref} A > {thr_a} A");
        prop_assert!(k <= k_late, "late: tick {k} > {k_late}");
    }

    #[test]
    fn planned_never_early_and_not_late(
        l in 1e-3f32..10.0, r in 1.0f32..1000.0, vs in 1.0f32..50.0,
        clamp in clamp_strategy(), ratio_exp in -3.0f32..-0.5,
        max_a in 0.05f32..5.0, thr_frac in 0.01f32..0.5, start_frac in 0.0f32..1.0,
    ) {
        let clamp = with_supply(clamp, vs);
        let (lr, vc) = loop64(&clamp, r as f64, vs as f64);
        let tau = l as f64 / lr;
        let tick = (tau * 10f64.powf(ratio_exp as f64)) as f32;
        let thr = thr_frac * max_a;
        let plan = SwitchOff::new(l, r, vs, max_a, clamp).unwrap();
        let timer = PlannedOffTimerConfig::new(&plan, thr, max_a, tick).unwrap();
        let i0_ua = (start_frac as f64 * max_a as f64 * 1e6).floor() as i32;
        let i0_a = i0_ua as f64 * 1e-6;
        let mut s = OffTimerState::new();
        timer.start(&mut s, i0_ua);
        // Latest allowed: the decay from the next breakpoint (at most a factor
        // (max/thr)^(1/16) above i0, or the first breakpoint for a start at or below the
        // threshold), plus rounding up and the phase tick.
        let step = (max_a as f64 / thr as f64).powf(1.0 / PLANNED_TABLE_LEN as f64);
        let from = i0_a.max(thr as f64) * step + 2e-6;
        let t_late = r64::time_to(l as f64, lr, vc, from, thr as f64).max(0.0);
        let k_late = (t_late * (1.0 + 2e-5) / tick as f64).ceil() as u64 + 2;
        let mut released_at = None;
        for k in 1..=k_late + 2 {
            if timer.update(&mut s) == OffStatus::Released {
                released_at = Some(k);
                break;
            }
        }
        let k = released_at.expect("released");
        // Never early even if the switch opened a whole tick before the timer started.
        let elapsed = (k - 1) as f64 * tick as f64;
        let i_ref = r64::current(l as f64, lr, vc, i0_a, elapsed);
        prop_assert!(i_ref <= thr as f64 + TOL_A, "early at tick {k}: {i_ref} A > {thr} A");
        prop_assert!(k <= k_late, "late: tick {k} > {k_late}");
    }

    /// The plan-side constructors never panic on any input.
    #[test]
    fn constructors_never_panic(
        l in prop_oneof![any::<f32>(), 1e-3f32..10.0],
        r in prop_oneof![any::<f32>(), 1.0f32..1000.0],
        a in prop_oneof![any::<f32>(), 0.0f32..50.0],
        tick in prop_oneof![any::<f32>(), 1e-6f32..1e-2],
        thr in any::<f32>(), max in any::<f32>(), kind in 0u8..5,
    ) {
        let clamp = match kind {
            0 => Clamp::Diode { forward_v: a },
            1 => Clamp::Zener { zener_v: a, forward_v: 0.7 },
            2 => Clamp::Switch { clamp_v: a },
            3 => Clamp::Resistor { resistance_ohm: a, forward_v: 0.7 },
            _ => Clamp::Unclamped { capacitance_f: a * 1e-12 },
        };
        if let Ok(coil) = CoilParams::new(l, r).validate()
            && let Ok(t) = TrackingOffTimerConfig::new(&coil, 20.0, tick, &clamp, thr) {
                let mut s = OffTimerState::new();
                t.start(&mut s, i32::MAX);
                let _ = t.update(&mut s, i32::MIN);
            }
        if let Ok(plan) = SwitchOff::new(l, r, 12.0, 0.1, clamp)
            && let Ok(p) = PlannedOffTimerConfig::new(&plan, thr, max, tick) {
                let mut s = OffTimerState::new();
                p.start(&mut s, i32::MIN);
                let _ = p.update(&mut s);
            }
    }
}
