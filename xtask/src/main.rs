//! `cargo xtask test`: runs every check of the workspace and fails when any fails.
//!
//! Steps, in order, each a separate process whose failure stops the run:
//! 1. `cargo fmt --all -- --check`
//! 2. `cargo clippy --workspace --all-targets -- -D warnings`
//! 3. `cargo clippy -p lenz --features defmt,serde -- -D warnings` (the optional features)
//! 4. `cargo test --workspace` (host tests, doctests, the no_std link probe) with a fixed
//!    proptest seed ([`PROPTEST_SEED`], or the caller's `PROPTEST_RNG_SEED`): the same draws on
//!    every run, so an unrelated change cannot fail on an unlucky draw
//! 5. `cargo doc --workspace --no-deps` with `RUSTDOCFLAGS="-D warnings"` (broken or private
//!    intra-doc links fail)
//! 6. the target checks ([`target`]): Cortex-M builds of lenz, the on-target test image under
//!    qemu, the disassembly check and the cost budget
//! 7. the C API's checks ([`ffi`]): `liblenz_ffi.a` for the Cortex-M targets, the C firmware
//!    example on the vectors under qemu, the no-panic link check and the code sizes
//!
//! `cargo test --workspace` alone stays the quick host-only run; `cargo xtask target` runs step 6
//! alone and `cargo xtask ffi` step 7.
//!
//! `cargo test --workspace` explores: proptest draws a
//! fresh seed each time (a failure is saved in the test's `.proptest-regressions` file, to be
//! committed, and is replayed first by every later run, this one included).

mod ffi;
mod target;

use std::path::{Path, PathBuf};
use std::process::{Command, ExitCode};
use std::time::Instant;

/// The workspace root (the parent of this package's folder).
fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .map_or_else(|| PathBuf::from("."), Path::to_path_buf)
}

fn cargo() -> String {
    std::env::var("CARGO").unwrap_or_else(|_| "cargo".to_string())
}

/// Runs `cargo args…` in the workspace root; `Err` names the step that failed.
fn step(name: &str, args: &[&str]) -> Result<(), String> {
    step_env(name, args, &[])
}

/// [`step`] with extra environment variables.
fn step_env(name: &str, args: &[&str], env: &[(&str, &str)]) -> Result<(), String> {
    let t = Instant::now();
    let shown: Vec<String> = env.iter().map(|(k, v)| format!("{k}=\"{v}\" ")).collect();
    println!("xtask: {name}: {}cargo {}", shown.concat(), args.join(" "));
    let status = Command::new(cargo())
        .args(args)
        .envs(env.iter().copied())
        .current_dir(root())
        .status()
        .map_err(|e| format!("{name}: could not start cargo: {e}"))?;
    if status.success() {
        println!("xtask: {name}: ok ({:.1} s)", t.elapsed().as_secs_f64());
        Ok(())
    } else {
        Err(format!("{name} failed ({status})"))
    }
}

/// The proptest seed of the host tests in `cargo xtask test` (proptest reads
/// `PROPTEST_RNG_SEED` in `Config::default()`; properties that fix their own seed keep it).
pub const PROPTEST_SEED: &str = "20260711";

/// The environment of the host tests: the caller's `PROPTEST_RNG_SEED` if set (to reproduce or
/// vary a run), else [`PROPTEST_SEED`].
fn host_test_env(caller_seed: Option<String>) -> [(&'static str, String); 1] {
    [(
        "PROPTEST_RNG_SEED",
        caller_seed
            .filter(|s| !s.is_empty())
            .unwrap_or_else(|| PROPTEST_SEED.to_string()),
    )]
}

fn test() -> Result<(), String> {
    step("format", &["fmt", "--all", "--", "--check"])?;
    step(
        "clippy",
        &[
            "clippy",
            "--workspace",
            "--all-targets",
            "--",
            "-D",
            "warnings",
        ],
    )?;
    step(
        "clippy (features)",
        &[
            "clippy",
            "-p",
            "lenz",
            "--features",
            "defmt,serde",
            "--",
            "-D",
            "warnings",
        ],
    )?;
    let env = host_test_env(std::env::var("PROPTEST_RNG_SEED").ok());
    let env: Vec<(&str, &str)> = env.iter().map(|(k, v)| (*k, v.as_str())).collect();
    step_env("host tests", &["test", "--workspace"], &env)?;
    step_env(
        "docs",
        &["doc", "--workspace", "--no-deps"],
        &[("RUSTDOCFLAGS", "-D warnings")],
    )?;
    target::checks()?;
    ffi::checks()?;
    Ok(())
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let result = match args.first().map(String::as_str) {
        Some("test") => {
            let t = Instant::now();
            let r = test();
            if r.is_ok() {
                println!(
                    "xtask: all checks passed in {:.1} s",
                    t.elapsed().as_secs_f64()
                );
            }
            r
        }
        // The target checks alone (step 6: builds, on-target vectors, disassembly, budgets).
        Some("target") => target::checks(),
        // The C API's target checks alone (they need the firmware tools `test` installs).
        Some("ffi") => ffi::checks(),
        _ => Err("usage: cargo xtask test | cargo xtask target | cargo xtask ffi".to_string()),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("xtask: {e}");
            ExitCode::FAILURE
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn host_tests_run_with_a_fixed_proptest_seed() {
        let [(key, seed)] = host_test_env(None);
        assert_eq!(key, "PROPTEST_RNG_SEED");
        // proptest parses the variable as a u64; anything else would be ignored with a warning.
        assert!(seed.parse::<u64>().is_ok(), "{seed}");
        assert_eq!(host_test_env(Some(String::new()))[0].1, seed);
        assert_eq!(host_test_env(Some("7".into()))[0].1, "7");
    }
}
