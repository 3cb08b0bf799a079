//! Properties over arbitrary readings and raw settings: no panic, the output only ever at 0,
//! the hold duty or full drive (a fixed-duty hold), off while faulted; and the RAM per channel.

extern crate std;

use core::mem::size_of;

use proptest::prelude::*;

use super::support::*;
use crate::drive::{
    BoostLoopConfig, BoostLoopState, CoilDriver, CoilDriverConfig, CoilDriverRaw, CoilDriverState,
    CoilPhase, CoilSense, HoldEstimatorRaw, HoldMode, MotorDriver, MotorDriverConfig,
    MotorDriverState, PullInSource,
};
use crate::kernel::CURRENT_LIMIT_UA;

/// The sizes the docs state (`drive` module docs, [`CoilDriver`], [`BoostLoop`]).
#[test]
fn ram_per_channel() {
    assert_eq!(size_of::<CoilDriverState>(), 128);
    assert_eq!(size_of::<BoostLoopState>(), 24);
    assert_eq!(size_of::<CoilDriverConfig>(), 880);
    assert_eq!(size_of::<BoostLoopConfig>(), 424);
    // A driver with a zero-sized output and a borrowed configuration: the state, the
    // reference and 10 bytes of resolution and hold duty, padded to the state's 8-byte
    // alignment (144 bytes on a 32-bit target, 152 on a 64-bit host).
    struct Nothing;
    assert_eq!(
        size_of::<CoilDriver<&CoilDriverConfig, Nothing>>(),
        (128 + size_of::<usize>() + 10).next_multiple_of(8)
    );
    // The bridge motor driver: its state, the configuration, and a driver with zero-sized
    // outputs and a borrowed configuration (state, reference and the 8-byte PWM resolution,
    // 4-byte aligned: 68 bytes on a 32-bit target, 72 on a 64-bit host).
    assert_eq!(size_of::<MotorDriverState>(), 56);
    assert_eq!(size_of::<MotorDriverConfig>(), 92);
    assert_eq!(
        size_of::<MotorDriver<&MotorDriverConfig, Nothing, Nothing, Nothing>>(),
        56 + size_of::<usize>() + 8
    );
}

fn any_sense() -> impl Strategy<Value = (bool, CoilSense)> {
    (any::<bool>(), any::<u16>(), any::<u16>()).prop_map(|(d, c, s)| {
        (
            d,
            CoilSense {
                current_counts: c,
                supply_counts: s,
            },
        )
    })
}

