//! Closed-loop checks of the demo heater rail (5 V → 12 V boost, CHECKS section 3 values,
//! invented for the demo) with the PI regulator behind the duty limiter: start-up, input sag
//! and surge, load steps into DCM and back; and the same loop with the limiter bypassed,
//! which fails on the switch voltage.

use lenz_harness::closed_loop::demo::{boost_loop, boost_regulator, heater_rail};
use lenz_harness::closed_loop::{RunResult, run};
use lenz_harness::controllers::BoostRegulator;
use lenz_harness::faults::{Fault, FaultAt};

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

fn rail_run(faults: Vec<FaultAt>, duration: f64, bypass: bool) -> RunResult {
    let mut plant = heater_rail(5.0, 24.0);
    let mut ctrl = BoostRegulator::new(boost_regulator(bypass).unwrap()).unwrap();
    run(&mut plant, &mut ctrl, &boost_loop(duration, faults)).unwrap()
}

fn at(t_s: f64, fault: Fault) -> FaultAt {
    FaultAt {
        t_s,
        fault,
        expect_trip: false,
    }
}

#[test]
fn start_up_settles_in_band() {
    let r = rail_run(vec![], 0.1, false);
    assert!(r.passed(), "{}", show(&r));
    // It really regulates: the last 20 ms average within 0.1 V of 12 V, and the rail started
    // from the 4.6 V precharge.
    let w = &r.waveform;
    let n = w.t_s.len();
    let tail = &w.output_v[n - 200..];
    let mean = tail.iter().sum::<f64>() / tail.len() as f64;
    assert!((mean - 12.0).abs() < 0.1, "{mean}");
    assert!(w.output_v[0] < 5.0);
}

#[test]
fn input_sag_surge_and_load_steps_hold_the_band() {
    for (name, faults) in [
        (
            "input sag to 4.2 V in 1 ms",
            vec![at(
                0.05,
                Fault::SupplySag {
                    supply_v: 4.2,
                    ramp_s: 1e-3,
                },
            )],
        ),
        (
            "input surge to 5.8 V in 1 ms",
            vec![at(
                0.05,
                Fault::SupplySurge {
                    supply_v: 5.8,
                    ramp_s: 1e-3,
                },
            )],
        ),
        (
            "load step to 600 ohm (DCM) and back",
            vec![
                at(0.05, Fault::LoadStep { load_ohm: 600.0 }),
                at(0.13, Fault::LoadStep { load_ohm: 24.0 }),
            ],
        ),
    ] {
        let r = rail_run(faults, 0.22, false);
        assert!(r.passed(), "{name}:\n{}", show(&r));
    }
}

#[test]
fn a_bypassed_duty_limiter_fails_on_switch_voltage() {
    // The heater drops to its idle load at 50 ms (600 Ω: 20 mA, below the 50 mA light-load
    // condition). Behind the limiter the overvoltage cut at 14 V stops switching and the rail
    // comes back into band; without it the slow PI loop keeps pumping, and the output (and the
    // switch voltage, output plus diode drop) runs past the switch's 16 V rating.
    let unplug = || vec![at(0.05, Fault::LoadStep { load_ohm: 600.0 })];
    let good = rail_run(unplug(), 0.2, false);
    assert!(good.passed(), "with the limiter:\n{}", show(&good));
    let bad = rail_run(unplug(), 0.2, true);
    let failed: Vec<&str> = bad.violations().iter().map(|p| p.name).collect();
    assert!(failed.contains(&"peak_switch_voltage"), "{}", show(&bad));
}
