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
    let mut ctrl = ValveDriver::new(valve_driver(temp as f32).unwrap()).unwrap();
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

#[test]
fn corner_temperatures_and_supplies() {
    // Coil -20 .. 85 °C, supply 21.6 .. 26.4 V (the demo spreads); the driver's estimator is
    // planned at the board temperature.
    for temp in [-20.0, 20.0, 85.0] {
        for supply in [21.6, 26.4] {
            let r = valve_run(temp, supply, vec![]);
            assert!(r.passed(), "{temp} °C, {supply} V:\n{}", show(&r));
        }
    }
}

#[test]
fn relay_cycles_at_corners() {
    for (temp, supply) in [(-20.0, 13.2), (20.0, 12.0), (70.0, 11.4)] {
        let mut plant = relay_plant(temp, supply);
        let mut ctrl = ValveDriver::new(relay_driver(temp as f32).unwrap()).unwrap();
        let mut cfg = valve_loop(0.25, vec![(0.005, true), (0.150, false)], vec![]);
        // Relay: release to 10 mA (10 % of 100 mA, CHECKS C2.7 fraction) within 8 ms.
        cfg.limits.release = Some(Release {
            current_a: 0.010,
            max_s: 0.008,
        });
        cfg.limits.estimator_error_max_a = Some(0.010);
        let r = run(&mut plant, &mut ctrl, &cfg).unwrap();
        assert!(r.passed(), "relay {temp} °C {supply} V:\n{}", show(&r));
    }
}

fn fault_at(t: f64, fault: Fault, expect_trip: bool) -> Vec<FaultAt> {
    vec![FaultAt {
        t_s: t,
        fault,
        expect_trip,
    }]
}

#[test]
fn faults_that_must_trip() {
    let cases = [
        (
            "shorted coil",
            0.060,
            Fault::ShortedCoil {
                residual_inductance_h: 0.2e-3,
                residual_resistance_ohm: 0.5,
            },
        ),
        (
            "shorted turns",
            0.060,
            Fault::ShortedTurns {
                inductance_factor: 0.4,
                resistance_factor: 0.4,
            },
        ),
        ("open coil", 0.050, Fault::OpenCoil),
        (
            "sensor stuck during pull-in",
            0.010,
            Fault::SensorStuck {
                channel: Channel::Current,
            },
        ),
        ("switch stuck on", 0.060, Fault::SwitchStuckOn),
    ];
    for (name, t, fault) in cases {
        let mut plant = valve_plant(20.0, 24.0, DIODE);
        let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
        let mut cfg = valve_loop(0.22, cycles(), fault_at(t, fault, true));
        if matches!(fault, Fault::SwitchStuckOn) {
            // A stuck switch cannot release the valve; the firmware's job is to detect it.
            cfg.limits.release = None;
        }
        let r = run(&mut plant, &mut ctrl, &cfg).unwrap();
        println!("{name}:\n{}", show(&r));
        assert!(r.passed(), "{name}:\n{}", show(&r));
        let lat = r.property("trip_latency").unwrap().value;
        assert!(lat.is_finite() && lat > 0.0, "{name}: tripped after {lat}");
    }
}

#[test]
fn faults_that_must_not_trip() {
    let cases = [
        (
            "supply sag to 18 V (step)",
            Fault::SupplySag {
                supply_v: 18.0,
                ramp_s: 0.0,
            },
        ),
        (
            "supply surge to 30 V",
            Fault::SupplySurge {
                supply_v: 30.0,
                ramp_s: 0.0,
            },
        ),
        (
            "noisy current sensor (4 LSB)",
            Fault::SensorNoisy {
                channel: Channel::Current,
                noise_rms_lsb: 4.0,
            },
        ),
        (
            "noisy supply sensor (4 LSB)",
            Fault::SensorNoisy {
                channel: Channel::Supply,
                noise_rms_lsb: 4.0,
            },
        ),
    ];
    for (name, fault) in cases {
        let mut plant = valve_plant(20.0, 24.0, DIODE);
        let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
        let cfg = valve_loop(0.22, cycles(), fault_at(0.050, fault, false));
        let r = run(&mut plant, &mut ctrl, &cfg).unwrap();
        println!("{name}:\n{}", show(&r));
        assert!(r.passed(), "{name}:\n{}", show(&r));
        assert_eq!(
            r.property("no_trip_in_normal_operation").unwrap().value,
            0.0
        );
    }
}

