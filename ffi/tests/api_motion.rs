//! The C API of the armature and motor kernels and of the boost loop gives exactly what the
//! Rust originals give: the same outputs tick by tick on any raw configuration and any inputs,
//! the raw values back exactly, and a status instead of any access for null pointers.
//!
//! The calls go through the `extern "C"` functions with uninitialised storage, as C code
//! makes them. Proptest seeds are fixed: every run draws the same cases.

#![allow(
    clippy::undocumented_unsafe_blocks,
    reason = "every unsafe call here passes pointers to live locals of the right type, or null"
)]

use std::convert::Infallible;
use std::ptr;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::{BoostLoop, BoostLoopConfig, BoostLoopState};
use lenz::kernel::{
    BridgeCommand, BridgeGuardConfig, BridgeGuardState, BridgeMode, JamConfig, JamState, JamStatus,
    Motion, MotorFault, MovementConfig, MovementState, SpeedEstimatorConfig, SpeedEstimatorState,
};
use lenz_ffi::*;
use proptest::prelude::*;

mod common;
use common::{config, duty_raw, ok, storage};

fn movement_raw() -> impl Strategy<Value = LenzMovementRaw> {
    (
        any::<i32>(),
        0u16..5,
        any::<i32>(),
        any::<i32>(),
        0u32..80,
        0u32..80,
    )
        .prop_map(|(h, p, peak, rel, d, rd)| LenzMovementRaw {
            hysteresis_ua: h,
            persistence: p,
            min_peak_ua: peak,
            min_release_ua: rel,
            deadline_ticks: d,
            release_deadline_ticks: rd,
        })
}

fn jam_raw() -> impl Strategy<Value = LenzJamRaw> {
    (
        (any::<i32>(), any::<i32>(), 0u32..8, 0u32..8),
        (any::<i32>(), 0u32..8, any::<i32>(), any::<i32>()),
    )
        .prop_map(|((jc, js, p, b), (oc, ot, opc, od))| LenzJamRaw {
            jam_current_ua: jc,
            jam_speed_mrad_s: js,
            persist_ticks: p,
            blank_ticks: b,
            overload_current_ua: oc,
            overload_ticks: ot,
            open_current_ua: opc,
            open_duty_q16: od,
        })
}

fn bridge_raw() -> impl Strategy<Value = LenzBridgeGuardRaw> {
    (
        any::<i32>(),
        any::<i32>(),
        any::<i32>(),
        0u16..4,
        0u16..8,
        any::<i32>(),
        any::<i32>(),
    )
        .prop_map(|(s, b, r, d, p, c, m)| LenzBridgeGuardRaw {
            slew_q16: s,
            brake_speed_mrad_s: b,
            reverse_speed_mrad_s: r,
            dead_ticks: d,
            probe_ticks: p,
            resume_duty_q24: c,
            resume_margin_mrad_s: m,
        })
}

/// What the detector said, as the C API says it.
fn motion(m: Motion) -> LenzMotion {
    let (kind, tick) = match m {
        Motion::Idle => (LenzMotionKind::Idle, 0),
        Motion::Waiting => (LenzMotionKind::Waiting, 0),
        Motion::Moving => (LenzMotionKind::Moving, 0),
        Motion::Seated { tick } => (LenzMotionKind::Seated, tick),
        Motion::NoMotion => (LenzMotionKind::NoMotion, 0),
        Motion::Decaying => (LenzMotionKind::Decaying, 0),
        Motion::DroppedOut { tick } => (LenzMotionKind::DroppedOut, tick),
        Motion::NoDropOut => (LenzMotionKind::NoDropOut, 0),
    };
    LenzMotion { kind, tick }
}

/// The jam verdict, as the C API says it.
fn jam_status(s: JamStatus) -> LenzJamStatus {
    match s {
        JamStatus::Idle => LenzJamStatus::Idle,
        JamStatus::Blanking => LenzJamStatus::Blanking,
        JamStatus::Running => LenzJamStatus::Running,
        JamStatus::Fault(MotorFault::Jam) => LenzJamStatus::FaultJam,
        JamStatus::Fault(MotorFault::Overload) => LenzJamStatus::FaultOverload,
        JamStatus::Fault(MotorFault::OpenWinding) => LenzJamStatus::FaultOpenWinding,
    }
}

