//! Faults latch the driver off with their cause; re-energizing waits for the release.

extern crate std;

use std::vec::Vec;

use super::support::*;
use crate::drive::{
    CoilDriver, CoilDriverConfig, CoilDriverParams, CoilFault, CoilPhase, CoilSense,
};
use crate::kernel::{Cause, Fault};
use crate::trip::{Curve, InverseTime};
use crate::turnoff::{Clamp, SwitchOff};

const ZENER: Clamp = Clamp::Zener {
    zener_v: 24.0,
    forward_v: 0.7,
};

fn sense_a(i_a: f64) -> CoilSense {
    CoilSense {
        current_counts: counts_of(i_a),
        supply_counts: supply_counts(24.0),
    }
}

fn perfect(drv: &CoilDriver<&CoilDriverConfig, RecordingPwm>) -> CoilSense {
    sense_a(f64::from(drv.estimate_ua()) * 1e-6)
}

/// Pulls in and holds with a perfect sense for 100 ticks.
fn held(cfg: &CoilDriverConfig) -> CoilDriver<&CoilDriverConfig, RecordingPwm> {
    let mut drv = CoilDriver::new(cfg, RecordingPwm::new(1000)).unwrap();
    for _ in 0..100 {
        let s = perfect(&drv);
        drv.update(true, s).unwrap();
    }
    assert_eq!(drv.phase(), CoilPhase::Hold);
    drv
}

/// Feeds `sense` with the demand on until the driver faults; returns the ticks it took.
fn until_fault(drv: &mut CoilDriver<&CoilDriverConfig, RecordingPwm>, sense: CoilSense) -> u32 {
    for k in 0..100_000 {
        if drv.update(true, sense).unwrap() == CoilPhase::Faulted {
            return k;
        }
    }
    panic!("no fault");
}

/// Stays off with the demand on: no write but zeros.
fn stays_off(drv: &mut CoilDriver<&CoilDriverConfig, RecordingPwm>, ticks: u32) {
    let before = drv.output().writes.len();
    for _ in 0..ticks {
        let s = perfect(drv);
        assert_eq!(drv.update(true, s).unwrap(), CoilPhase::Faulted);
    }
    assert!(drv.output().writes[before..].iter().all(|d| *d == 0));
    assert_eq!(drv.duty_counts(), 0);
}

#[test]
fn instantaneous_overcurrent_latches_and_clears_only_by_hand() {
    let cfg = config(ZENER, duty_hold(&ZENER));
    let mut drv = held(&cfg);
    // 2 A against the 1.5 A threshold: the very sample trips.
    assert_eq!(until_fault(&mut drv, sense_a(2.0)), 0);
    assert_eq!(drv.fault(), Some(CoilFault::Trip(Cause::Instantaneous)));
    assert_eq!(drv.last_trip().map(|e| e.cause), Some(Cause::Instantaneous));
    assert_eq!(drv.output().duty, 0);
    stays_off(&mut drv, 500);
    drv.clear_fault();
    assert_eq!(drv.fault(), None);
    // Released long ago: the next demand pulls in.
    let s = perfect(&drv);
    assert_eq!(drv.update(true, s).unwrap(), CoilPhase::PullIn);
    assert_eq!(drv.output().duty, 1000);
}

#[test]
fn plausibility_faults_latch_with_their_kind() {
    let cfg = config(ZENER, duty_hold(&ZENER));
    // Open coil: no current measured while the estimate holds 0.3 A (persistence 5).
    let mut drv = held(&cfg);
    assert_eq!(until_fault(&mut drv, sense_a(0.0)), 4);
    assert_eq!(drv.fault(), Some(CoilFault::Plausibility(Fault::OpenCoil)));
    stays_off(&mut drv, 100);
    // Shorted turns: twice the current the healthy coil would draw.
    let mut drv = held(&cfg);
    let i = f64::from(drv.estimate_ua()) * 2e-6;
    assert_eq!(until_fault(&mut drv, sense_a(i)), 4);
    assert_eq!(
        drv.fault(),
        Some(CoilFault::Plausibility(Fault::LowResistance))
    );
    // A sense line at the rail: outside the valid window.
    let mut drv = held(&cfg);
    let rail = CoilSense {
        current_counts: 0,
        supply_counts: supply_counts(24.0),
    };
    assert_eq!(until_fault(&mut drv, rail), 4);
    assert_eq!(
        drv.fault(),
        Some(CoilFault::Plausibility(Fault::SensorOutOfRange))
    );
}

