//! Firmware targets: building the target images of `benches/target`, running them under
//! `qemu-system-arm`, the disassembly check and the cost measurement.
//!
//! Used by `lenz cost` and by the target checks of `cargo xtask test`. The images and the
//! kernel table live in `benches/target` (see its `src/kernels/mod.rs`): the on-target test
//! images [`CHECK_IMAGES`] and the benchmark image. This side knows no kernel by name except
//! for the hard instruction caps in [`budget`] (and a driver's tick by its `_driver` suffix,
//! for its state limit).
//!
//! # Toolchain
//!
//! [`Toolchain::detect`] uses rustup's standard library for a target where it is installed,
//! otherwise Debian's `rustc-web`/`cargo-web` with `rust-web-src` and `-Zbuild-std=core`
//! (`RUSTC_BOOTSTRAP=1`), always linking with the rustup toolchain's `rust-lld`. Missing tools
//! are reported with the exact packages to install ([`Missing`]).

pub mod budget;
pub mod c_vectors;
mod c_vectors_motion;
pub mod cost;
pub mod disasm;
mod toolchain;
pub mod vectors;

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

pub use toolchain::{CCompiler, Missing, Toolchain};

/// A Cortex-M target and the machine that emulates it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Target {
    /// Cortex-M0 (ARMv6-M: no hardware divide, no 32×32→64 multiply, no FPU).
    M0,
    /// Cortex-M3 (ARMv7-M: hardware divide and long multiply, no FPU).
    M3,
    /// Cortex-M4F (ARMv7E-M with single-precision FPU).
    M4f,
}

/// Every target, in table order.
pub const TARGETS: [Target; 3] = [Target::M0, Target::M3, Target::M4f];

impl Target {
    /// The short name used by `lenz cost --target` and in `budget.json`.
    #[must_use]
    pub const fn key(self) -> &'static str {
        match self {
            Target::M0 => "m0",
            Target::M3 => "m3",
            Target::M4f => "m4f",
        }
    }

    /// The core's name.
    #[must_use]
    pub const fn core(self) -> &'static str {
        match self {
            Target::M0 => "Cortex-M0",
            Target::M3 => "Cortex-M3",
            Target::M4f => "Cortex-M4F",
        }
    }

    /// The Rust target triple.
    #[must_use]
    pub const fn triple(self) -> &'static str {
        match self {
            Target::M0 => "thumbv6m-none-eabi",
            Target::M3 => "thumbv7m-none-eabi",
            Target::M4f => "thumbv7em-none-eabihf",
        }
    }

    /// The `qemu-system-arm -machine` that emulates it.
    #[must_use]
    pub const fn machine(self) -> &'static str {
        match self {
            Target::M0 => "microbit",
            Target::M3 => "lm3s6965evb",
            Target::M4f => "mps2-an386",
        }
    }

    /// The target for a short name (`m0`, `m3`, `m4f`).
    #[must_use]
    pub fn from_key(key: &str) -> Option<Target> {
        TARGETS.into_iter().find(|t| t.key() == key)
    }
}

/// The workspace root (this package's parent folder, fixed at build time).
#[must_use]
pub fn workspace_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .map_or_else(|| PathBuf::from("."), Path::to_path_buf)
}

/// The target-only crate with the images.
#[must_use]
pub fn images_dir() -> PathBuf {
    workspace_root().join("benches").join("target")
}

/// The shared target folder of every firmware build.
#[must_use]
pub fn target_dir() -> PathBuf {
    workspace_root().join("target").join("firmware")
}

/// What to build for a target.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Build {
    /// The `lenz` library alone, with or without the `defmt` feature.
    Lenz {
        /// Build with `--features defmt`.
        defmt: bool,
    },
    /// An on-target test image (one of [`CHECK_IMAGES`]).
    Check(&'static str),
    /// The benchmark image (`cost`).
    Cost,
    /// The C API's static library `liblenz_ffi.a` (package `lenz-ffi` of the workspace).
    Ffi,
}

impl Build {
    fn describe(self) -> &'static str {
        match self {
            Build::Lenz { defmt: false } => "lenz (no features)",
            Build::Lenz { defmt: true } => "lenz (defmt)",
            Build::Check(_) => "on-target test image",
            Build::Cost => "benchmark image",
            Build::Ffi => "C API static library",
        }
    }
}

