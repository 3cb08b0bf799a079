//! The motor in scenario files: the shipped `motor.toml` (the demo's vent motor, invented
//! values) through the system layer with the built-in driver and with a user's own firmware,
//! its plan against closed forms, and the file errors with their positions.
//!
//! Run with `--nocapture` to see the measured figures.

#[path = "common/demo_motor.rs"]
mod demo_motor;
use demo_motor::{driver, show, text};
use lenz_harness::System;
use lenz_harness::closed_loop::{Actuation, Controller, Direction, Drive, MotorCommand, Sensed};
use lenz_harness::scenario::run::{Params, Record};
use lenz_harness::system::SweepOptions;

fn motor() -> System {
    System::from_toml("motor.toml", &text()).unwrap_or_else(|e| panic!("{e}"))
}

/// A user's firmware without any guard or jam detector: drives as commanded, at once.
struct Unguarded;

impl Controller for Unguarded {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let drive = |q: i32| {
            if q >= 65_536 {
                Drive::On
            } else {
                Drive::Pwm {
                    duty: f64::from(q) / 65_536.0,
                }
            }
        };
        match s.motor {
            MotorCommand::Forward { duty_q16 } => {
                Actuation::bridge(Direction::Forward, drive(duty_q16))
            }
            MotorCommand::Reverse { duty_q16 } => {
                Actuation::bridge(Direction::Reverse, drive(duty_q16))
            }
            MotorCommand::Brake => Actuation::BRAKE,
            MotorCommand::Coast => Actuation::COAST,
        }
    }
}

#[test]
fn every_shipped_scenario_holds_with_the_built_in_driver() {
    let f = lenz_harness::scenario::parse("motor.toml", &text()).unwrap_or_else(|e| panic!("{e}"));
    for (k, sc) in f.scenarios.iter().enumerate() {
        let r = lenz_harness::scenario::run::run(&f, k, &Params::NOMINAL, Record::None)
            .unwrap_or_else(|e| panic!("{}: {e}", sc.name));
        show(&sc.name, &r);
        assert!(r.passed(), "{}: {:?}", sc.name, r.violations());
    }
}

#[test]
fn the_plan_agrees_with_the_closed_forms() {
    let rep = motor().plan().unwrap_or_else(|e| panic!("{e}"));
    for f in &rep.figures {
        println!(
            "{:<55} {:>10.4} … {:>10.4} {}",
            f.figure, f.min, f.max, f.unit
        );
    }
    for v in &rep.verdicts {
        println!(
            "{} {:?} ≤ {} {}: {}",
            v.check, v.value, v.limit, v.unit, v.pass
        );
    }
    assert!(rep.passed);
    // Stall current: Ohm's law, V/(R_w(T) + 2 R_sw + R_s), highest at 13.2 V, −20 °C
    // (copper 0.00393 /K, IEC 60028) and the winding at the low end of its ±10 % spread
    // (`[tolerances] resistance`): R_w = 0.9 · 1.5 · (1 − 0.00393 · 40).
    let r = 0.9 * 1.5 * (1.0 - 0.00393 * 40.0) + 2.0 * 0.05 + 0.05;
    let stall = rep
        .figures
        .iter()
        .find(|f| f.figure == "stall current")
        .unwrap();
    assert!(
        (f64::from(stall.max) - 13.2 / r).abs() < 1e-4 * 13.2 / r,
        "{} against {}",
        stall.max,
        13.2 / r
    );
    let names: Vec<&str> = rep.verdicts.iter().map(|v| v.check.as_str()).collect();
    assert!(
        names.contains(&"stall current ≤ switch current rating"),
        "{names:?}"
    );
    assert!(
        names
            .iter()
            .any(|n| n.starts_with("highest supply ≤ bus voltage rating")),
        "{names:?}"
    );
}

#[test]
fn a_supply_that_cannot_sink_is_judged_on_the_coasting_bus_rise() {
    // The same file with the supply unable to sink and a 47 µF bus: the plan's coasting bus
    // rise is against the 25 V rating. Check the figure's bound: all the winding's energy
    // ½·L·i² at the steady current (at most the stall current) into C cannot lift the bus
    // above sqrt(V² + L·i²/C), with the inductance and the winding at the ends of their
    // spreads (+20 %, −10 %).
    let t = text()
        .replace("supply_sinks = true", "supply_sinks = false")
        .replace("bus_capacitance = \"470uF\"", "bus_capacitance = \"47uF\"");
    let sys = System::from_toml("motor.toml", &t).unwrap_or_else(|e| panic!("{e}"));
    let rep = sys.plan().unwrap_or_else(|e| panic!("{e}"));
    let v = rep
        .verdicts
        .iter()
        .find(|v| v.check == "bus voltage when coasting ≤ bus voltage rating")
        .expect("the coasting verdict");
    let bus = v.value.expect("a value");
    let i_max = 13.2 / (0.9 * 1.5 * (1.0 - 0.00393 * 40.0) + 0.15);
    let bound = (13.2f64 * 13.2 + 2.4e-3 * i_max * i_max / 47e-6).sqrt();
    println!("coasting bus rise {bus} V (bound {bound:.3} V)");
    assert!(f64::from(bus) > 13.2 && f64::from(bus) < bound, "{bus}");
}

