//! The shipped valve file with each clamp kind and a hold duty that suits it, through the
//! scenario path (`lenz sim`'s plan of the driver from the file, the simulated PWM, the
//! closed loop): every scenario of the file holds every property (the estimate within the
//! file's 50 mA, no trip in normal operation, the trip faults tripped in time). The estimate's
//! tight bound per clamp kind is checked in `closed_loop_clamps.rs`; the figures printed here
//! are the file path's, whose largest error comes from the pull-in at full drive (the supply
//! reading's gain error) rather than from the hold.

use lenz_harness::scenario::{self, run};

const VALVE: &str = include_str!("../scenarios/valve.toml");

/// The valve file with its clamp replaced by `clamp` (a TOML table body under
/// `[system.clamp.<kind>]`) and its hold duty by `duty`.
fn with_clamp(kind: &str, body: &str, duty: f64) -> String {
    let from = "[system.clamp.freewheel]\ndiode_drop = \"0.7V\"";
    let duty_line = "hold_duty = 0.45";
    assert!(VALVE.contains(from) && VALVE.contains(duty_line));
    VALVE
        .replacen(from, &format!("[system.clamp.{kind}]\n{body}"), 1)
        .replacen(duty_line, &format!("hold_duty = {duty}"), 1)
}

#[test]
fn the_valve_file_with_every_clamp_kind() {
    // Hold duties for about 0.33 A at 24 V with each clamp (the averaged loop's steady state,
    // computed); a 33 Ω resistor keeps the switch below 60 V at a switch-off from pull-in.
    let kinds = [
        ("freewheel", "diode_drop = \"0.7V\"", 0.45),
        (
            "diode-zener",
            "diode_drop = \"0.7V\"\nzener = \"24V\"",
            0.73,
        ),
        ("across-switch", "voltage = \"45V\"", 0.70),
        (
            "resistor-diode",
            "resistor = \"33ohm\"\ndiode_drop = \"0.7V\"",
            0.62,
        ),
    ];
    for (kind, body, duty) in kinds {
        let text = with_clamp(kind, body, duty);
        let file = scenario::parse(kind, &text).unwrap_or_else(|e| panic!("{kind}: {e}"));
        let temp = file.system.temperature.nominal.get();
        let bound_ua = run::coil_driver(&file, temp)
            .unwrap_or_else(|e| panic!("{kind}: {e}"))
            .driver()
            .hold()
            .error_bound_ua();
        for (i, sc) in file.scenarios.iter().enumerate() {
            let r = run::run(&file, i, &run::Params::NOMINAL, run::Record::None)
                .unwrap_or_else(|e| panic!("{kind}: {e}"));
            let bad: Vec<_> = r.violations();
            assert!(bad.is_empty(), "{kind}, {}: {bad:?}", sc.name);
            if let Some(p) = r.property("estimator_error") {
                println!(
                    "{kind}, {}: estimator error {:.2} mA (the hold estimate's own bound {:.2} mA)",
                    sc.name,
                    p.value * 1e3,
                    f64::from(bound_ua) * 1e-3
                );
            }
        }
    }
}

/// A hold the driver cannot average is refused before anything runs, in the file's keys: a
/// 45 % duty against a 24 V zener drives the mean current below zero (the coil current would
/// stop in every PWM period), and a monitor tolerance below the hold estimate's bound would
/// trip on the averaging alone.
#[test]
fn holds_the_driver_cannot_average_are_errors_in_the_files_keys() {
    let zener = with_clamp(
        "diode-zener",
        "diode_drop = \"0.7V\"\nzener = \"24V\"",
        0.45,
    );
    let file = scenario::parse("zener.toml", &zener).unwrap();
    let e = run::run(&file, 0, &run::Params::NOMINAL, run::Record::None).unwrap_err();
    assert!(
        e.0.starts_with("key `controller.coil.hold_duty`: 0.45 does not keep the current flowing"),
        "{e}"
    );
    // At the lowest supply: (0.45·21.6 V − 0.55·24.7 V)/(0.45·32.11 Ω + 0.55·32 Ω) =
    // −120.6 mA (computed: the averaged loop's steady state).
    assert!(e.0.contains("mean current -120.6 mA"), "{e}");
    let tight = with_clamp(
        "diode-zener",
        "diode_drop = \"0.7V\"\nzener = \"24V\"",
        0.73,
    )
    .replacen("abs_tol = \"50mA\"", "abs_tol = \"1mA\"", 1)
    .replacen("rel_tol = 0.2", "rel_tol = 0", 1);
    let file = scenario::parse("tight.toml", &tight).unwrap();
    let e = run::run(&file, 0, &run::Params::NOMINAL, run::Record::None).unwrap_err();
    assert!(
        e.0.starts_with("key `controller.coil.monitor.abs_tol`: 1.000 mA is below"),
        "{e}"
    );
}