/// Builds `what` for `target` in release mode (the images' profile: `opt-level = "s"`, one
/// codegen unit) and returns the image path (the folder of the library for [`Build::Lenz`],
/// the archive for [`Build::Ffi`]).
///
/// # Errors
///
/// The build failed (its output was shown on the terminal).
pub fn build(tc: &Toolchain, target: Target, what: Build) -> Result<PathBuf, String> {
    let mut cmd = tc.cargo_command(target);
    // The C API is a member of the host workspace (its profile set to the images' here).
    let manifest = if what == Build::Ffi {
        cmd.env("CARGO_PROFILE_RELEASE_OPT_LEVEL", "s")
            .env("CARGO_PROFILE_RELEASE_CODEGEN_UNITS", "1");
        workspace_root().join("Cargo.toml")
    } else {
        images_dir().join("Cargo.toml")
    };
    cmd.arg("build")
        .arg("--quiet")
        .arg("--release")
        .arg("--manifest-path")
        .arg(manifest)
        .args(["--target", target.triple()]);
    match what {
        // Features can be chosen only for the images' own package: its `defmt` feature turns
        // on lenz's (and builds the images' small library beside it).
        Build::Lenz { defmt: false } => {
            cmd.args(["-p", "lenz"]);
        }
        Build::Lenz { defmt: true } => {
            cmd.args(["-p", "lenz-target", "--lib", "--features", "defmt"]);
        }
        Build::Check(image) => {
            cmd.args(["--bin", image]);
        }
        Build::Cost => {
            cmd.args(["--bin", "cost"]);
        }
        Build::Ffi => {
            cmd.args(["-p", "lenz-ffi", "--lib"]);
        }
    }
    let status = cmd
        .status()
        .map_err(|e| format!("{}: could not start cargo: {e}", target.triple()))?;
    if !status.success() {
        return Err(format!(
            "building the {} for {} failed ({status})",
            what.describe(),
            target.triple()
        ));
    }
    let dir = target_dir().join(target.triple()).join("release");
    Ok(match what {
        Build::Lenz { .. } => dir,
        Build::Check(image) => dir.join(image),
        Build::Cost => dir.join("cost"),
        Build::Ffi => dir.join("liblenz_ffi.a"),
    })
}

/// What an image printed through semihosting, and how the emulator ended.
#[derive(Debug, Clone)]
pub struct RunOutput {
    /// The emulator exited with status 0 (the image reported success).
    pub success: bool,
    /// Exit status text.
    pub status: String,
    /// Everything the emulator printed (semihosting console and diagnostics).
    pub console: String,
}

/// Longest run of one image before it counts as hung.
const RUN_TIMEOUT: Duration = Duration::from_secs(300);

/// Runs `image` under `qemu-system-arm` on the target's machine, with `-icount shift=N` when
/// `icount_shift` is given.
///
/// # Errors
///
/// The emulator could not be started, or the run took longer than five minutes.
pub fn run(
    tc: &Toolchain,
    target: Target,
    image: &Path,
    icount_shift: Option<u32>,
) -> Result<RunOutput, String> {
    let mut cmd = Command::new(&tc.qemu);
    cmd.args(["-machine", target.machine()])
        .args(["-nographic", "-monitor", "none", "-serial", "none"])
        .args(["-semihosting-config", "enable=on,target=native"]);
    if let Some(shift) = icount_shift {
        cmd.args(["-icount", &format!("shift={shift}")]);
    }
    cmd.arg("-kernel")
        .arg(image)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    let mut child = cmd
        .spawn()
        .map_err(|e| format!("could not start {}: {e}", tc.qemu.display()))?;
    // QEMU writes the semihosting console to stderr; read both pipes in the background so
    // neither can fill up.
    let readers: Vec<_> = [
        child
            .stdout
            .take()
            .map(|p| Box::new(p) as Box<dyn Read + Send>),
        child
            .stderr
            .take()
            .map(|p| Box::new(p) as Box<dyn Read + Send>),
    ]
    .into_iter()
    .flatten()
    .map(|mut pipe| {
        std::thread::spawn(move || {
            let mut s = String::new();
            let _ = pipe.read_to_string(&mut s);
            s
        })
    })
    .collect();
    let start = Instant::now();
    let status = loop {
        match child.try_wait() {
            Ok(Some(status)) => break status,
            Ok(None) if start.elapsed() > RUN_TIMEOUT => {
                let _ = child.kill();
                let _ = child.wait();
                return Err(format!(
                    "{} on {} did not finish within {} s",
                    image.display(),
                    target.machine(),
                    RUN_TIMEOUT.as_secs()
                ));
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(20)),
            Err(e) => return Err(format!("waiting for the emulator: {e}")),
        }
    };
    let console = readers
        .into_iter()
        .map(|r| r.join().unwrap_or_default())
        .collect::<Vec<_>>()
        .join("");
    Ok(RunOutput {
        success: status.success(),
        status: status.to_string(),
        console,
    })
}

/// Per-kernel result of the on-target test image.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct KernelCheck {
    /// Kernel name.
    pub name: String,
    /// Vectors compared with the host's results.
    pub vectors: u64,
    /// `size_of` the per-channel state on the target, bytes.
    pub state_bytes: u64,
}

/// `key=value` fields of a report line.
pub(crate) fn field<'a>(line: &'a str, key: &str) -> Option<&'a str> {
    line.split_whitespace()
        .filter_map(|kv| kv.split_once('='))
        .find(|(k, _)| *k == key)
        .map(|(_, v)| v)
}

pub(crate) fn field_u64(line: &str, key: &str) -> Option<u64> {
    field(line, key).and_then(|v| v.parse().ok())
}

