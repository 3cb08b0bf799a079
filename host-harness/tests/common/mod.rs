//! Shared helpers of the CLI tests: run the `lenz` binary, read its JSON, check exit code 2.

// Each test file uses its own subset of these helpers.
#![allow(dead_code)]

use std::process::{Command, Output};

use serde_json::Value;

/// Runs the `lenz` binary built for these tests.
pub fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("the lenz binary runs")
}

/// Runs `lenz` expecting success and one JSON value on stdout.
pub fn json(args: &[&str]) -> Value {
    let out = lenz(args);
    assert!(
        out.status.success(),
        "lenz {args:?} failed ({:?}): {}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("one JSON object")
}

/// The number at `key`, panicking with the object when missing.
pub fn num(v: &Value, key: &str) -> f64 {
    v.get(key)
        .and_then(Value::as_f64)
        .unwrap_or_else(|| panic!("{key} missing or not a number in {v}"))
}

/// `|got − want| ≤ rtol·|want|`.
pub fn close(got: f64, want: f64, rtol: f64) -> bool {
    (got - want).abs() <= rtol * want.abs()
}

/// Asserts the number at `key` is within `rtol` of `want`.
pub fn assert_key(v: &Value, key: &str, want: f64, rtol: f64) {
    let got = num(v, key);
    assert!(
        close(got, want, rtol),
        "{key}: got {got}, want {want} (rel tol {rtol})"
    );
}

/// Exit code 2, exactly one line on stderr containing `text`, nothing on stdout; returns the
/// line.
pub fn assert_exit2(args: &[&str], text: &str) -> String {
    let out = lenz(args);
    assert_eq!(out.status.code(), Some(2), "{args:?}");
    assert!(out.stdout.is_empty(), "stdout must be empty for {args:?}");
    let err = String::from_utf8_lossy(&out.stderr).to_string();
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    assert!(err.contains(text), "'{err}' must contain '{text}'");
    err
}
