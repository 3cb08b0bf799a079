//! The drivers on the simulated embedded-hal outputs (`sim_pins`): a coil switched by a plain
//! pin through `OnOffSwitch`, and a PWM channel that stops answering mid-hold (greenhouse demo
//! valve and relay, values invented for the demo).

use lenz::drive::{CoilFault, OnOffSwitch};
use lenz::turnoff::Clamp as FwClamp;
use lenz_harness::closed_loop::demo::{
    DIODE, RELAY_SUPPLY_RANGE_V, driver_plan_with_clamp, relay_plant, valve_driver, valve_loop,
    valve_plant,
};
use lenz_harness::closed_loop::{
    Actuation, Controller, Release, RunResult, Sensed, Telemetry, run,
};
use lenz_harness::controllers::PWM_MAX_DUTY;
use lenz_harness::sim_pins::{CoilDriverLoop, OutputFault, SimPin, SimPwm};

fn show(r: &RunResult) -> String {
    format!("{:#?}", r.properties)
}

/// The demo relay on a plain output pin: pull-in and "hold" at full drive (duty 1, the only
/// duty a pin has), the same estimator, monitor, trip and off-timer. Every property holds and
/// the switch is only ever fully on or off.
#[test]
fn relay_on_a_plain_pin() {
    let cfg = driver_plan_with_clamp(
        0.3,
        120.0,
        20.0,
        0.090,
        1.0,
        0.5,
        0.010,
        RELAY_SUPPLY_RANGE_V,
        FwClamp::Diode { forward_v: 0.7 },
    )
    .unwrap();
    let pin = OnOffSwitch::new(SimPin::new());
    let mut ctrl = CoilDriverLoop::new(*cfg.driver(), pin).unwrap();
    assert_eq!(ctrl.driver().max_duty_cycle(), 1);
    let mut plant = relay_plant(20.0, 12.0);
    let mut lc = valve_loop(0.25, vec![(0.005, true), (0.150, false)], vec![]);
    lc.limits.release = Some(Release {
        current_a: 0.010,
        max_s: 0.008,
    });
    lc.limits.estimator_error_max_a = Some(0.010);
    let r = run(&mut plant, &mut ctrl, &lc).unwrap();
    assert!(r.passed(), "{}", show(&r));
    let w = &r.waveform;
    assert!(w.drive.iter().all(|&d| d == 0.0 || d == 1.0));
    let on = w.drive.iter().filter(|&&d| d == 1.0).count();
    assert!(
        (1440..=1460).contains(&on),
        "on for the 145 ms of demand: {on} ticks"
    );
    // The pin was written at switch-on and switch-off only (and low once at construction).
    assert_eq!(ctrl.driver().output().pin().writes(), 3);
}

/// The valve driver whose PWM channel fails from `fail_s` until `recover_s`.
struct FailingPwm {
    inner: CoilDriverLoop<lenz::drive::CoilDriverConfig, SimPwm>,
    fault: OutputFault,
    fail_s: f64,
    recover_s: f64,
}

impl Controller for FailingPwm {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let t = s.time_ns as f64 * 1e-9;
        self.fault.set(t >= self.fail_s && t < self.recover_s);
        self.inner.tick(s)
    }

    fn telemetry(&self) -> Telemetry {
        self.inner.telemetry()
    }
}

/// The PWM stops taking writes at 60 ms, while the valve is held, and answers again at 80 ms;
/// demand ends at 70 ms. The driver notices at its first failed write (the demand-off), latches
/// `CoilFault::Output` and reports the trip at once; the channel keeps its hold duty meanwhile
/// (nothing the driver can do through a dead output), and the driver's retry switches off in
/// the first tick the channel answers again, after which the valve releases.
#[test]
fn a_pwm_that_stops_answering() {
    let cfg = valve_driver(20.0).unwrap();
    let fault = OutputFault::new();
    let pwm = SimPwm::with_fault(PWM_MAX_DUTY, fault.clone());
    let mut ctrl = FailingPwm {
        inner: CoilDriverLoop::new(*cfg.driver(), pwm).unwrap(),
        fault,
        fail_s: 0.060,
        recover_s: 0.080,
    };
    let mut plant = valve_plant(20.0, 24.0, DIODE);
    let mut lc = valve_loop(0.12, vec![(0.005, true), (0.070, false)], vec![]);
    lc.limits.release = None;
    let r = run(&mut plant, &mut ctrl, &lc).unwrap();
    // The only violation: the trip the output failure caused, in normal operation.
    let failed: Vec<&str> = r.violations().iter().map(|p| p.name).collect();
    assert_eq!(failed, ["no_trip_in_normal_operation"], "{}", show(&r));
    let trip = r
        .events
        .iter()
        .find(|e| e.what == "trip: output error")
        .expect("a trip with its cause");
    assert!((trip.t_s - 0.070).abs() < 1e-9, "tripped at {}", trip.t_s);
    assert_eq!(ctrl.inner.driver().fault(), Some(CoilFault::Output));
    assert_eq!(
        ctrl.inner.output_errors(),
        100,
        "every tick from 70 to 80 ms"
    );
    let w = &r.waveform;
    let drive_at = |t: f64| {
        let k = w.t_s.iter().position(|&x| x > t).expect("recorded");
        w.drive[k]
    };
    assert_eq!(drive_at(0.075), 0.45, "the dead channel keeps its duty");
    assert_eq!(drive_at(0.0801), 0.0, "switched off once it answers");
    let k_end = w.t_s.len() - 1;
    assert!(
        w.current_a[k_end] < 0.01,
        "released: {}",
        w.current_a[k_end]
    );
}