/// The on-target test images (binaries of `benches/target`): together they check every kernel,
/// each a part (the vectors of all kernels do not fit the micro:bit's 256 KiB of flash).
pub const CHECK_IMAGES: [&str; 2] = ["check", "check2"];

/// What one on-target test image checked.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ImageCheck {
    /// The image (ELF file).
    pub image: PathBuf,
    /// Its kernels.
    pub kernels: Vec<KernelCheck>,
}

/// Builds and runs every on-target test image for `target`: every kernel on the
/// host-generated vectors, bit for bit.
///
/// # Errors
///
/// A build or run failure, or any kernel result that differed from the host's (the message
/// names the kernel and the vector index), or an incomplete report, or a kernel checked by
/// two images.
pub fn check_images_on_target(tc: &Toolchain, target: Target) -> Result<Vec<ImageCheck>, String> {
    let mut out: Vec<ImageCheck> = Vec::new();
    for name in CHECK_IMAGES {
        let image = build(tc, target, Build::Check(name))?;
        let run_out = run(tc, target, &image, None)?;
        let kernels = parse_check(target, &run_out).map_err(|e| format!("{name}: {e}"))?;
        for k in &kernels {
            if out
                .iter()
                .any(|i| i.kernels.iter().any(|o| o.name == k.name))
            {
                return Err(format!("kernel {} is checked by two test images", k.name));
            }
        }
        out.push(ImageCheck { image, kernels });
    }
    Ok(out)
}

/// [`check_images_on_target`], the kernels of every image in one list.
///
/// # Errors
///
/// As [`check_images_on_target`].
pub fn check_on_target(tc: &Toolchain, target: Target) -> Result<Vec<KernelCheck>, String> {
    Ok(check_images_on_target(tc, target)?
        .into_iter()
        .flat_map(|i| i.kernels)
        .collect())
}

/// Reads the report of an image that checks vectors (`kernel=… vectors=… failures=…
/// state_bytes=…` per kernel, `FAIL …` lines, `DONE failures=…`): the target images'
/// `check` and the C example.
///
/// # Errors
///
/// A difference, a failed run or an incomplete report; the message holds the `FAIL` lines
/// or, without any, everything the image printed.
pub fn parse_check(target: Target, out: &RunOutput) -> Result<Vec<KernelCheck>, String> {
    let lines: Vec<&str> = out.console.lines().collect();
    let fails: Vec<&str> = lines
        .iter()
        .copied()
        .filter(|l| l.starts_with("FAIL"))
        .collect();
    let done = lines
        .iter()
        .find(|l| l.starts_with("DONE "))
        .and_then(|l| field_u64(l, "failures"));
    let kernels: Vec<KernelCheck> = lines
        .iter()
        .filter(|l| l.starts_with("kernel="))
        .filter_map(|l| {
            Some(KernelCheck {
                name: field(l, "kernel")?.to_string(),
                vectors: field_u64(l, "vectors")?,
                state_bytes: field_u64(l, "state_bytes")?,
            })
        })
        .collect();
    if !fails.is_empty() || done != Some(0) || !out.success || kernels.is_empty() {
        let mut msg = format!(
            "on-target test on {} ({}) failed (emulator {}):",
            target.triple(),
            target.machine(),
            out.status
        );
        for l in &fails {
            msg.push_str("\n  ");
            msg.push_str(l);
        }
        if fails.is_empty() {
            msg.push_str("\n  no complete report; the image printed:\n");
            msg.push_str(&out.console);
        }
        return Err(msg);
    }
    Ok(kernels)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn output(console: &str, success: bool) -> RunOutput {
        RunOutput {
            success,
            status: if success {
                "exit status: 0"
            } else {
                "exit status: 1"
            }
            .to_string(),
            console: console.to_string(),
        }
    }

    #[test]
    fn check_report_passes_only_when_complete_and_clean() {
        let good = "kernel=estimator vectors=10 failures=0 state_bytes=8\nDONE failures=0\n";
        let k = parse_check(Target::M0, &output(good, true)).unwrap();
        assert_eq!(k.len(), 1);
        assert_eq!(k[0].vectors, 10);
        let bad = "FAIL kernel=estimator vector=3 case=0 step=3 got=1 expected=2\n\
                   kernel=estimator vectors=10 failures=1 state_bytes=8\nDONE failures=1\n";
        let e = parse_check(Target::M0, &output(bad, false)).unwrap_err();
        assert!(e.contains("kernel=estimator vector=3"), "{e}");
        // A crash before the summary is a failure even with exit status 0.
        assert!(parse_check(Target::M3, &output("kernel=x vectors=1", true)).is_err());
        assert!(parse_check(Target::M3, &output("DONE failures=0", true)).is_err());
    }

    #[test]
    fn target_keys_round_trip() {
        for t in TARGETS {
            assert_eq!(Target::from_key(t.key()), Some(t));
        }
        assert_eq!(Target::from_key("m7"), None);
    }
}
