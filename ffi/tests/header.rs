//! The committed C header `include/lenz.h` is what cbindgen generates from this crate now,
//! its size checks hold the sizes of the Rust types, and it compiles as strict C99 and C11
//! with the host's gcc (where its static assertions run).
//!
//! After changing the API: `LENZ_FFI_WRITE_HEADER=1 cargo test -p lenz-ffi --test header`
//! writes the header; review the diff.

use std::path::PathBuf;
use std::process::Command;

use lenz_ffi::*;

fn crate_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn header_path() -> PathBuf {
    crate_dir().join("include").join("lenz.h")
}

/// `(C type, size in bytes)` of every type in the header, as the Rust library has them.
macro_rules! sizes {
    ($($t:ident),* $(,)?) => {
        vec![$((stringify!($t), size_of::<$t>())),*]
    };
}

fn sizes() -> Vec<(&'static str, usize)> {
    sizes![
        LenzStatus,
        LenzOffPath,
        LenzEstimatorRaw,
        LenzEstimatorConfig,
        LenzEstimatorState,
        LenzSenseScale,
        LenzMonitorRaw,
        LenzMonitorConfig,
        LenzMonitorState,
        LenzFault,
        LenzTrackingOffTimerRaw,
        LenzPlannedOffTimerRaw,
        LenzTrackingOffTimerConfig,
        LenzPlannedOffTimerConfig,
        LenzOffTimerState,
        LenzOffStatus,
        LenzDutyLimiterRaw,
        LenzDutyLimiterConfig,
        LenzDutyLimiterState,
        LenzInverseTable,
        LenzTripRaw,
        LenzTripConfig,
        LenzTripState,
        LenzCause,
        LenzVerdictKind,
        LenzTripEvent,
        LenzVerdict,
        LenzTripStateInfo,
        LenzMovementRaw,
        LenzMovementConfig,
        LenzMovementState,
        LenzMotionKind,
        LenzMotion,
        LenzSpeedEstimatorRaw,
        LenzSpeedEstimatorConfig,
        LenzSpeedEstimatorState,
        LenzJamRaw,
        LenzJamConfig,
        LenzJamState,
        LenzJamStatus,
        LenzBridgeGuardRaw,
        LenzBridgeGuardConfig,
        LenzBridgeGuardState,
        LenzBridgeMode,
        LenzBridgeCommand,
        LenzBoostLoopRaw,
        LenzBoostLoopConfig,
        LenzBoostLoopState,
    ]
}

/// The header's trailer: a static assertion of every type's size, so a C compiler whose
/// layout differs from the library's (packing options, short enums) stops with its name.
fn size_checks() -> String {
    let mut s = String::from(
        "/* Layout checks: the size of every type as the library was built. A failure here means\n   \
         the C compiler lays out structs differently (packing or enum-size options). */\n\
         #if defined(__cplusplus) && __cplusplus >= 201103L\n\
         #define LENZ_STATIC_ASSERT(cond, name) static_assert(cond, #name)\n\
         #elif defined(__STDC_VERSION__) && __STDC_VERSION__ >= 201112L\n\
         #define LENZ_STATIC_ASSERT(cond, name) _Static_assert(cond, #name)\n\
         #else\n\
         #define LENZ_STATIC_ASSERT(cond, name) typedef char name[(cond) ? 1 : -1]\n\
         #endif\n",
    );
    for (name, size) in sizes() {
        s.push_str(&format!(
            "LENZ_STATIC_ASSERT(sizeof({name}) == {size}, lenz_size_of_{name});\n"
        ));
    }
    s.push_str("\n#endif /* LENZ_H */");
    s
}

/// The header as cbindgen generates it from the sources, with the size checks appended.
fn generate() -> String {
    let dir = crate_dir();
    let mut config =
        cbindgen::Config::from_file(dir.join("cbindgen.toml")).expect("read cbindgen.toml");
    config.trailer = Some(size_checks());
    let bindings = cbindgen::Builder::new()
        .with_crate(&dir)
        .with_config(config)
        .generate()
        .expect("cbindgen generates the header");
    let mut out = Vec::new();
    bindings.write(&mut out);
    String::from_utf8(out).expect("header is UTF-8")
}

#[test]
fn committed_header_is_up_to_date() {
    let fresh = generate();
    if std::env::var_os("LENZ_FFI_WRITE_HEADER").is_some() {
        std::fs::write(header_path(), &fresh).expect("write include/lenz.h");
    }
    let committed = std::fs::read_to_string(header_path()).unwrap_or_default();
    assert!(
        committed == fresh,
        "ffi/include/lenz.h is out of date: regenerate it with \
         LENZ_FFI_WRITE_HEADER=1 cargo test -p lenz-ffi --test header and commit it"
    );
}

