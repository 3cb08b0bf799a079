//! No panic on any input: arbitrary text as a scenario file, and arbitrary numbers (NaN, ±inf,
//! subnormals, zero, negatives, huge) in the values of the shipped valve file, through parse,
//! plan-side set-up and a short closed-loop run. Every outcome is a value or an error.

use lenz_harness::scenario::{
    self,
    run::{Params, Record, run},
};
use proptest::prelude::*;

const VALVE: &str = include_str!("../scenarios/valve.toml");

fn special() -> impl Strategy<Value = f64> {
    prop_oneof![
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(f64::NEG_INFINITY),
        Just(0.0),
        Just(-0.0),
        Just(f64::MIN_POSITIVE / 4.0),
        Just(1e300),
        Just(-1.0),
        any::<f64>(),
        -1e3..1e3f64,
    ]
}

/// The keys whose values are replaced (first occurrence), as `key = ` prefixes.
const KEYS: [&str; 10] = [
    "inductance = ",
    "resistance = ",
    "tick = ",
    "pwm_frequency = ",
    "hold_duty = ",
    "gain = ",
    "breakdown = ",
    "trip_current = ",
    "duration = ",
    "nominal = ",
];

fn with_value(key: &str, v: f64) -> String {
    let start = VALVE.find(key).expect("key in the valve file");
    let end = start + VALVE[start..].find('\n').expect("line end");
    // TOML has nan and inf literals; write them as TOML does.
    let lit = if v.is_nan() {
        "nan".to_string()
    } else if v.is_infinite() {
        if v > 0.0 { "inf".into() } else { "-inf".into() }
    } else {
        format!("{v:e}")
    };
    format!("{}{key}{lit}{}", &VALVE[..start], &VALVE[end..])
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(96))]

    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,400}") {
        let _ = scenario::parse("x.toml", &text);
    }

    #[test]
    fn arbitrary_values_never_panic(k in 0..KEYS.len(), v in special()) {
        let text = with_value(KEYS[k], v);
        if let Ok(mut f) = scenario::parse("x.toml", &text) {
            // Keep the run short: the first scenario, cut to 5 ms.
            f.scenarios.truncate(1);
            if let Some(s) = f.scenarios.first_mut() {
                let d = s.duration.get().min(5e-3);
                s.duration = scenario::quantity::Pos::new(d);
                s.events.retain(|e| e.at.get() <= d);
            }
            let _ = run(&f, 0, &Params::NOMINAL, Record::Every);
            let _ = run(&f, 0, &Params::draw(&f, 1, 2), Record::None);
        }
    }
}
