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
