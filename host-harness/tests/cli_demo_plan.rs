//! `lenz demo` opens with a worst-case coil table; its figures are the plans of the shipped
//! valve and relay files (one description per coil), so they agree with `lenz plan` on those
//! files to the last bit, and with the closed form of the steady current over the file's whole
//! loop resistance.

mod common;

use std::path::Path;

use common::{close, json};
use serde_json::Value;

fn scenario(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name)
        .to_str()
        .expect("utf-8")
        .to_string()
}

fn plan_figure<'a>(plan: &'a Value, name: &str) -> &'a Value {
    plan["figures"]
        .as_array()
        .expect("figures")
        .iter()
        .find(|f| f["figure"] == name)
        .unwrap_or_else(|| panic!("{name} in the plan"))
}

#[test]
fn the_opening_table_is_the_files_plans() {
    let demo = json(&["demo", "--json"]);
    let rows = demo.as_array().expect("an array of figures");
    assert_eq!(rows.len(), 8, "four figures of two coils");
    for file in ["valve.toml", "relay.toml"] {
        let plan = json(&["plan", &scenario(file), "--json"]);
        let system = plan["system"].as_str().expect("system name");
        let mine: Vec<&Value> = rows.iter().filter(|r| r["coil"] == system).collect();
        assert_eq!(mine.len(), 4, "{system}");
        for row in mine {
            let name = row["figure"].as_str().expect("figure name");
            let fig = plan_figure(&plan, name);
            let b = &row["bound"];
            for key in ["min", "max", "min_at", "max_at"] {
                assert_eq!(b[key], fig[key], "{system}: {name} {key}");
            }
            assert_eq!(row["unit"], fig["unit"]);
        }
    }
}

#[test]
fn the_lowest_valve_current_includes_the_whole_loop() {
    // valve.toml (invented): 21.6 V, 32 Ω +5 % at 85 °C, plus switch 0.1 Ω, source 0.2 Ω and
    // shunt 10 mΩ. Copper α20 = 0.00393 /K (IEC28); computed: closed form. Without the 0.31 Ω
    // of the loop the figure would be 512.1 mA, which is what the table showed before.
    let demo = json(&["demo", "--json"]);
    let row = demo
        .as_array()
        .expect("array")
        .iter()
        .find(|r| r["coil"] == "irrigation valve (24 V)" && r["figure"] == "steady current")
        .expect("valve steady current");
    let r_hot = 32.0 * 1.05 * (1.0 + 0.00393 * (85.0 - 20.0));
    let want = 21.6 / (r_hot + 0.1 + 0.2 + 0.01);
    let got = row["bound"]["min"].as_f64().expect("min");
    assert!(close(got, want, 1e-5), "{got} vs {want}");
    assert!(
        !close(got, 21.6 / r_hot, 1e-3),
        "the loop resistance is counted"
    );
}