/// IEC very inverse at 0.5 A pickup, TMS 0.05, fed 1.5 A (M = 3): IEC 60255-151 gives
/// `t = 0.05·13.5/(3 − 1) = 0.3375 s` (published: IEC151 curve B constants); the kernel trips
/// within one block (at most 32 samples) plus its stated table error (0.2 %), late, not early.
#[test]
fn inverse_time_trip_latches_with_its_cause() {
    let mut p: CoilDriverParams = params(ZENER, duty_hold(&ZENER));
    p.trip.inverse = Some(InverseTime::new(Curve::IecVeryInverse, 0.5, 0.05).unwrap());
    p.trip.instantaneous_counts = 3900;
    // Tolerant monitor: the overload is the trip detector's to find.
    p.monitor.abs_tol_a = 2.0;
    p.monitor.rel_tol = 5.0;
    let cfg = CoilDriverConfig::new(&p).unwrap();
    let mut drv = held(&cfg);
    let k = f64::from(until_fault(&mut drv, sense_a(1.5)));
    assert_eq!(drv.fault(), Some(CoilFault::Trip(Cause::InverseTime)));
    let want = 0.3375 / f64::from(TICK_S);
    assert!(
        k >= want * (1.0 - 0.002) - 1.0 && k <= want * 1.002 + 33.0,
        "{k} vs {want}"
    );
}

/// With one retry: the first trip switches off and waits (not latched); after the retry delay
/// and the release the driver pulls in again; the second trip latches.
#[test]
fn a_retry_comes_back_then_latches() {
    let mut p = params(ZENER, duty_hold(&ZENER));
    p.trip.retries = 1;
    p.trip.retry_delay_s = 20e-3;
    let cfg = CoilDriverConfig::new(&p).unwrap();
    let mut drv = held(&cfg);
    let over = sense_a(2.0);
    assert_eq!(drv.update(true, over).unwrap(), CoilPhase::Releasing);
    assert_eq!(drv.fault(), None);
    let mut phases = Vec::new();
    let mut ticks = 0;
    while drv.phase() != CoilPhase::PullIn {
        let s = perfect(&drv);
        phases.push(drv.update(true, s).unwrap());
        ticks += 1;
        assert!(ticks < 1000);
    }
    // Off for the retry delay (200 ticks), then on again.
    assert!((199..=201).contains(&ticks), "{ticks}");
    assert!(
        phases[..phases.len() - 1]
            .iter()
            .all(|p| *p == CoilPhase::Releasing)
    );
    let s = perfect(&drv);
    drv.update(true, s).unwrap();
    assert_eq!(drv.update(true, over).unwrap(), CoilPhase::Faulted);
    assert_eq!(drv.fault(), Some(CoilFault::Trip(Cause::Instantaneous)));
}

/// A demand right after the switch-off waits until the off-timer reports the release: not
/// before the closed-form decay time from the current at switch-off to the release current
/// (diode plus 24 V zener, CHECKS F2.1 form in `turnoff`, computed), and at most three ticks
/// after the decay from that current plus the hold estimate's bound.
#[test]
fn re_energize_waits_for_the_release() {
    let cfg = config(ZENER, duty_hold(&ZENER));
    let mut drv = held(&cfg);
    let i_off = f64::from(drv.estimate_ua()) * 1e-6;
    let s = perfect(&drv);
    assert_eq!(drv.update(false, s).unwrap(), CoilPhase::Releasing);
    let writes = drv.output().writes.len();
    let mut r = 0u32;
    loop {
        r += 1;
        let s = perfect(&drv);
        if drv.update(true, s).unwrap() == CoilPhase::PullIn {
            break;
        }
        assert!(r < 1000);
    }
    // No write until the release, then full drive.
    assert_eq!(drv.output().writes[writes..], [1000]);
    let decay = |i0: f64| {
        let s = SwitchOff::from_coil_at(&valve(), 24.0, 20.0, i0 as f32, ZENER).unwrap();
        f64::from(s.time_to_current_s(0.075).unwrap())
    };
    let t = f64::from(r) * f64::from(TICK_S);
    let margin = f64::from(cfg.hold().error_bound_ua()) * 1e-6;
    assert!(t >= decay(i_off), "{t} < {}", decay(i_off));
    assert!(
        t <= decay(i_off + margin) + 3.0 * f64::from(TICK_S),
        "{t} vs {}",
        decay(i_off + margin)
    );
}