/// Readings near the plausible ones half of the time, anything the rest.
fn mixed_sense() -> impl Strategy<Value = (bool, CoilSense)> {
    prop_oneof![
        any_sense(),
        (any::<bool>(), 90u16..1200, 2100u16..2700).prop_map(|(d, c, s)| (
            d,
            CoilSense {
                current_counts: c,
                supply_counts: s
            }
        )),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn no_panic_and_safe_outputs(
        clamp in 0usize..4, regulated in any::<bool>(),
        seq in proptest::collection::vec(mixed_sense(), 1..400),
    ) {
        let clamp = clamps()[clamp];
        let hold = if regulated { current_hold() } else { duty_hold(&clamp) };
        let cfg = config(clamp, hold);
        let mut drv = CoilDriver::new(&cfg, RecordingPwm::new(1000)).unwrap();
        let h = drv.hold_counts();
        let mut faulted_at = None;
        for (demand, sense) in seq {
            let phase = drv.update(demand, sense).unwrap();
            let d = drv.output().duty;
            prop_assert!(d <= 1000);
            if !regulated {
                prop_assert!(d == 0 || d == h || d == 1000, "duty {}", d);
            }
            prop_assert!((0..=CURRENT_LIMIT_UA).contains(&drv.estimate_ua()));
            if phase == CoilPhase::Faulted && faulted_at.is_none() {
                faulted_at = Some(drv.output().writes.len());
            }
            if let Some(n) = faulted_at {
                prop_assert_eq!(d, 0);
                prop_assert!(drv.output().writes[n..].iter().all(|w| *w == 0));
                prop_assert!(drv.fault().is_some());
            }
            if phase == CoilPhase::Idle || phase == CoilPhase::Releasing {
                prop_assert_eq!(d, 0);
            }
        }
    }

    #[test]
    fn raw_settings_never_panic(
        zero in any::<u16>(), mv_q16 in any::<i32>(), pull_in in any::<i32>(),
        source in any::<bool>(), min_t in any::<u32>(), max_t in any::<u32>(),
        mode in any::<bool>(), i_hold in any::<i32>(), kp in any::<i32>(), ki in any::<i32>(),
        step in any::<i32>(), g in any::<i32>(), dref in any::<u32>(), dr in any::<i32>(),
        bound in any::<i32>(), max in 1u16..=u16::MAX,
        seq in proptest::collection::vec(any_sense(), 1..200),
    ) {
        let base = config(clamps()[2], current_hold()).raw();
        let cfg = CoilDriverConfig::from_raw(CoilDriverRaw {
            hold: HoldEstimatorRaw {
                step_q31: step, conductance_q16: g, reference_duty_q16: dref,
                delta_r_q24: dr, error_bound_ua: bound,
            },
            supply_zero_counts: zero,
            supply_mv_per_count_q16: mv_q16,
            pull_in_ua: pull_in,
            pull_in_source: if source { PullInSource::Measured } else { PullInSource::Estimate },
            pull_in_min_ticks: min_t,
            pull_in_max_ticks: max_t,
            hold_mode: if mode { HoldMode::Current } else { HoldMode::Duty },
            hold_current_ua: i_hold,
            hold_kp_q32: kp,
            hold_ki_q32: ki,
            movement: None,
            ..base
        });
        // A resolution the plan cannot use is refused; any other runs.
        if let Ok(mut drv) = CoilDriver::new(&cfg, RecordingPwm::new(max)) {
            for (demand, sense) in seq {
                drv.update(demand, sense).unwrap();
                prop_assert!(drv.output().duty <= max);
            }
        }
    }
}

fn any_f32() -> impl Strategy<Value = f32> {
    prop_oneof![
        any::<f32>(),
        Just(f32::NAN),
        Just(f32::INFINITY),
        Just(-0.0f32),
        Just(f32::MIN_POSITIVE / 2.0),
        -1.0e3f32..1.0e3,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    /// The plan constructors over arbitrary f32 (NaN, ±inf, subnormals, huge): an error naming
    /// a parameter, or a configuration that drives without panic.
    #[test]
    fn plans_never_panic(
        which in 0usize..12, v in any_f32(), w in any_f32(), clamp in 0usize..4,
        regulated in any::<bool>(),
    ) {
        let c = clamps()[clamp];
        let mut p = params(c, if regulated { current_hold() } else { duty_hold(&c) });
        match which {
            0 => p.temp_c = v,
            1 => p.tick_s = v,
            2 => p.release_a = v,
            3 => p.pull_in_a = v,
            4 => { p.pull_in_min_s = v; p.pull_in_max_s = w; }
            5 => p.pwm_frequency_hz = v,
            6 => p.supply_v_per_count = v,
            7 => p.supply_zero_counts = v,
            8 => p.hold = crate::drive::Hold::Duty { duty: v },
            9 => p.hold = crate::drive::Hold::Current {
                current_a: v, kp_per_a: w, ki_per_a_tick: 0.01,
            },
            10 => { p.monitor.abs_tol_a = v; p.monitor.rel_tol = w; }
            _ => p.supply_v = match crate::bounds::Range::new("supply_v", v, w) {
                Ok(r) => r,
                Err(_) => return Ok(()),
            },
        }
        match CoilDriverConfig::new(&p) {
            Err(e) => prop_assert!(!e.param().is_empty()),
            Ok(cfg) => {
                prop_assert!(cfg.hold().error_bound_ua() >= 0);
                let mut drv = CoilDriver::new(&cfg, RecordingPwm::new(1000));
                if let Ok(drv) = drv.as_mut() {
                    for k in 0..300u16 {
                        let s = CoilSense { current_counts: k * 3, supply_counts: 2400 };
                        drv.update(k < 200, s).unwrap();
                    }
                }
            }
        }
    }
}
