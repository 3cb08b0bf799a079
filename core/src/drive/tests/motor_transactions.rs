//! The exact PWM and pin writes of the bridge motor driver, in their order across the three
//! outputs: start, run, reverse, brake, coast; an output error mid-cycle; a jam fault.

extern crate std;

use std::io::ErrorKind;
use std::vec::Vec;

use embedded_hal_mock::eh1::MockError;
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as Pin};
use embedded_hal_mock::eh1::pwm::{Mock as PwmMock, Transaction as Pwm};

use super::motor_support::*;
use crate::drive::{
    BridgeError, DriveError, MotorDriver, MotorDriverConfig, MotorDriverFault, MotorSense,
};
use crate::kernel::{BridgeMode, MotorFault};

type Drv<'a> =
    MotorDriver<&'a MotorDriverConfig, Logged<PwmMock>, Logged<PinMock>, Logged<PinMock>>;

fn err() -> MockError {
    MockError::Io(ErrorKind::NotConnected)
}

/// Mocks expecting exactly `evs` (with `fail` marking the events that return an error), and
/// the log they share.
fn outputs(evs: &[Ev], fail: &[usize]) -> (Log, Logged<PwmMock>, Logged<PinMock>, Logged<PinMock>) {
    let log = Log::default();
    let mut pwm = std::vec![Pwm::max_duty_cycle(1000)];
    let (mut a, mut b) = (Vec::new(), Vec::new());
    let level = |h: bool| if h { State::High } else { State::Low };
    for (n, e) in evs.iter().enumerate() {
        let bad = fail.contains(&n);
        match *e {
            Ev::Pwm(d) => pwm.push(if bad {
                Pwm::set_duty_cycle(d).with_error(err())
            } else {
                Pwm::set_duty_cycle(d)
            }),
            Ev::A(h) => a.push(if bad {
                Pin::set(level(h)).with_error(err())
            } else {
                Pin::set(level(h))
            }),
            Ev::B(h) => b.push(if bad {
                Pin::set(level(h)).with_error(err())
            } else {
                Pin::set(level(h))
            }),
        }
    }
    (
        log.clone(),
        Logged::new(PwmMock::new(&pwm), &log, 0),
        Logged::new(PinMock::new(&a), &log, 0),
        Logged::new(PinMock::new(&b), &log, 1),
    )
}

fn finish(drv: Drv<'_>, log: &Log, expected: &[Ev]) {
    assert_eq!(log.borrow().as_slice(), expected);
    let (mut p, mut a, mut b) = drv.free();
    p.inner.done();
    a.inner.done();
    b.inner.done();
}

/// PWM counts of a Q16 duty on a 1000-step PWM (round to nearest).
fn counts(d_q16: i32) -> u16 {
    ((i64::from(d_q16) * 1000 + (1 << 15)) >> 16) as u16
}

fn sense(i_a: f64) -> MotorSense {
    MotorSense {
        current_counts: current_counts(i_a),
        supply_counts: supply_counts(12.0),
    }
}

/// The current one brake tick from no current drives at speed `w`: the shorted winding's
/// exact step response, `−(k·ω/R)·(1 − e^(−T·R/L))`.
fn probe_current(w: f64) -> f64 {
    -(0.03 * w / 1.5) * (1.0 - (-f64::from(TICK_S) * 1.5 / 2e-3).exp())
}

/// The ticks of a soft start to `req` from duty zero: the PWM counts each tick writes (a
/// write only where the counts change).
fn ramp(slew: i32, req: i32, evs: &mut Vec<Ev>) -> u32 {
    let (mut d, mut last, mut n) = (0i32, 0u16, 0);
    while d < req {
        d = (d + slew).min(req);
        n += 1;
        if counts(d) != last {
            last = counts(d);
            evs.push(Ev::Pwm(last));
        }
    }
    n
}

