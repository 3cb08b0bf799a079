//! `lenz emit FILE --lang rust|c [--out PATH]` from outside: the C header compiles with
//! `gcc -Wall -Werror -std=c11` against the C API's header and a C program reading it prints
//! the same values as the configurations planned in Rust; the Rust form on stdout and in a
//! file; exit code 2 on bad input. (The emitted Rust constants are compiled and compared bit
//! for bit in `examples/emitted`.)

mod common;
#[path = "common/demo_valve.rs"]
mod demo_valve;

use std::path::{Path, PathBuf};
use std::process::Command;

use common::{assert_exit2, lenz};
use lenz_harness::scenario::{self, Controller};
use lenz_harness::system::System;

fn scenario_path(file: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(file)
        .to_str()
        .expect("utf-8")
        .to_string()
}

/// A fresh folder for one test.
fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("lenz-emit-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp folder");
    d
}

/// The shipped coil file `file` without its armature, written into `dir`: the C API's coil
/// driver plans no movement detector, so `emit --lang c` refuses a coil with an armature
/// (`the_c_header_refuses_a_coil_with_an_armature`); the other constants are the same.
fn without_armature(file: &str, dir: &Path) -> String {
    let text = std::fs::read_to_string(scenario_path(file)).expect("read");
    let plain = demo_valve::without_armature(
        &text,
        "[[scenario]]\nname = \"on\"\nduration = \"10ms\"\n[[scenario.event]]\nat = \"1ms\"\n\
         command = \"on\"\n[[scenario.check]]\nproperty = \"peak-current\"\nmax = \"10A\"\n",
    );
    let path = dir.join(file);
    std::fs::write(&path, plain).expect("write");
    path.to_str().expect("utf-8").to_string()
}

