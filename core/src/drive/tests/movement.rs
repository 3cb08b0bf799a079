//! The coil driver with the armature movement detector: hold on the seating, a stuck armature
//! latched as a fault, the maximum pull-in time as the fallback. The current is a trace with
//! the pull-in's dip (rise, fall while the armature moves, rise again after the seating).

extern crate std;

use embedded_hal_mock::eh1::pwm::{Mock as PwmMock, Transaction as Pwm};

use super::support::*;
use crate::drive::{CoilDriver, CoilDriverConfig, CoilFault, CoilPhase, CoilSense};
use crate::kernel::{Motion, MovementConfig, MovementParams};
use crate::turnoff::Clamp;

const ZENER: Clamp = Clamp::Zener {
    zener_v: 24.0,
    forward_v: 0.7,
};

/// Detector: 20 mA hysteresis, 3 samples, peak at least 0.2 A, seated within `deadline_s`.
fn with_detector(deadline_s: f32) -> CoilDriverConfig {
    let m = MovementConfig::new(&MovementParams {
        tick_s: TICK_S,
        hysteresis_a: 0.02,
        persistence: 3,
        min_peak_a: 0.2,
        min_release_a: 0.05,
        pull_in_deadline_s: deadline_s,
        release_deadline_s: 0.04,
    })
    .unwrap();
    config(ZENER, duty_hold(&ZENER)).with_movement(m)
}

/// Pull-in current at detector tick `k`: up 12 mA per tick to 0.36 A at tick 30, down 6 mA
/// per tick to the valley, 0.27 A at tick 45 (the seating), then up 10 mA per tick.
fn dip(k: u32) -> f64 {
    let k = f64::from(k);
    if k <= 30.0 {
        0.012 * k
    } else if k <= 45.0 {
        0.36 - 0.006 * (k - 30.0)
    } else {
        0.27 + 0.01 * (k - 45.0)
    }
}

/// Up 12 mA per tick, flat at 0.6 A: no motion.
fn flat(k: u32) -> f64 {
    (0.012 * f64::from(k)).min(0.6)
}

fn sense(i_a: f64) -> CoilSense {
    CoilSense {
        current_counts: counts_of(i_a),
        supply_counts: supply_counts(24.0),
    }
}

/// The driver's tick `c` (0: the demand switches on) reads the detector's tick `c − 1`.
fn reading(trace: fn(u32) -> f64, c: u32) -> CoilSense {
    sense(trace(c.saturating_sub(1)))
}

#[test]
fn hold_on_the_seating() {
    let cfg = with_detector(0.02);
    let h = ((cfg.hold().reference_duty_q16() as f64) * 1000.0 / 65536.0).round() as u16;
    let mut drv = CoilDriver::new(
        &cfg,
        PwmMock::new(&[
            Pwm::max_duty_cycle(1000),
            Pwm::set_duty_cycle(0),
            Pwm::set_duty_cycle(1000),
            Pwm::set_duty_cycle(h),
        ]),
    )
    .unwrap();
    let mut first_hold = None;
    for c in 0..60 {
        let p = drv.update(true, reading(dip, c)).unwrap();
        if p == CoilPhase::Hold && first_hold.is_none() {
            first_hold = Some(c);
        }
    }
    // The valley at detector tick 45; three samples more than 20 mA above it (ticks 48, 49,
    // 50) decide: the driver's tick 51 switches to hold.
    assert_eq!(first_hold, Some(51));
    assert_eq!(drv.motion(), Motion::Seated { tick: 45 });
    assert!(!drv.pull_in_timed_out());
    assert_eq!(drv.fault(), None);
    drv.free().done();
}

#[test]
fn a_stuck_armature_latches_off() {
    let cfg = with_detector(0.02);
    let deadline = cfg.movement().unwrap().deadline_ticks();
    assert_eq!(deadline, 200);
    let mut drv = CoilDriver::new(
        &cfg,
        PwmMock::new(&[
            Pwm::max_duty_cycle(1000),
            Pwm::set_duty_cycle(0),
            Pwm::set_duty_cycle(1000),
            Pwm::set_duty_cycle(0),
        ]),
    )
    .unwrap();
    let mut fault_at = None;
    for c in 0..400 {
        let p = drv.update(true, reading(flat, c)).unwrap();
        if drv.fault().is_some() && fault_at.is_none() {
            fault_at = Some(c);
            assert_eq!(p, CoilPhase::Faulted);
        }
    }
    // The detector's deadline-th update is the driver's tick `deadline`.
    assert_eq!(fault_at, Some(deadline));
    assert_eq!(drv.fault(), Some(CoilFault::Stuck));
    assert_eq!(drv.motion(), Motion::NoMotion);
    assert_eq!(drv.duty_counts(), 0);
    drv.free().done();
}