/// Every type the header defines has a size check (a new type must be added to [`sizes`]).
#[test]
fn every_header_type_has_a_size_check() {
    let header = std::fs::read_to_string(header_path()).expect("read include/lenz.h");
    let checked: Vec<&str> = sizes().iter().map(|(n, _)| *n).collect();
    let mut defined = Vec::new();
    for line in header.lines() {
        let name = line
            .strip_prefix("} ")
            .or_else(|| line.strip_prefix("typedef uint8_t "))
            .or_else(|| line.strip_prefix("typedef int32_t "))
            .and_then(|r| r.strip_suffix(';'));
        if let Some(n) = name {
            defined.push(n.to_string());
        }
    }
    assert!(defined.len() >= 20, "too few types found: {defined:?}");
    for d in &defined {
        assert!(checked.contains(&d.as_str()), "no size check for `{d}`");
    }
}

/// Compiles `source` with the host's gcc and the given flags; the output on failure.
fn gcc(name: &str, source: &str, flags: &[&str]) -> Result<(), String> {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("lenz-ffi-header");
    std::fs::create_dir_all(&dir).expect("create the scratch folder");
    let c = dir.join(format!("{name}.c"));
    std::fs::write(&c, source).expect("write the C file");
    let out = Command::new("gcc")
        .args(flags)
        .arg("-I")
        .arg(crate_dir().join("include"))
        .arg("-c")
        .arg(&c)
        .arg("-o")
        .arg(dir.join(format!("{name}.o")))
        .output()
        .unwrap_or_else(|e| {
            panic!("cannot run gcc (the host C compiler; .ci/run installs it): {e}")
        });
    if out.status.success() {
        Ok(())
    } else {
        Err(String::from_utf8_lossy(&out.stderr).into_owned())
    }
}

/// A C file that uses the header as firmware would (including it twice).
const USER: &str = r#"#include "lenz.h"
#include "lenz.h" /* twice: the guard holds */

static const LenzEstimatorRaw VALVE = {
    .on_step_q31 = 56509424,
    .on_conductance_q16 = 2048000,
    .switch_drop_mv = 0,
    .off = { .step_q31 = 56509424, .conductance_q16 = 2048000, .clamp_mv = 700, .supply_coupled = 0 },
};

int tick(int32_t supply_mv, int32_t *current_ua) {
    static LenzEstimatorConfig cfg;
    static LenzEstimatorState state;
    if (lenz_estimator_init(&cfg, &VALVE) != LENZ_STATUS_OK) return -1;
    if (lenz_estimator_state_init(&state, 0) != LENZ_STATUS_OK) return -1;
    return lenz_estimator_update(&cfg, &state, true, supply_mv, current_ua) == LENZ_STATUS_OK ? 0 : -1;
}
"#;

#[test]
fn header_compiles_as_strict_c99_and_c11() {
    for std in ["-std=c99", "-std=c11"] {
        gcc(
            &format!("user{}", &std[5..]),
            USER,
            &[std, "-Wall", "-Wextra", "-Werror", "-pedantic"],
        )
        .unwrap_or_else(|e| panic!("lenz.h does not compile with gcc {std}:\n{e}"));
    }
}

/// The size checks can fail: with packed structs (`-fpack-struct`), the raw structs lose
/// their padding and the static assertions stop the build, naming the type.
#[test]
fn size_checks_stop_a_compiler_with_another_layout() {
    let err = gcc("packed", USER, &["-std=c11", "-fpack-struct"])
        .expect_err("a packed layout must fail the size checks");
    assert!(err.contains("lenz_size_of_LenzOffPath"), "{err}");
}

/// The README's "From C" example compiles as strict C99 against the committed header.
#[test]
fn readme_c_example_compiles() {
    let readme =
        std::fs::read_to_string(crate_dir().join("..").join("README.md")).expect("read README.md");
    let section = readme
        .split("## From C")
        .nth(1)
        .expect("README has a \"From C\" section");
    let code = section
        .split("```c\n")
        .nth(1)
        .and_then(|c| c.split("```").next())
        .expect("the section has a C block");
    assert!(code.contains("lenz_estimator_update"), "{code}");
    gcc(
        "readme",
        code,
        &["-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic"],
    )
    .unwrap_or_else(|e| panic!("the README's C example does not compile:\n{e}"));
}