/// Start forward (soft start), run, reverse (dead time, brake below the brake speed, down to
/// the reversal speed, dead time, soft start the other way), stop (brake), then a stop from
/// full speed: coast with one-tick brake probes until slow enough to brake.
#[test]
fn start_run_reverse_brake_coast() {
    let cfg = vent_config();
    let g = cfg.guard();
    let (slew, dead) = (g.slew_q16(), u32::from(g.dead_ticks()));
    assert_eq!(dead, 2);
    // 5 ms of 100 µs ticks (the plan rounds up: 50 or 51).
    let probe = u32::from(g.probe_ticks());
    assert!((50..=51).contains(&probe), "{probe}");
    // A quarter duty at no current reads 100 rad/s; full duty 400 rad/s: one below the brake
    // speed, one above it.
    let wb = g.brake_speed_mrad_s();
    assert!((100_000..400_000).contains(&wb), "{wb}");
    assert!(slew < 16_384, "a soft start of several ticks: {slew}");
    let quarter = 16_384;

    let mut exp = std::vec![Ev::Pwm(0), Ev::A(false), Ev::B(false)];
    // Start: leg A high, then the duty ramps.
    exp.push(Ev::A(true));
    let start_ticks = ramp(slew, quarter, &mut exp);
    // Reverse at 100 rad/s: off (PWM 0, then A low), two dead ticks, brake (PWM full).
    exp.extend([Ev::Pwm(0), Ev::A(false), Ev::Pwm(1000)]);
    // Below the reversal speed: off, dead time, leg B high, ramp.
    exp.extend([Ev::Pwm(0), Ev::B(true)]);
    let rev_ticks = ramp(slew, quarter, &mut exp);
    // Stop at −100 rad/s: off (PWM 0, B low), dead time, brake.
    exp.extend([Ev::Pwm(0), Ev::B(false), Ev::Pwm(1000)]);
    // Full speed forward from the brake: off, dead time, A high, ramp to full.
    exp.extend([Ev::Pwm(0), Ev::A(true)]);
    let full_ticks = ramp(slew, 65_536, &mut exp);
    // Stop at 400 rad/s: coast; a probe after `probe` coasting ticks (PWM full for one tick),
    // coast again at 300 rad/s; the next probe at 50 rad/s stays in the brake.
    exp.extend([Ev::Pwm(0), Ev::A(false)]);
    exp.extend([Ev::Pwm(1000), Ev::Pwm(0), Ev::Pwm(1000)]);

    let (log, pwm, a, b) = outputs(&exp, &[]);
    let mut drv: Drv<'_> = MotorDriver::new(&cfg, pwm, a, b)
        .map_err(|(e, _)| e)
        .unwrap();
    let tick = |drv: &mut Drv<'_>, req: i32, i_a: f64| drv.update(req, sense(i_a)).unwrap();

    for n in 0..start_ticks + 10 {
        let c = tick(&mut drv, quarter, 0.0);
        assert_eq!(c.mode, BridgeMode::Forward, "{n}");
    }
    assert!(
        (drv.speed_mrad_s() - 100_000).abs() < 200,
        "{}",
        drv.speed_mrad_s()
    );
    // Reverse requested (the reading of that tick is still the drive's); the brake current
    // of 100 rad/s is −2 A.
    let mut modes = std::vec![tick(&mut drv, -quarter, 0.0).mode];
    modes.extend((0..7).map(|_| tick(&mut drv, -quarter, -2.0).mode));
    use BridgeMode::*;
    assert_eq!(
        modes,
        [Coast, Coast, Brake, Brake, Brake, Brake, Brake, Brake][..]
    );
    assert!((drv.speed_mrad_s() - 100_000).abs() < 200);
    // The brake current falls to −0.3 A (15 rad/s): coast for the two dead ticks, then reverse.
    let modes: Vec<_> = (0..4)
        .map(|_| tick(&mut drv, -quarter, -0.3).mode)
        .collect();
    assert_eq!(modes, [Coast, Coast, Reverse, Reverse][..]);
    for _ in 2..rev_ticks + 10 {
        assert_eq!(tick(&mut drv, -quarter, 0.0).mode, Reverse);
    }
    assert_eq!(drv.command().signed_duty_q16(), -quarter);
    assert!((drv.speed_mrad_s() + 100_000).abs() < 200);
    // Stop; the brake current of −100 rad/s is 2 A.
    let mut modes = std::vec![tick(&mut drv, 0, 0.0).mode];
    modes.extend((0..3).map(|_| tick(&mut drv, 0, 2.0).mode));
    assert_eq!(modes, [Coast, Coast, Brake, Brake][..]);
    // Full forward, no current: 400 rad/s.
    let modes: Vec<_> = (0..3).map(|_| tick(&mut drv, 65_536, 0.0).mode).collect();
    assert_eq!(modes, [Coast, Coast, Forward][..]);
    for _ in 1..full_ticks + 10 {
        tick(&mut drv, 65_536, 0.0);
    }
    assert!((drv.speed_mrad_s() - 400_000).abs() < 200);
    // Stop from 400 rad/s: coast, no current while coasting.
    let mut modes = Vec::new();
    for _ in 0..probe {
        modes.push(tick(&mut drv, 0, 0.0).mode);
    }
    assert!(modes.iter().all(|m| *m == Coast));
    // The next tick is a probe; its reading tells 300 rad/s: coast on.
    assert_eq!(tick(&mut drv, 0, 0.0).mode, Brake);
    assert_eq!(tick(&mut drv, 0, probe_current(300.0)).mode, Coast);
    // Within the reading's rounding: half a count (2 mA) weighted by G₁/k ≈ 692 (rad/s)/A.
    assert!(
        (drv.speed_mrad_s() - 300_000).abs() < 1_400,
        "{}",
        drv.speed_mrad_s()
    );
    for _ in 1..probe {
        assert_eq!(tick(&mut drv, 0, 0.0).mode, Coast);
    }
    assert_eq!(tick(&mut drv, 0, 0.0).mode, Brake);
    // 50 rad/s: below the brake speed, the brake stays on.
    assert_eq!(tick(&mut drv, 0, probe_current(50.0)).mode, Brake);
    assert_eq!(drv.fault(), None);
    finish(drv, &log, &exp);
}

