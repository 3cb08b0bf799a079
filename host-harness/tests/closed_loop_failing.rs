//! The checks can fail: deliberately broken designs run against the same properties, and each
//! fails with the property its flaw violates (and only the properties it should).

use lenz_harness::closed_loop::demo::{valve_driver, valve_loop, valve_plant};
use lenz_harness::closed_loop::run;
use lenz_harness::controllers::ValveDriver;
use lenz_harness::plant::Clamp;

#[test]
fn a_valve_without_a_clamp_fails_on_switch_voltage_and_energy() {
    // No freewheel diode: only 100 pF across the switch. The demand ends during pull-in
    // (at 25 ms, 0.74 A): the switch avalanches at its 66 V breakdown, above its 60 V rating,
    // and takes the coil's energy, above its 10 mJ rating (C2.3 form: about 38 mJ).
    let mut plant = valve_plant(20.0, 24.0, Clamp::Unclamped { c_f: 100e-12 });
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap());
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
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap());
    let r = run(&mut plant, &mut ctrl, &cfg).unwrap();
    assert!(r.passed(), "{:?}", r.violations());
}
