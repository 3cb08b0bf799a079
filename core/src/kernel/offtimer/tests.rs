//! Unit tests of the off-timers.

use super::*;
use crate::CoilParams;
use crate::kernel::OffPath;
use crate::kernel::estimator::EstimatorRaw;
use crate::turnoff::{Clamp, SwitchOff};
use proptest::prelude::*;

#[test]
fn state_fits_budget() {
    assert!(core::mem::size_of::<OffTimerState>() <= 32);
}

/// The raw values carry every field (for both modes).
#[test]
fn raw_round_trip() {
    let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
    let clamp = Clamp::Zener {
        zener_v: 24.0,
        forward_v: 0.7,
    };
    let t = TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &clamp, 0.075).unwrap();
    assert_eq!(TrackingOffTimerConfig::from_raw(t.raw()), t);
    let raw = t.raw();
    assert_eq!(
        (t.threshold_ua(), t.base_margin_ua(), t.margin_shift()),
        (raw.threshold_ua, raw.base_margin_ua, raw.margin_shift)
    );
    assert_eq!(
        t.margin_ua(1 << 20),
        t.base_margin_ua() + ((1 << 20) >> t.margin_shift())
    );
    let plan = SwitchOff::new(0.12, 32.0, 24.0, 0.75, clamp).unwrap();
    let p = PlannedOffTimerConfig::new(&plan, 0.075, 0.8, 1e-4).unwrap();
    assert_eq!(PlannedOffTimerConfig::from_raw(p.raw()), p);
}

#[test]
fn not_yet_before_start() {
    let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
    let t = TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &Clamp::Diode { forward_v: 0.7 }, 0.075)
        .unwrap();
    let mut s = OffTimerState::new();
    for _ in 0..1000 {
        assert_eq!(t.update(&mut s, 24_000), OffStatus::NotYet);
    }
    let plan = SwitchOff::new(0.12, 32.0, 24.0, 0.75, Clamp::Diode { forward_v: 0.7 }).unwrap();
    let p = PlannedOffTimerConfig::new(&plan, 0.075, 0.8, 1e-4).unwrap();
    let mut s = OffTimerState::new();
    assert_eq!(p.update(&mut s), OffStatus::NotYet);
    // Above the planned range: never.
    p.start(&mut s, 900_000);
    for _ in 0..100_000 {
        assert_eq!(p.update(&mut s), OffStatus::NotYet);
    }
}

#[test]
fn rejects_bad_plans() {
    let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
    let d = Clamp::Diode { forward_v: 0.7 };
    let unclamped = Clamp::Unclamped {
        capacitance_f: 100e-12,
    };
    assert_eq!(
        TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &unclamped, 0.075)
            .unwrap_err()
            .param(),
        "clamp"
    );
    assert_eq!(
        TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &d, 1e-6)
            .unwrap_err()
            .param(),
        "threshold_a"
    );
    let plan = SwitchOff::new(0.12, 32.0, 24.0, 0.75, d).unwrap();
    assert_eq!(
        PlannedOffTimerConfig::new(&plan, 0.075, 0.05, 1e-4)
            .unwrap_err()
            .param(),
        "max_current_a"
    );
}

proptest! {
    #[test]
    fn raw_tables_never_panic(
        bps in proptest::array::uniform16(any::<i32>()),
        ticks in proptest::array::uniform16(any::<u32>()),
        start in any::<i32>(), n in 0usize..300,
    ) {
        let p = PlannedOffTimerConfig::from_raw(PlannedOffTimerRaw {
            breakpoints_ua: bps,
            ticks,
        });
        let mut s = OffTimerState::new();
        p.start(&mut s, start);
        for _ in 0..n {
            let _ = p.update(&mut s);
        }
    }

    #[test]
    fn raw_tracking_never_panics_and_decides_as_specified(
        step in any::<i32>(), g in any::<i32>(), clamp in any::<i32>(), coupled in any::<bool>(),
        thr in any::<i32>(), base in any::<i32>(), shift in any::<u32>(), start in any::<i32>(),
        supplies in proptest::collection::vec(any::<i32>(), 1..50),
    ) {
        let estimator = EstimatorRaw {
            on_step_q31: step, on_conductance_q16: g, switch_drop_mv: 0,
            off: OffPath {
                step_q31: step, conductance_q16: g, clamp_mv: clamp, supply_coupled: coupled,
            },
        };
        let t = TrackingOffTimerConfig::from_raw(TrackingOffTimerRaw {
            estimator, threshold_ua: thr, base_margin_ua: base, margin_shift: shift,
        });
        let mut s = OffTimerState::new();
        t.start(&mut s, start);
        let margin = i64::from(t.margin_ua(start));
        for v in supplies {
            let status = t.update(&mut s, v);
            // The decision as specified: estimate plus margin, saturated to the i32 range,
            // at or below the threshold (computed: exact integer identity).
            let sum = (i64::from(s.estimate_ua()) + margin).clamp(i32::MIN.into(), i32::MAX.into());
            let want = if sum <= i64::from(thr) { OffStatus::Released } else { OffStatus::NotYet };
            prop_assert_eq!(status, want);
        }
    }
}