/// Emits the C header of `file` (a path) into `dir`, compiles `main` (a C body printing `NAME VALUE`
/// lines) against it with warnings as errors, runs it and returns its lines.
fn c_values(file: &str, header: &str, dir: &Path, main: &str) -> Vec<(String, i128)> {
    let h = dir.join(header);
    let out = lenz(&[
        "emit",
        file,
        "--lang",
        "c",
        "--out",
        h.to_str().expect("utf-8"),
    ]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(out.stdout.is_empty(), "with --out nothing on stdout");
    let src = dir.join("check.c");
    std::fs::write(
        &src,
        format!(
            "#include <stdio.h>\n#include \"{header}\"\nint main(void) {{\n{main}\n    return 0;\n}}\n"
        ),
    )
    .expect("write the C program");
    let exe = dir.join("check");
    let include = Path::new(env!("CARGO_MANIFEST_DIR")).join("../ffi/include");
    // gcc missing is a failure, not a skip.
    let cc = Command::new("gcc")
        .args(["-Wall", "-Wextra", "-Werror", "-std=c11", "-I"])
        .arg(&include)
        .arg("-I")
        .arg(dir)
        .arg(&src)
        .arg("-o")
        .arg(&exe)
        .output()
        .expect("gcc runs (the C header check needs a host C compiler)");
    assert!(
        cc.status.success(),
        "the emitted header must compile: {}",
        String::from_utf8_lossy(&cc.stderr)
    );
    let run = Command::new(&exe).output().expect("the C program runs");
    assert!(run.status.success());
    String::from_utf8(run.stdout)
        .expect("utf-8")
        .lines()
        .map(|l| {
            let (k, v) = l.split_once(' ').expect("NAME VALUE");
            (k.to_string(), v.parse().expect("an integer"))
        })
        .collect()
}

fn assert_values(got: &[(String, i128)], want: &[(&str, i128)]) {
    assert_eq!(got.len(), want.len(), "{got:?}");
    for ((gk, gv), (wk, wv)) in got.iter().zip(want) {
        assert_eq!(gk, wk);
        assert_eq!(gv, wv, "{gk}: C {gv}, Rust {wv}");
        println!("{gk}: {gv} (C) = {wv} (Rust)");
    }
}

#[test]
fn the_valve_header_compiles_and_holds_the_planned_values() {
    let dir = scratch("valve");
    let valve = without_armature("valve.toml", &dir);
    let got = c_values(
        &valve,
        "lenz_valve.h",
        &dir,
        r#"    printf("estimator.on_step_q31 %d\n", (int)EMITTED_ESTIMATOR.on_step_q31);
    printf("estimator.off.step_q31 %d\n", (int)EMITTED_ESTIMATOR.off.step_q31);
    printf("estimator.off.clamp_mv %d\n", (int)EMITTED_ESTIMATOR.off.clamp_mv);
    printf("off_timer.threshold_ua %d\n", (int)EMITTED_OFF_TIMER.threshold_ua);
    printf("monitor.scale.ua_per_count_q16 %d\n", (int)EMITTED_MONITOR.scale.ua_per_count_q16);
    printf("monitor.abs_tol_ua %d\n", (int)EMITTED_MONITOR.abs_tol_ua);
    printf("trip.instantaneous_counts %u\n", (unsigned)EMITTED_TRIP.instantaneous_counts);
    printf("trip.full_scale_counts %u\n", (unsigned)EMITTED_TRIP.full_scale_counts);
    printf("trip.inverse_table.instant_reset %u\n", (unsigned)EMITTED_TRIP.inverse_table.instant_reset);
    printf("coil_driver.pull_in_ua %d\n", (int)EMITTED_COIL_DRIVER.pull_in_ua);
    printf("coil_driver.hold.step_q31 %d\n", (int)EMITTED_COIL_DRIVER.hold.step_q31);
    printf("coil_driver.pull_in_max_ticks %u\n", (unsigned)EMITTED_COIL_DRIVER.pull_in_max_ticks);
    printf("coil_driver.hold_regulated %u\n", (unsigned)EMITTED_COIL_DRIVER.hold_regulated);"#,
    );
    let s = System::from_file(&valve).unwrap_or_else(|e| panic!("{e}"));
    let fw = s.firmware_inputs().unwrap_or_else(|e| panic!("{e}"));
    let c = fw.coil.expect("a coil drive");
    let est = c.estimator.raw();
    let trip = c.trip.raw();
    let d = scenario::run::coil_driver(s.description(), f64::from(fw.temp_c))
        .unwrap_or_else(|e| panic!("{e}"))
        .driver()
        .raw();
    assert_values(
        &got,
        &[
            ("estimator.on_step_q31", est.on_step_q31.into()),
            ("estimator.off.step_q31", est.off.step_q31.into()),
            ("estimator.off.clamp_mv", est.off.clamp_mv.into()),
            (
                "off_timer.threshold_ua",
                c.off_timer.expect("tracked").raw().threshold_ua.into(),
            ),
            (
                "monitor.scale.ua_per_count_q16",
                c.monitor.raw().scale.ua_per_count_q16.into(),
            ),
            ("monitor.abs_tol_ua", c.monitor.raw().abs_tol_ua.into()),
            (
                "trip.instantaneous_counts",
                trip.instantaneous_counts.into(),
            ),
            ("trip.full_scale_counts", trip.full_scale_counts.into()),
            (
                "trip.inverse_table.instant_reset",
                i128::from(trip.inverse_table.instant_reset),
            ),
            ("coil_driver.pull_in_ua", d.pull_in_ua.into()),
            ("coil_driver.hold.step_q31", d.hold.step_q31.into()),
            ("coil_driver.pull_in_max_ticks", d.pull_in_max_ticks.into()),
            (
                "coil_driver.hold_regulated",
                i128::from(d.hold_mode == lenz::drive::HoldMode::Current),
            ),
        ],
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_boost_header_compiles_and_holds_the_planned_values() {
    let dir = scratch("boost");
    let got = c_values(
        &scenario_path("boost.toml"),
        "lenz_boost.h",
        &dir,
        r#"    long long sat = 0;
    for (int k = 0; k < LENZ_DUTY_TABLE_LEN; k++) sat += EMITTED_DUTY_LIMITER.saturation_q8[k];
    printf("duty_limiter.saturation_q8_sum %lld\n", sat);
    printf("duty_limiter.ov_trip_counts %u\n", (unsigned)EMITTED_DUTY_LIMITER.ov_trip_counts);
    printf("duty_limiter.slew_q8 %d\n", (int)EMITTED_DUTY_LIMITER.slew_q8);
    printf("boost_loop.target_counts %u\n", (unsigned)EMITTED_BOOST_LOOP.target_counts);
    printf("boost_loop.kp_q16 %d\n", (int)EMITTED_BOOST_LOOP.kp_q16);
    printf("boost_loop.limiter.full_scale %u\n", (unsigned)EMITTED_BOOST_LOOP.limiter.full_scale);"#,
    );
    let s = System::from_file(scenario_path("boost.toml")).unwrap_or_else(|e| panic!("{e}"));
    let fw = s.firmware_inputs().unwrap_or_else(|e| panic!("{e}"));
    let dl = fw
        .boost
        .and_then(|b| b.duty_limiter)
        .expect("a duty limiter")
        .raw();
    let f = s.description();
    let (Some(b), Controller::Boost(k)) = (&f.system.boost, &f.controller) else {
        panic!("boost.toml has [system.boost] and [controller.boost]");
    };
    let lp = scenario::run::boost_regulator(f, b, k)
        .unwrap_or_else(|e| panic!("{e}"))
        .driver()
        .raw();
    assert_values(
        &got,
        &[
            (
                "duty_limiter.saturation_q8_sum",
                dl.saturation_q8.iter().map(|&x| i128::from(x)).sum(),
            ),
            ("duty_limiter.ov_trip_counts", dl.ov_trip_counts.into()),
            ("duty_limiter.slew_q8", dl.slew_q8.into()),
            ("boost_loop.target_counts", lp.target_counts.into()),
            ("boost_loop.kp_q16", lp.kp_q16.into()),
            (
                "boost_loop.limiter.full_scale",
                lp.limiter.full_scale.into(),
            ),
        ],
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn rust_on_stdout_is_the_file_written_with_out() {
    let dir = scratch("rust");
    let path = dir.join("deeper/relay_constants.rs");
    let valve = scenario_path("relay.toml");
    let stdout = lenz(&["emit", &valve, "--lang", "rust"]);
    assert_eq!(stdout.status.code(), Some(0));
    let text = String::from_utf8(stdout.stdout).expect("utf-8");
    let filed = lenz(&[
        "emit",
        &valve,
        "--lang",
        "rust",
        "--out",
        path.to_str().expect("utf-8"),
    ]);
    assert_eq!(filed.status.code(), Some(0));
    assert_eq!(std::fs::read_to_string(&path).expect("written"), text);
    // Each constant says where it came from; the demo's invented-data note is carried over.
    let consts = text.matches("pub const EMITTED_").count();
    assert_eq!(consts, 5, "{text}");
    assert!(text.contains("INVENTED"), "{text}");
    assert!(text.matches("/// From: ").count() >= consts, "{text}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn bad_input_is_exit_2_naming_it() {
    let valve = scenario_path("valve.toml");
    assert_exit2(&["emit", &valve, "--lang", "fortran"], "--lang");
    assert_exit2(&["emit", &valve], "--lang");
    assert_exit2(
        &["emit", "no/such/file.toml", "--lang", "c"],
        "no/such/file.toml",
    );
    let dir = scratch("bad");
    // A folder where the file should go; a file where its folder should be.
    let folder = dir.to_str().expect("utf-8").to_string();
    assert_exit2(&["emit", &valve, "--lang", "c", "--out", &folder], "--out");
    let blocker = dir.join("plain-file");
    std::fs::write(&blocker, "x").expect("write");
    let under = blocker.join("lenz.h");
    // Checked before any work: the unreadable file is not what is reported.
    assert_exit2(
        &[
            "emit",
            "no/such/file.toml",
            "--lang",
            "rust",
            "--out",
            under.to_str().expect("utf-8"),
        ],
        "--out",
    );
    // A bad value: file:line:col and the key.
    let text = std::fs::read_to_string(&valve)
        .expect("read")
        .replace("tick = \"100us\"", "tick = \"-100us\"");
    let bad = dir.join("bad.toml");
    std::fs::write(&bad, text).expect("write");
    let line = assert_exit2(
        &["emit", bad.to_str().expect("utf-8"), "--lang", "rust"],
        "system.tick",
    );
    assert!(line.contains("bad.toml:14:8"), "{line}");
    // A boost stage without its controller plans no firmware kernel: nothing to emit is not
    // a success.
    let boost = std::fs::read_to_string(scenario_path("boost.toml")).expect("read");
    let mut kept = Vec::new();
    let mut skip = false;
    for l in boost.lines() {
        if l.starts_with('[') {
            skip = l.trim() == "[controller.boost]";
        }
        if !skip {
            kept.push(l);
        }
    }
    let bare = dir.join("bare-boost.toml");
    std::fs::write(&bare, kept.join("\n")).expect("write");
    assert_exit2(
        &["emit", bare.to_str().expect("utf-8"), "--lang", "c"],
        "nothing to emit",
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_relay_header_compiles_and_holds_the_planned_trip() {
    let dir = scratch("relay");
    let relay = without_armature("relay.toml", &dir);
    let got = c_values(
        &relay,
        "lenz_relay.h",
        &dir,
        r#"    printf("trip.instantaneous_counts %u\n", (unsigned)EMITTED_COIL_DRIVER.trip.instantaneous_counts);
    printf("off_timer.threshold_ua %d\n", (int)EMITTED_COIL_DRIVER.off_timer.threshold_ua);"#,
    );
    let s = System::from_file(&relay).unwrap_or_else(|e| panic!("{e}"));
    let c = s
        .firmware_inputs()
        .unwrap_or_else(|e| panic!("{e}"))
        .coil
        .expect("a coil drive");
    assert_values(
        &got,
        &[
            (
                "trip.instantaneous_counts",
                c.trip.raw().instantaneous_counts.into(),
            ),
            (
                "off_timer.threshold_ua",
                c.off_timer.expect("tracked").raw().threshold_ua.into(),
            ),
        ],
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// The shipped valve and relay have a plunger: the driver runs the movement detector, which
/// the C API's coil driver cannot carry. The C header is refused with the reason (exit 2),
/// never written without the detector; the Rust form carries it.
#[test]
fn the_c_header_refuses_a_coil_with_an_armature() {
    for file in ["valve.toml", "relay.toml"] {
        let out = lenz(&["emit", &scenario_path(file), "--lang", "c"]);
        assert_eq!(out.status.code(), Some(2), "{file}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.contains("the C API plans no armature movement detector; emit --lang rust"),
            "{err}"
        );
        assert!(out.stdout.is_empty(), "{file}: nothing written");
        let rust = lenz(&["emit", &scenario_path(file), "--lang", "rust"]);
        assert_eq!(rust.status.code(), Some(0), "{file}");
    }
}