/// Leg B's pin fails as the reversal sets it high: the driver reports the error, goes to the
/// safe state (PWM 0, A low, B low) at once and stays there, latched, with the cause.
#[test]
fn a_pin_error_mid_cycle_leaves_the_bridge_off() {
    let cfg = vent_config();
    let slew = cfg.guard().slew_q16();
    let mut exp = std::vec![Ev::Pwm(0), Ev::A(false), Ev::B(false)];
    exp.push(Ev::B(true));
    let fail = exp.len() - 1;
    exp.extend([Ev::Pwm(0), Ev::A(false), Ev::B(false)]);
    let (log, pwm, a, b) = outputs(&exp, &[fail]);
    let mut drv: Drv<'_> = MotorDriver::new(&cfg, pwm, a, b)
        .map_err(|(e, _)| e)
        .unwrap();
    let e = drv.update(-65_536, sense(0.0)).unwrap_err();
    assert_eq!(e, DriveError::Output(BridgeError::LegB(err())));
    assert_eq!(drv.fault(), Some(MotorDriverFault::Output));
    assert_eq!(drv.command().mode, BridgeMode::Coast);
    for _ in 0..300 {
        assert_eq!(
            drv.update(-65_536, sense(0.0)).unwrap().mode,
            BridgeMode::Coast
        );
    }
    assert_eq!(drv.fault(), Some(MotorDriverFault::Output));
    assert!(slew > 0);
    finish(drv, &log, &exp);
}

/// The safe state's own PWM write fails: every tick retries it (and reports the error) until
/// it succeeds; then nothing more is written.
#[test]
fn a_failed_safe_state_is_retried_every_tick() {
    let cfg = vent_config();
    let c1 = counts(cfg.guard().slew_q16());
    let mut exp = std::vec![Ev::Pwm(0), Ev::A(false), Ev::B(false)];
    exp.extend([Ev::A(true), Ev::Pwm(c1)]);
    let f1 = exp.len() - 1;
    exp.extend([Ev::Pwm(0), Ev::A(false), Ev::B(false)]);
    let f2 = exp.len() - 3;
    exp.extend([Ev::Pwm(0), Ev::A(false), Ev::B(false)]);
    let f3 = exp.len() - 3;
    exp.extend([Ev::Pwm(0), Ev::A(false), Ev::B(false)]);
    let (log, pwm, a, b) = outputs(&exp, &[f1, f2, f3]);
    let mut drv: Drv<'_> = MotorDriver::new(&cfg, pwm, a, b)
        .map_err(|(e, _)| e)
        .unwrap();
    // The duty write fails, and the safe state's PWM 0 with it; the next tick's retry fails
    // too; the third succeeds.
    assert!(drv.update(65_536, sense(0.0)).is_err());
    assert!(drv.update(65_536, sense(0.0)).is_err());
    assert_eq!(drv.fault(), Some(MotorDriverFault::Output));
    for _ in 0..20 {
        assert_eq!(
            drv.update(65_536, sense(0.0)).unwrap().mode,
            BridgeMode::Coast
        );
    }
    finish(drv, &log, &exp);
}