#[test]
fn own_firmware_without_guards_fails_the_reversal_and_the_jam() {
    let sys = motor();
    let rep = sys.run_all(|_| Unguarded).unwrap_or_else(|e| panic!("{e}"));
    let get = |scenario: &str, prop: &str| {
        let o = rep
            .outcomes
            .iter()
            .find(|o| o.scenario == scenario)
            .unwrap_or_else(|| panic!("{scenario}"));
        show(scenario, &o.result);
        o.result.property(prop).cloned().unwrap()
    };
    let rev = get("reverse at full speed", "reversal_peak_current");
    assert!(!rev.pass && rev.value > 6.0, "{rev:?}");
    let jam = get("jam", "jam_latency");
    assert!(!jam.pass && jam.value.is_infinite(), "{jam:?}");
    // The speed and the bus are recorded for the CSV and the plot.
    let o = &rep.outcomes[0];
    let n = o.result.waveform.t_s.len();
    assert!(
        n > 0 && o.result.waveform.speed_rad_s.len() == n && o.result.waveform.bus_v.len() == n
    );
    let csv = lenz_harness::report::csv::to_csv(&o.result.waveform);
    assert!(csv.lines().next().unwrap().ends_with(",speed_rad_s,bus_v"));
}

#[test]
fn a_small_sweep_replays_run_for_run() {
    let sys = motor();
    let opts = SweepOptions::runs(4).seed(7);
    let make = |fw: &lenz_harness::system::FirmwareInputs| driver(&sys, fw);
    let rep = sys.sweep(&opts, make).unwrap_or_else(|e| panic!("{e}"));
    // What the sweep finds is printed; motor.toml's comments say what a longer sweep finds.
    println!("sweep failures: {:?}", rep.failures());
    // A replay of run 7:2 draws the same part values as the sweep did, and the torque
    // constant is among them.
    let p = sys.draw(7, 2);
    assert_ne!(p.torque_constant, 1.0);
    assert!((0.95..=1.05).contains(&p.torque_constant));
    let again = sys.replay("7:2", make).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(again.params, p);
}

/// Parses `text` and returns the error's `line:column`, key and problem.
fn error(text: &str) -> (usize, usize, String, String) {
    let e = lenz_harness::scenario::parse("m.toml", text).expect_err("must be rejected");
    println!("{e}");
    (e.line, e.column, e.key, e.problem)
}

fn line_of(text: &str, needle: &str) -> usize {
    text.lines()
        .position(|l| l.contains(needle))
        .map(|k| k + 1)
        .unwrap_or_else(|| panic!("{needle}"))
}

#[test]
fn file_errors_name_the_key_and_its_place() {
    let base = text();
    // A clamp with a motor.
    let t = base.replace(
        "[system.switch]",
        "[system.clamp.freewheel]\ndiode_drop = 0.7\n\n[system.switch]",
    );
    let (_, _, key, problem) = error(&t);
    assert!(key.starts_with("system"), "{key}");
    assert!(problem.contains("motor bridge"), "{problem}");
    // A negative inertia, at its value.
    let t = base.replace("inertia = \"20u\"", "inertia = \"-20u\"");
    let (line, _, key, problem) = error(&t);
    assert_eq!(line, line_of(&t, "inertia = \"-20u\""));
    assert_eq!(key, "system.motor.inertia");
    assert!(problem.contains("must be positive"), "{problem}");
    // A torque constant in the wrong unit.
    let t = base.replace("\"30mNm/A\"", "\"30mV\"");
    let (line, _, key, _) = error(&t);
    assert_eq!(line, line_of(&t, "torque_constant"));
    assert_eq!(key, "system.motor.torque_constant");
    // An overload below the rating.
    let t = base.replace(
        "fault = \"jam\"",
        "fault = \"overload\"\nload_torque = \"40mNm\"",
    );
    let (_, _, key, problem) = error(&t);
    assert!(key.contains("event"), "{key}");
    assert!(problem.contains("rated_torque"), "{problem}");
    // A coil command for a motor.
    let t = base.replacen("command = \"forward\"", "command = \"on\"", 1);
    let (_, _, key, problem) = error(&t);
    assert!(key.contains("event"), "{key}");
    assert!(problem.contains("forward"), "{problem}");
    // time-to-speed without its speed.
    let t = base.replacen(
        "speed = 300               # rad/s, 82 % of the loaded speed\n",
        "",
        1,
    );
    let (_, _, key, problem) = error(&t);
    assert!(key.contains("check"), "{key}");
    assert!(problem.contains("missing key `speed`"), "{problem}");
    // A duty above 1.
    let t = base.replacen(
        "command = \"forward\"",
        "command = \"forward\"\nduty = 1.5",
        1,
    );
    let (_, _, key, problem) = error(&t);
    assert!(
        key.ends_with(".duty") && problem.contains("above 1"),
        "{key}: {problem}"
    );
    // A reversal check without a reversal.
    let t = base.replace("command = \"reverse\"", "command = \"brake\"");
    let (_, _, key, problem) = error(&t);
    assert!(key.ends_with("property"), "{key}");
    assert!(problem.contains("reversal"), "{problem}");
}

#[test]
fn motor_keys_in_a_coil_file_are_rejected() {
    let valve =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/valve.toml"))
            .unwrap();
    let t = valve.replacen("command = \"on\"", "command = \"forward\"", 1);
    let (_, _, _, problem) = error(&t);
    assert!(problem.contains("[system.motor]"), "{problem}");
    let t = valve.replacen(
        "property = \"no-trip\"",
        "property = \"bus-voltage\"\nmax = \"30V\"",
        1,
    );
    let (_, _, _, problem) = error(&t);
    assert!(problem.contains("motor"), "{problem}");
}
