//! `lenz plan FILE` from outside: figures against closed forms computed here, the corner of
//! each, verdicts and exit codes (0 all pass, 1 a verdict fails, 2 bad input).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs")
}

fn valve() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/valve.toml")
}

fn close(got: f64, want: f64, rtol: f64) -> bool {
    (got - want).abs() <= rtol * want.abs()
}

fn figure<'a>(v: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    v["figures"]
        .as_array()
        .expect("figures")
        .iter()
        .find(|f| f["figure"] == name)
        .unwrap_or_else(|| panic!("{name} in {v}"))
}

#[test]
fn valve_figures_and_corners() {
    let out = lenz(&["plan", valve().to_str().expect("utf-8"), "--json"]);
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(v["passed"], true);
    // Highest steady current: 26.4 V, coil at −20 °C with R −5 %, plus switch 0.1 Ω, source
    // 0.2 Ω and shunt 10 mΩ (copper 0.00393 /K referred to 20 °C, IEC 60028; computed: closed
    // form).
    let r_cold = 32.0 * 0.95 * (1.0 + 0.00393 * (-20.0 - 20.0));
    let i_max = 26.4 / (r_cold + 0.1 + 0.2 + 0.01);
    let f = figure(&v, "steady current");
    assert!(close(f["max"].as_f64().expect("max"), i_max, 1e-5), "{f}");
    assert!(close(
        f["max_at"]["supply_v"].as_f64().expect("corner"),
        26.4,
        1e-6
    ));
    assert!(close(
        f["max_at"]["temp_c"].as_f64().expect("corner"),
        -20.0,
        1e-6
    ));
    // Freewheel diode: the switch sees the supply plus the diode drop (CHECKS C2.1 form).
    let f = figure(&v, "peak switch voltage");
    assert!(
        close(f["max"].as_f64().expect("max"), 26.4 + 0.7, 1e-5),
        "{f}"
    );
    // Release to 75 mA through the diode from the highest current, L +10 %:
    // t = τ ln((I0 + Vf/R)/(Ix + Vf/R)), τ = L/R with the coil loop resistance (F2.1,
    // computed: closed form cross-checked numerically in CHECKS C2.1). The valve is switched
    // off seated: L is its plunger's gap inductance at the closed gap,
    // 360 mH / (1 + 0.05 mm / 0.6 mm) (the reluctance form of the file).
    let l = 0.360 / (1.0 + 0.05 / 0.6) * 1.1;
    let tau = l / r_cold;
    let a = 0.7 / r_cold;
    let t = tau * ((i_max + a) / (0.075 + a)).ln();
    let f = figure(&v, "release time (current part)");
    assert!(
        close(f["max"].as_f64().expect("max"), t, 2e-3),
        "{f} vs {t}"
    );
    // Trip band of the 2 A threshold over the chain's ±0.5 % gain and 1 mV offset at the ADC
    // (50 µV input-referred): code = ceil(I/I_LSB), I = (code·Vref/2^N/G − Vos)/Rsh at each
    // corner (CHECKS F4.2 form, TI current sensing tutorial part III: worst case = corners).
    let lsb = 3.3 / 4096.0 / (0.010 * 20.0);
    let code = (2.0f64 / lsb).ceil();
    let at = |g: f64, vos: f64| (code * 3.3 / 4096.0 / g - vos) / 0.010;
    let f = figure(&v, "trip current (sense tolerance band)");
    assert!(
        close(f["min"].as_f64().expect("min"), at(20.1, 50e-6), 1e-5),
        "{f}"
    );
    assert!(
        close(f["max"].as_f64().expect("max"), at(19.9, -50e-6), 1e-5),
        "{f}"
    );
    let verdicts = v["verdicts"].as_array().expect("verdicts");
    assert!(verdicts.len() >= 5);
    assert!(verdicts.iter().all(|x| x["pass"] == true));
}

#[test]
fn failing_verdict_exits_1_and_bad_file_exits_2() {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("plan");
    std::fs::create_dir_all(&dir).expect("dir");
    let text = std::fs::read_to_string(valve()).expect("valve");
    let tight = dir.join("tight.toml");
    std::fs::write(
        &tight,
        text.replacen("release_time = \"35ms\"", "release_time = \"5ms\"", 1),
    )
    .expect("write");
    let out = lenz(&["plan", tight.to_str().expect("utf-8")]);
    assert_eq!(out.status.code(), Some(1));
    let s = String::from_utf8_lossy(&out.stdout);
    assert!(
        s.contains("FAIL") && s.contains("A verdict fails.") && s.contains("CAUTION"),
        "{s}"
    );
    let bad = dir.join("bad.toml");
    std::fs::write(
        &bad,
        text.replacen("breakdown = \"66V\"", "breakdown = \"66 volts\"", 1),
    )
    .expect("write");
    let out = lenz(&["plan", bad.to_str().expect("utf-8")]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let e = String::from_utf8_lossy(&out.stderr);
    assert!(e.contains("key `system.switch.breakdown`"), "{e}");
}

#[test]
fn heater_rail_at_its_nominal_point() {
    // The heater rail without spreads: 5 V in, 0.5 A out. CHECKS C3.2 (computed: closed form
    // cross-checked numerically; loss model of Erickson & Maksimović, Fundamentals of Power
    // Electronics, 2nd ed., Ch. 3): duty 0.6007203716, efficiency 0.9582711081, peak inductor
    // current 1.54772575 A, saturation margin 0.2261371252 with I_sat 2 A.
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("plan-boost");
    std::fs::create_dir_all(&dir).expect("dir");
    let boost = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/boost.toml");
    let text = std::fs::read_to_string(boost).expect("boost");
    let nominal = text
        .replacen("min = \"4.5V\"", "min = \"5V\"", 1)
        .replacen("max = \"5.5V\"", "max = \"5V\"", 1)
        .replacen("source_resistance = \"20mohm\"", "source_resistance = 0", 1)
        .replacen("inductance_tolerance = 0.1", "inductance_tolerance = 0", 1)
        .replacen("resistance_tolerance = 0.1", "resistance_tolerance = 0", 1)
        .replacen("load_tolerance = 0.05", "load_tolerance = 0", 1);
    let file = dir.join("nominal.toml");
    std::fs::write(&file, nominal).expect("write");
    let out = lenz(&["plan", file.to_str().expect("utf-8"), "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&out.stderr)));
    for (name, want, rtol) in [
        ("duty", 0.6007203716, 1e-5),
        ("efficiency", 0.9582711081, 1e-5),
        ("peak inductor current", 1.54772575, 1e-5),
        ("saturation margin", 0.2261371252, 1e-4),
    ] {
        let f = figure(&v, name);
        for end in ["min", "max"] {
            let got = f[end].as_f64().expect("value");
            assert!(close(got, want, rtol), "{name} {end}: {got} vs {want}");
        }
    }
}
