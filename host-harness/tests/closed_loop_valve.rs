//! Closed-loop checks of the demo valve and relay drivers (greenhouse demo system, values
//! invented for the demo): normal cycles, each fault, corner temperatures and supplies. Every
//! property the run measures must hold; the limits are in `closed_loop::demo`.

use lenz_harness::closed_loop::demo::{
    DIODE, relay_driver, relay_plant, valve_driver, valve_loop, valve_plant,
};
use lenz_harness::closed_loop::{Release, RunResult, run};
use lenz_harness::controllers::ValveDriver;
use lenz_harness::faults::{Channel, Fault, FaultAt};

fn show(r: &RunResult) -> String {
    r.properties
        .iter()
        .map(|p| {
            format!(
                "{}: {:.6e} {} (limit {:.6e}) {}\n",
                p.name,
                p.value,
                p.unit,
                p.limit,
                if p.pass { "ok" } else { "VIOLATED" }
            )
        })
        .collect()
}

fn assert_all_hold(r: &RunResult) {
    assert!(r.passed(), "properties:\n{}", show(r));
}

/// Two open/close cycles of the valve: on at 5 ms for 80 ms, again at 120 ms for 60 ms.
fn cycles() -> Vec<(f64, bool)> {
    vec![(0.005, true), (0.085, false), (0.120, true), (0.180, false)]
}

fn valve_run(temp: f64, supply: f64, faults: Vec<FaultAt>) -> RunResult {
    let mut plant = valve_plant(temp, supply, DIODE);
    let mut ctrl = ValveDriver::new(valve_driver(temp as f32).unwrap());
    let cfg = valve_loop(0.22, cycles(), faults);
    run(&mut plant, &mut ctrl, &cfg).unwrap()
}

#[test]
fn normal_cycles_hold_every_property() {
    let r = valve_run(20.0, 24.0, vec![]);
    println!("{}", show(&r));
    assert_all_hold(&r);
    // The run really switched: two pull-ins with PWM hold in between, and two releases.
    assert!(
        r.switch_offs.len() > 100,
        "PWM hold switches off every period"
    );
    let peak = r.waveform.current_a.iter().cloned().fold(0.0, f64::max);
    assert!(peak > 0.54 && peak < 0.76, "pull-in current {peak}");
    assert!(r.property("release_time").unwrap().value > 1e-3);
}