#[test]
fn re_energizes_only_after_the_off_timer_confirms_release() {
    // Demand drops at 85 ms and returns 2 ms later, while the hold current (about 0.33 A)
    // still decays through the diode: 4.8 ms to 75 mA by the closed form
    // tau ln((I0 + Vf/R)/(Ix + Vf/R)) (CHECKS F2.1, computed). The driver must wait for its
    // off-timer, so the first switch-on after the drop finds the current below 75 mA.
    let mut plant = valve_plant(20.0, 24.0, DIODE);
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
    let demand = vec![(0.005, true), (0.085, false), (0.087, true), (0.150, false)];
    let r = run(&mut plant, &mut ctrl, &valve_loop(0.2, demand, vec![])).unwrap();
    assert_all_hold(&r);
    let w = &r.waveform;
    let k = (0..w.t_s.len())
        .find(|&k| w.t_s[k] > 0.0851 && w.drive[k] > 0.0)
        .expect("re-energized");
    // Tick k switched on at its start, 20 µs before its sample.
    let t_on = w.t_s[k] - 20e-6;
    // The last PWM switch-off at or before the drop starts the final decay.
    let off = r
        .switch_offs
        .iter()
        .rev()
        .find(|o| o.t_s <= 0.085 + 1e-12)
        .expect("switched off at the demand drop");
    let (tau, a) = (0.120 / 32.0, 0.7 / 32.0);
    let closed = tau * ((off.current_a + a) / (0.075 + a)).ln();
    let waited = t_on - off.t_s;
    assert!(
        waited >= closed,
        "re-energized after {waited} s, decay to 75 mA takes {closed} s"
    );
    assert!(
        waited < closed + 3e-4,
        "but not much later: {waited} vs {closed}"
    );
}

fn saturating_valve(knee_a: f64) -> lenz_harness::plant::CoilDrive {
    use lenz_harness::plant::{CoilDriveSpec, CoilSpec, InductanceCurve, SwitchSpec, Thermal};
    lenz_harness::plant::CoilDrive::new(CoilDriveSpec {
        coil: CoilSpec {
            curve: InductanceCurve::Knee {
                l0_h: 0.120,
                knee_a,
                l_res_h: 0.040,
            },
            r20_ohm: 32.0,
            alpha20_per_k: 0.00393,
            temp_c: 20.0,
            thermal: Some(Thermal {
                r_th_k_per_w: 25.0,
                c_th_j_per_k: 15.0,
                ambient_c: 20.0,
            }),
        },
        clamp: DIODE,
        switch: SwitchSpec {
            on_resistance_ohm: 0.1,
            breakdown_v: 66.0,
        },
        supply_v: 24.0,
        source_resistance_ohm: 0.2,
        shunt_ohm: 0.010,
    })
    .unwrap()
}

#[test]
fn saturating_valve_core_in_the_loop() {
    // The same valve with a core that saturates mildly (invented: 120 mH unsaturated, knee at
    // 1.5 A, 40 mH residual): at the 0.74 A pull-in peak the incremental inductance is 20 %
    // low. The plant integrates it adaptively; the driver's linear estimator still tracks
    // within the limits and nothing trips.
    let mut plant = saturating_valve(1.5);
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
    let r = run(&mut plant, &mut ctrl, &valve_loop(0.22, cycles(), vec![])).unwrap();
    assert_all_hold(&r);
    // The saturation is visible: the estimate lags the true current during pull-in.
    let err = r.property("estimator_error").unwrap().value;
    assert!(err > 0.005, "estimator error {err}");
}

#[test]
fn a_strongly_saturating_core_breaks_the_linear_estimator() {
    // Knee at 0.6 A: at the pull-in peak the incremental inductance is 45 % low, the current
    // rises faster than the linear estimator predicts, and its error exceeds the 30 mA limit;
    // everything else still holds (the monitor's band absorbs the difference).
    let mut plant = saturating_valve(0.6);
    let mut ctrl = ValveDriver::new(valve_driver(20.0).unwrap()).unwrap();
    let r = run(&mut plant, &mut ctrl, &valve_loop(0.22, cycles(), vec![])).unwrap();
    let failed: Vec<&str> = r.violations().iter().map(|p| p.name).collect();
    assert_eq!(failed, ["estimator_error"], "{}", show(&r));
}
