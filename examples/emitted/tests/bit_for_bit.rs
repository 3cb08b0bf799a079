//! The emitted constants, compiled, equal the configurations the firmware plans at init from
//! the same description (`FirmwareInputs`, and the drivers planned from it), bit for bit:
//! every raw field, and the configurations themselves.

use lenz_harness::scenario::{self, Controller};
use lenz_harness::system::{FirmwareInputs, System};

fn system(file: &str) -> System {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../../host-harness/scenarios/");
    System::from_file(format!("{path}{file}")).unwrap_or_else(|e| panic!("{e}"))
}

fn inputs(s: &System) -> FirmwareInputs {
    s.firmware_inputs().unwrap_or_else(|e| panic!("{e}"))
}

macro_rules! coil_drive {
    ($name:ident, $module:ident, $file:expr) => {
        #[test]
        fn $name() {
            use emitted::$module as e;
            let s = system($file);
            let fw = inputs(&s);
            let c = fw.coil.expect("a coil drive");
            assert_eq!(e::EMITTED_ESTIMATOR.raw(), c.estimator.raw());
            assert_eq!(e::EMITTED_ESTIMATOR, c.estimator);
            let t = c.off_timer.expect("a clamped switch-off");
            assert_eq!(e::EMITTED_OFF_TIMER.raw(), t.raw());
            assert_eq!(e::EMITTED_OFF_TIMER, t);
            assert_eq!(e::EMITTED_MONITOR.raw(), c.monitor.raw());
            assert_eq!(e::EMITTED_MONITOR, c.monitor);
            assert_eq!(e::EMITTED_TRIP.raw(), c.trip.raw());
            assert_eq!(e::EMITTED_TRIP, c.trip);
            let d = scenario::run::coil_driver(s.description(), f64::from(fw.temp_c))
                .unwrap_or_else(|e| panic!("{e}"));
            assert_eq!(e::EMITTED_COIL_DRIVER.raw(), d.driver().raw());
            assert_eq!(&e::EMITTED_COIL_DRIVER, d.driver());
        }
    };
}

coil_drive!(valve_constants_are_the_init_plan, valve, "valve.toml");
coil_drive!(relay_constants_are_the_init_plan, relay, "relay.toml");

#[test]
fn boost_constants_are_the_init_plan() {
    use emitted::boost as e;
    let s = system("boost.toml");
    let fw = inputs(&s);
    let dl = fw
        .boost
        .and_then(|b| b.duty_limiter)
        .expect("a duty limiter");
    assert_eq!(e::EMITTED_DUTY_LIMITER.raw(), dl.raw());
    assert_eq!(e::EMITTED_DUTY_LIMITER, dl);
    let f = s.description();
    let (Some(b), Controller::Boost(k)) = (&f.system.boost, &f.controller) else {
        panic!("boost.toml has [system.boost] and [controller.boost]");
    };
    let reg = scenario::run::boost_regulator(f, b, k).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(e::EMITTED_BOOST_LOOP.raw(), reg.driver().raw());
    assert_eq!(&e::EMITTED_BOOST_LOOP, reg.driver());
}