/// A locked rotor: a start draws 6 A and the speed estimate stays near zero. The jam detector
/// (after the start blanking and the persistence) latches the driver off with the cause; the
/// request stays on and nothing more is written. After clearing, a new start goes through
/// the soft start again.
#[test]
fn a_jam_latches_off_with_its_cause() {
    let cfg = vent_config();
    let j = cfg.jam();
    let slew = cfg.guard().slew_q16();
    let mut exp = std::vec![Ev::Pwm(0), Ev::A(false), Ev::B(false), Ev::A(true)];
    ramp(slew, 65_536, &mut exp);
    exp.extend([Ev::Pwm(0), Ev::A(false)]);
    exp.extend([Ev::A(true), Ev::Pwm(counts(slew))]);
    let (log, pwm, a, b) = outputs(&exp, &[]);
    let mut drv: Drv<'_> = MotorDriver::new(&cfg, pwm, a, b)
        .map_err(|(e, _)| e)
        .unwrap();
    // The locked rotor's current at each duty: d·V/R (the estimate then reads no speed).
    let mut d = 0.0;
    let mut fault_tick = None;
    for n in 1..=2_000u32 {
        let c = drv.update(65_536, sense(d * 12.0 / 1.5)).unwrap();
        d = f64::from(c.duty_q16) / 65_536.0;
        if drv.fault().is_some() {
            fault_tick = Some(n);
            break;
        }
        assert!(
            drv.speed_mrad_s().abs() < 20_000,
            "{n}: {}",
            drv.speed_mrad_s()
        );
    }
    assert_eq!(drv.fault(), Some(MotorDriverFault::Motor(MotorFault::Jam)));
    assert_eq!(drv.command().mode, BridgeMode::Coast);
    // The first driven tick is judged by the detector on the next update; the current passes
    // 3 A once the ramp reaches a quarter duty, long before the blanking ends: the fault comes
    // exactly after blanking and persistence.
    assert_eq!(
        fault_tick,
        Some(1 + j.blank_ticks() + j.persist_ticks()),
        "blank {} persist {}",
        j.blank_ticks(),
        j.persist_ticks()
    );
    for _ in 0..100 {
        assert_eq!(
            drv.update(65_536, sense(0.0)).unwrap().mode,
            BridgeMode::Coast
        );
    }
    drv.clear_fault();
    assert_eq!(
        drv.update(65_536, sense(0.0)).unwrap().mode,
        BridgeMode::Forward
    );
    finish(drv, &log, &exp);
}

/// A current reading outside the sense's window latches the driver off.
#[test]
fn a_broken_sense_latches_off() {
    let cfg = vent_config();
    let mut exp = std::vec![Ev::Pwm(0), Ev::A(false), Ev::B(false), Ev::A(true)];
    exp.push(Ev::Pwm(counts(cfg.guard().slew_q16())));
    exp.extend([Ev::Pwm(0), Ev::A(false)]);
    let (log, pwm, a, b) = outputs(&exp, &[]);
    let mut drv: Drv<'_> = MotorDriver::new(&cfg, pwm, a, b)
        .map_err(|(e, _)| e)
        .unwrap();
    drv.update(65_536, sense(0.0)).unwrap();
    let stuck = MotorSense {
        current_counts: 4095,
        supply_counts: supply_counts(12.0),
    };
    assert_eq!(drv.update(65_536, stuck).unwrap().mode, BridgeMode::Coast);
    assert_eq!(drv.fault(), Some(MotorDriverFault::Sense));
    finish(drv, &log, &exp);
}

/// The raw values round-trip, and a plan whose kernels tick at another rate is refused,
/// naming the tick.
#[test]
fn raw_round_trip_and_tick_mismatch() {
    let cfg = vent_config();
    assert_eq!(MotorDriverConfig::from_raw(cfg.raw()), cfg);
    let mut p = vent_params();
    p.jam.tick_s = 1e-3;
    let e = MotorDriverConfig::new(&p).unwrap_err();
    assert_eq!(e.param(), "tick_s");
}