/// A detector deadline beyond the maximum pull-in time (50 ms): a pull-in that never seats
/// ends at the maximum time, in hold, flagged as timed out.
#[test]
fn the_maximum_pull_in_time_is_the_fallback() {
    let cfg = with_detector(0.2);
    let mut drv = CoilDriver::new(&cfg, RecordingPwm::new(1000)).unwrap();
    let mut first_hold = None;
    for c in 0..cfg.pull_in_max_ticks() + 2 {
        let p = drv.update(true, reading(flat, c)).unwrap();
        if p == CoilPhase::Hold && first_hold.is_none() {
            first_hold = Some(c);
        }
    }
    assert_eq!(first_hold, Some(cfg.pull_in_max_ticks()));
    assert!(drv.pull_in_timed_out());
    assert_eq!(drv.fault(), None);
    // Without the detector the estimate ends the pull-in at the closed-form pull-in time (35
    // ticks, see the transactions tests), whatever the armature did.
    let plain = config(ZENER, duty_hold(&ZENER));
    let mut drv = CoilDriver::new(&plain, RecordingPwm::new(1000)).unwrap();
    let first = (0..700)
        .position(|c| drv.update(true, reading(flat, c)).unwrap() == CoilPhase::Hold)
        .unwrap();
    assert_eq!(first, 35);
}

/// The detector travels with the raw values; without it the raw values say so.
#[test]
fn raw_round_trip_with_and_without_the_detector() {
    let with = with_detector(0.02);
    assert!(with.raw().movement.is_some());
    assert_eq!(CoilDriverConfig::from_raw(with.raw()), with);
    let plain = config(ZENER, duty_hold(&ZENER));
    assert_eq!(plain.raw().movement, None);
    assert_eq!(plain.movement(), None);
}

/// The reading that matches the estimate after the driver's last tick.
fn following<C: core::borrow::Borrow<CoilDriverConfig>>(
    drv: &CoilDriver<C, RecordingPwm>,
) -> CoilSense {
    sense(f64::from(drv.estimate_ua()) * 1e-6)
}

/// Pulls in on the dip, holds 200 ticks on readings that follow the estimate, switches off and
/// follows the estimate's decay until the off-timer confirms the release. Returns the driver
/// (released, idle, no fault) and the last reading, A.
fn released_after_a_cycle(
    cfg: &CoilDriverConfig,
) -> (CoilDriver<&CoilDriverConfig, RecordingPwm>, f64) {
    let mut drv = CoilDriver::new(cfg, RecordingPwm::new(1000)).unwrap();
    for c in 0..52 {
        drv.update(true, reading(dip, c)).unwrap();
    }
    assert_eq!(drv.phase(), CoilPhase::Hold);
    for _ in 0..200 {
        let s = following(&drv);
        drv.update(true, s).unwrap();
    }
    let mut last = 0.0;
    let mut phase = CoilPhase::Hold;
    for _ in 0..2000 {
        let s = following(&drv);
        last = f64::from(s.current_counts - OFFSET_COUNTS) * f64::from(AMPS_PER_COUNT);
        phase = drv.update(false, s).unwrap();
        if phase == CoilPhase::Idle {
            break;
        }
    }
    assert_eq!(phase, CoilPhase::Idle);
    assert!(drv.released());
    assert_eq!(drv.fault(), None);
    (drv, last)
}

/// A plunger that drops out after the off-timer's release: its rise lifts the current 0.12 A
/// above the decaying estimate for 6 ticks, longer than the monitor's persistence (5). The
/// monitor stays blanked until the detector has seen the drop-out, then watches again from
/// the measured current: a later implausible reading faults.
#[test]
fn a_late_drop_out_is_not_a_plausibility_fault() {
    let cfg = with_detector(0.02);
    let (mut drv, last) = released_after_a_cycle(&cfg);
    // The detector counts a rise only from a minimum above its 50 mA.
    assert!(last >= 0.05, "released at {last} A");
    assert_eq!(drv.motion(), Motion::Decaying);
    for _ in 0..6 {
        drv.update(false, sense(last + 0.12)).unwrap();
        assert_eq!(drv.fault(), None);
    }
    assert!(matches!(drv.motion(), Motion::DroppedOut { .. }));
    for _ in 0..100 {
        let s = following(&drv);
        drv.update(false, s).unwrap();
    }
    assert_eq!(drv.fault(), None);
    assert_eq!(drv.estimate_ua(), 0);
    // Watching again: 0.3 A with the coil off is a fault after the persistence.
    for _ in 0..6 {
        drv.update(false, sense(0.3)).unwrap();
    }
    assert!(matches!(drv.fault(), Some(CoilFault::Plausibility(_))));
}

/// No drop-out seen: the monitor is blanked until the detector's release deadline (40 ms) and
/// watches again after it.
#[test]
fn the_release_deadline_ends_the_blanking() {
    let cfg = with_detector(0.02);
    let (mut drv, _) = released_after_a_cycle(&cfg);
    let deadline = cfg.movement().unwrap().release_deadline_ticks();
    let mut ticks = 0;
    while drv.motion() == Motion::Decaying {
        let s = following(&drv);
        drv.update(false, s).unwrap();
        ticks += 1;
        assert!(ticks <= deadline);
    }
    assert_eq!(drv.motion(), Motion::NoDropOut);
    assert_eq!(drv.fault(), None);
    for _ in 0..6 {
        drv.update(false, sense(0.3)).unwrap();
    }
    assert!(matches!(drv.fault(), Some(CoilFault::Plausibility(_))));
}