/// The bridge command, as the C API says it.
fn bridge_command(c: BridgeCommand) -> LenzBridgeCommand {
    LenzBridgeCommand {
        mode: match c.mode {
            BridgeMode::Coast => LenzBridgeMode::Coast,
            BridgeMode::Forward => LenzBridgeMode::Forward,
            BridgeMode::Reverse => LenzBridgeMode::Reverse,
            BridgeMode::Brake => LenzBridgeMode::Brake,
        },
        duty_q16: c.duty_q16,
    }
}

/// A PWM that takes every write, of a given resolution (the Rust loop's output).
struct Pwm {
    max: u16,
    duty: u16,
}

impl ErrorType for Pwm {
    type Error = Infallible;
}

impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        self.max
    }

    fn set_duty_cycle(&mut self, d: u16) -> Result<(), Infallible> {
        self.duty = d;
        Ok(())
    }
}

proptest! {
    #![proptest_config(config(0x6c65_6e7a_ff11, 256))]

    #[test]
    fn movement_through_c_equals_rust(
        raw in movement_raw(),
        steps in prop::collection::vec((0u8..12, any::<i32>()), 1..80),
    ) {
        let rust = MovementConfig::from_raw(raw.into());
        let mut rs = MovementState::new();
        let mut c = storage::<LenzMovementConfig>();
        let mut cs = storage::<LenzMovementState>();
        ok(unsafe { lenz_movement_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_movement_state_init(cs.as_mut_ptr()) });
        for (cmd, current_ua) in steps {
            match cmd {
                0 => {
                    rust.start(&mut rs);
                    ok(unsafe { lenz_movement_start(c.as_ptr(), cs.as_mut_ptr()) });
                }
                1 => {
                    rust.release(&mut rs);
                    ok(unsafe { lenz_movement_release(c.as_ptr(), cs.as_mut_ptr()) });
                }
                _ => {}
            }
            let want = motion(rust.update(&mut rs, current_ua));
            let mut got = storage::<LenzMotion>();
            ok(unsafe { lenz_movement_update(c.as_ptr(), cs.as_mut_ptr(), current_ua, got.as_mut_ptr()) });
            prop_assert_eq!(unsafe { got.assume_init() }, want);
        }
        let mut back = storage::<LenzMovementRaw>();
        ok(unsafe { lenz_movement_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
    }

    #[test]
    fn speed_through_c_equals_rust(
        raw in (any::<i32>(), any::<i32>(), any::<i32>(), any::<i32>()),
        start in (any::<i32>(), any::<i32>()),
        steps in prop::collection::vec((any::<bool>(), any::<i32>(), any::<i32>(), any::<i32>()), 1..64),
    ) {
        let raw = LenzSpeedEstimatorRaw {
            gain_end_q24: raw.0,
            gain_start_q24: raw.1,
            inv_k_q16: raw.2,
            filter_q31: raw.3,
        };
        let rust = SpeedEstimatorConfig::from_raw(raw.into());
        let mut rs = SpeedEstimatorState::with_current_ua(start.0, start.1);
        let mut c = storage::<LenzSpeedEstimatorConfig>();
        let mut cs = storage::<LenzSpeedEstimatorState>();
        ok(unsafe { lenz_speed_estimator_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_speed_estimator_state_init(cs.as_mut_ptr(), start.0, start.1) });
        for (coast, duty, supply, current) in steps {
            let (mut got, mut now) = (0, 0);
            let want = if coast {
                ok(unsafe { lenz_speed_estimator_hold(c.as_ptr(), cs.as_mut_ptr(), current, &mut got) });
                rust.hold(&mut rs, current)
            } else {
                ok(unsafe { lenz_speed_estimator_update(c.as_ptr(), cs.as_mut_ptr(), duty, supply, current, &mut got) });
                rust.update(&mut rs, duty, supply, current)
            };
            ok(unsafe { lenz_speed_estimator_state_speed_mrad_s(cs.as_ptr(), &mut now) });
            prop_assert_eq!(got, want);
            prop_assert_eq!(now, rs.speed_mrad_s());
        }
        let mut back = storage::<LenzSpeedEstimatorRaw>();
        ok(unsafe { lenz_speed_estimator_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
    }

    #[test]
    fn jam_through_c_equals_rust(
        raw in jam_raw(),
        steps in prop::collection::vec((prop_oneof![Just(0), -65_536i32..=65_536, any::<i32>()], any::<i32>(), any::<i32>()), 1..64),
    ) {
        let rust = JamConfig::from_raw(raw.into());
        let mut rs = JamState::new();
        let mut c = storage::<LenzJamConfig>();
        let mut cs = storage::<LenzJamState>();
        ok(unsafe { lenz_jam_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_jam_state_init(cs.as_mut_ptr()) });
        for (duty, current, speed) in steps {
            let want = jam_status(rust.update(&mut rs, duty, current, speed));
            let mut got = storage::<LenzJamStatus>();
            ok(unsafe { lenz_jam_update(c.as_ptr(), cs.as_mut_ptr(), duty, current, speed, got.as_mut_ptr()) });
            prop_assert_eq!(unsafe { got.assume_init() }, want);
        }
        let mut back = storage::<LenzJamRaw>();
        ok(unsafe { lenz_jam_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
    }

    #[test]
    fn bridge_through_c_equals_rust(
        raw in bridge_raw(),
        steps in prop::collection::vec((prop_oneof![Just(0), -65_536i32..=65_536, any::<i32>()], any::<i32>()), 1..64),
    ) {
        let rust = BridgeGuardConfig::from_raw(raw.into());
        let mut rs = BridgeGuardState::new();
        let mut c = storage::<LenzBridgeGuardConfig>();
        let mut cs = storage::<LenzBridgeGuardState>();
        ok(unsafe { lenz_bridge_guard_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_bridge_guard_state_init(cs.as_mut_ptr()) });
        for (request, speed) in steps {
            let want = rust.update(&mut rs, request, speed);
            let mut got = storage::<LenzBridgeCommand>();
            ok(unsafe { lenz_bridge_guard_update(c.as_ptr(), cs.as_mut_ptr(), request, speed, got.as_mut_ptr()) });
            let got = unsafe { got.assume_init() };
            prop_assert_eq!(got, bridge_command(want));
        }
        let mut back = storage::<LenzBridgeGuardRaw>();
        ok(unsafe { lenz_bridge_guard_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
    }
}

proptest! {
    #![proptest_config(config(0x6c65_6e7a_ff12, 96))]

    /// The C loop, state kept apart between calls, against `BoostLoop` on a PWM of the
    /// limiter's resolution.
    #[test]
    fn boost_loop_through_c_equals_rust(
        limiter in duty_raw(1u16..=4095),
        gains in (any::<u16>(), any::<i32>(), any::<i32>()),
        steps in prop::collection::vec((prop::bool::weighted(0.9), any::<u16>(), any::<u16>()), 1..64),
    ) {
        let raw = LenzBoostLoopRaw {
            limiter,
            target_counts: gains.0,
            kp_q16: gains.1,
            ki_q16: gains.2,
        };
        let rust_cfg = BoostLoopConfig::from_raw(raw.into());
        let pwm = Pwm { max: raw.limiter.full_scale, duty: 0 };
        let Ok(mut rust) = BoostLoop::new(&rust_cfg, pwm) else {
            return Err(TestCaseError::fail("the Rust loop did not start"));
        };
        let mut c = storage::<LenzBoostLoopConfig>();
        let mut cs = storage::<LenzBoostLoopState>();
        ok(unsafe { lenz_boost_loop_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_boost_loop_state_init(cs.as_mut_ptr()) });
        for (enable, vin, vout) in steps {
            let want = rust.update(enable, vin, vout).ok();
            let (mut got, mut ov) = (u16::MAX, false);
            ok(unsafe { lenz_boost_loop_update(c.as_ptr(), cs.as_mut_ptr(), enable, vin, vout, &mut got) });
            ok(unsafe { lenz_boost_loop_state_overvoltage(c.as_ptr(), cs.as_ptr(), &mut ov) });
            prop_assert_eq!(Some(got), want);
            prop_assert_eq!(got, rust.output().duty);
            prop_assert_eq!(ov, rust.overvoltage());
        }
        let mut back = storage::<LenzBoostLoopRaw>();
        ok(unsafe { lenz_boost_loop_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
    }
}

/// Null pointers give `LENZ_STATUS_NULL_POINTER` and nothing is written.
#[test]
fn null_pointers_are_rejected_and_change_nothing() {
    use LenzStatus::NullPointer;
    let mut c = storage::<LenzMovementConfig>();
    let mut s = storage::<LenzMovementState>();
    let raw = LenzMovementRaw {
        hysteresis_ua: 25_000,
        persistence: 3,
        min_peak_ua: 200_000,
        min_release_ua: 50_000,
        deadline_ticks: 200,
        release_deadline_ticks: 150,
    };
    let (mut i, mut d) = (0i32, 0u16);
    unsafe {
        assert_eq!(lenz_movement_init(ptr::null_mut(), &raw), NullPointer);
        assert_eq!(lenz_movement_init(c.as_mut_ptr(), ptr::null()), NullPointer);
        assert_eq!(lenz_movement_state_init(ptr::null_mut()), NullPointer);
        ok(lenz_movement_init(c.as_mut_ptr(), &raw));
        ok(lenz_movement_state_init(s.as_mut_ptr()));
        assert_eq!(
            lenz_movement_start(ptr::null(), s.as_mut_ptr()),
            NullPointer
        );
        assert_eq!(
            lenz_movement_release(c.as_ptr(), ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_movement_update(c.as_ptr(), s.as_mut_ptr(), 5, ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_speed_estimator_update(ptr::null(), ptr::null_mut(), 0, 0, 0, &mut i),
            NullPointer
        );
        assert_eq!(
            lenz_speed_estimator_hold(ptr::null(), ptr::null_mut(), 0, &mut i),
            NullPointer
        );
        assert_eq!(
            lenz_speed_estimator_state_speed_mrad_s(ptr::null(), &mut i),
            NullPointer
        );
        assert_eq!(
            lenz_speed_estimator_state_init(ptr::null_mut(), 0, 0),
            NullPointer
        );
        assert_eq!(lenz_jam_init(ptr::null_mut(), ptr::null()), NullPointer);
        assert_eq!(lenz_jam_state_init(ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_jam_update(ptr::null(), ptr::null_mut(), 0, 0, 0, ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_bridge_guard_init(ptr::null_mut(), ptr::null()),
            NullPointer
        );
        assert_eq!(lenz_bridge_guard_state_init(ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_bridge_guard_update(ptr::null(), ptr::null_mut(), 0, 0, ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_boost_loop_init(ptr::null_mut(), ptr::null()),
            NullPointer
        );
        assert_eq!(lenz_boost_loop_state_init(ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_boost_loop_update(ptr::null(), ptr::null_mut(), true, 0, 0, &mut d),
            NullPointer
        );
        assert_eq!(
            lenz_boost_loop_state_overvoltage(ptr::null(), ptr::null(), ptr::null_mut()),
            NullPointer
        );
    }
    assert_eq!((i, d), (0, 0), "an out value was written");
}

/// The opaque storage is exactly as large as the Rust value and aligned for it.
#[test]
fn opaque_storage_matches_the_rust_types() {
    fn fits<S, T>(name: &str) {
        assert_eq!(
            size_of::<S>(),
            size_of::<T>().next_multiple_of(4),
            "{name}: size"
        );
        assert!(align_of::<S>() >= align_of::<T>(), "{name}: alignment");
    }
    fits::<LenzMovementConfig, MovementConfig>("movement config");
    fits::<LenzMovementState, MovementState>("movement state");
    fits::<LenzSpeedEstimatorConfig, SpeedEstimatorConfig>("speed config");
    fits::<LenzSpeedEstimatorState, SpeedEstimatorState>("speed state");
    fits::<LenzJamConfig, JamConfig>("jam config");
    fits::<LenzJamState, JamState>("jam state");
    fits::<LenzBridgeGuardConfig, BridgeGuardConfig>("bridge config");
    fits::<LenzBridgeGuardState, BridgeGuardState>("bridge state");
    fits::<LenzBoostLoopConfig, BoostLoopConfig>("boost loop config");
    fits::<LenzBoostLoopState, BoostLoopState>("boost loop state");
}
