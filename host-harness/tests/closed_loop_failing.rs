//! The checks can fail: deliberately broken designs run against the same properties, and each
//! fails with the property its flaw violates (and only the properties it should).

use lenz_harness::closed_loop::demo::{DIODE, driver_plan, valve_driver, valve_loop, valve_plant};
use lenz_harness::closed_loop::run;
use lenz_harness::controllers::ValveDriver;
use lenz_harness::faults::{Fault, FaultAt};
use lenz_harness::plant::Clamp;

#[test]
fn a_valve_without_a_clamp_fails_on_switch_voltage_and_energy() {
    // No freewheel diode: only 100 pF across the switch. The demand ends during pull-in
    // (at 25 ms, 0.74 A): the switch avalanches at its 66 V breakdown, above its 60 V rating,
    // and takes the coil's energy, above its 10 mJ rating (C2.3 form: about 38 mJ).
    let mut plant = valve_plant(20.0, 24.0, Clamp::Unclamped { c_f: 100e-12 });
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
    let cfg = valve_loop(0.06, vec![(0.005, true), (0.025, false)], vec![]);
    let r = run(&mut plant, &mut ctrl, &cfg).unwrap();
    let failed: Vec<&str> = r.violations().iter().map(|p| p.name).collect();
    assert!(failed.contains(&"peak_switch_voltage"), "{failed:?}");
    assert!(
        failed.contains(&"switch_energy_per_switch_off"),
        "{failed:?}"
    );
    let v = r.property("peak_switch_voltage").unwrap();
    assert!(
        (v.value - 66.0).abs() < 1e-9,
        "clamped at breakdown: {}",
        v.value
    );
    // The same run with the diode fitted passes.
    let mut plant = valve_plant(20.0, 24.0, Clamp::Freewheel { vf_v: 0.7 });
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
    let r = run(&mut plant, &mut ctrl, &cfg).unwrap();
    assert!(r.passed(), "{:?}", r.violations());
}

#[test]
fn a_trip_threshold_set_too_high_fails_on_peak_current() {
    // The coil shorts during PWM hold (0.2 mH, 0.5 Ω of wiring remain). With the demo's 2 A
    // instantaneous trip the driver switches off one tick later at about 5 A; with the
    // threshold set at 12 A the overcurrent element never fires first, the plausibility
    // monitor trips after its three-sample persistence, and the current has passed the
    // switch's 10 A limit by then.
    let short = vec![FaultAt {
        t_s: 0.060,
        fault: Fault::ShortedCoil {
            residual_inductance_h: 0.2e-3,
            residual_resistance_ohm: 0.5,
        },
        expect_trip: true,
    }];
    let cfg = valve_loop(0.08, vec![(0.005, true)], short);
    let mut ok_plant = valve_plant(20.0, 24.0, DIODE);
    let mut good = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
    let r = run(&mut ok_plant, &mut good, &cfg).unwrap();
    assert!(r.passed(), "{:?}", r.violations());
    let mut plant = valve_plant(20.0, 24.0, DIODE);
    let mut bad =
        ValveDriver::new(driver_plan(0.120, 32.0, 20.0, 0.54, 0.45, 12.0, 0.075).unwrap()).unwrap();
    let r = run(&mut plant, &mut bad, &cfg).unwrap();
    let failed: Vec<&str> = r.violations().iter().map(|p| p.name).collect();
    assert_eq!(failed, ["peak_current"], "{:?}", r.violations());
    assert!(r.property("peak_current").unwrap().value > 10.0);
}
