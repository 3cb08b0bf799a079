//! Finding the tools of the firmware builds, or saying exactly what to install.

use std::fmt;
use std::path::{Path, PathBuf};
use std::process::Command;

use super::Target;

/// Debian packages of the firmware checks, in `apt-get install` order.
pub const APT_RUST: [&str; 3] = ["rustc-web", "cargo-web", "rust-web-src"];
/// Debian package of the emulator.
pub const APT_QEMU: &str = "qemu-system-arm";
/// Debian package of `arm-none-eabi-objdump` and `arm-none-eabi-nm`.
pub const APT_BINUTILS: &str = "binutils-arm-none-eabi";

/// Debian package of `arm-none-eabi-gcc` (the C firmware example of the C API).
pub const APT_GCC: &str = "gcc-arm-none-eabi";

/// Where Debian's `rustc-web` and `cargo-web` install their programs.
const DEBIAN_RUSTC: &str = "/usr/bin/rustc";
const DEBIAN_CARGO: &str = "/usr/bin/cargo";

/// The tools of the firmware builds and runs.
#[derive(Debug, Clone)]
pub struct Toolchain {
    /// Targets whose standard library rustup has installed (built without `build-std`).
    rustup_targets: Vec<Target>,
    /// Debian's `cargo` and `rustc` (1.85 or later with library source), if present.
    debian: Option<(PathBuf, PathBuf)>,
    /// The linker: rustup's `rust-lld`.
    pub linker: PathBuf,
    /// `qemu-system-arm`.
    pub qemu: PathBuf,
    /// `arm-none-eabi-objdump`.
    pub objdump: PathBuf,
    /// `arm-none-eabi-nm`.
    pub nm: PathBuf,
}

/// Tools the firmware checks need but did not find.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Missing {
    /// One line per missing tool.
    pub what: Vec<String>,
    /// Debian packages that provide them (empty if none does).
    pub apt_packages: Vec<&'static str>,
    /// Other steps (not from apt) needed.
    pub other: Vec<String>,
}

impl fmt::Display for Missing {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "the firmware target checks need tools that are missing:")?;
        for w in &self.what {
            writeln!(f, "  - {w}")?;
        }
        if !self.apt_packages.is_empty() {
            writeln!(
                f,
                "install on Debian (as root): apt-get update && apt-get install -y {}",
                self.apt_packages.join(" ")
            )?;
        }
        for o in &self.other {
            writeln!(f, "{o}")?;
        }
        Ok(())
    }
}

fn output(program: &Path, args: &[&str]) -> Option<String> {
    let out = Command::new(program).args(args).output().ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
}

/// The first `name` on `PATH`.
fn which(name: &str) -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .map(|d| d.join(name))
        .find(|p| p.is_file())
}

/// The rustup toolchain's `rustc` (the one on `PATH`): its sysroot and host triple.
fn rustup_sysroot() -> Option<(PathBuf, String)> {
    let rustc = which("rustc")?;
    let sysroot = output(&rustc, &["--print", "sysroot"])?;
    let verbose = output(&rustc, &["-vV"])?;
    let host = verbose
        .lines()
        .find_map(|l| l.strip_prefix("host: "))?
        .to_string();
    Some((PathBuf::from(sysroot), host))
}

/// `true` if rustup's `rustc` has the standard library for `target`.
fn rustup_has_target(target: Target) -> bool {
    let Some(rustc) = which("rustc") else {
        return false;
    };
    let Some(dir) = output(
        &rustc,
        &["--print", "target-libdir", "--target", target.triple()],
    ) else {
        return false;
    };
    std::fs::read_dir(dir).is_ok_and(|entries| {
        entries
            .flatten()
            .any(|e| e.file_name().to_string_lossy().starts_with("libcore-"))
    })
}

/// Debian's `cargo` and `rustc` if both exist and the library source is installed.
fn debian_rust() -> Result<(PathBuf, PathBuf), Vec<String>> {
    let (cargo, rustc) = (PathBuf::from(DEBIAN_CARGO), PathBuf::from(DEBIAN_RUSTC));
    let mut missing = Vec::new();
    if !cargo.is_file() {
        missing.push(format!("{DEBIAN_CARGO} (Debian's cargo-web)"));
    }
    let sysroot = output(&rustc, &["--print", "sysroot"]);
    match &sysroot {
        None => missing.push(format!("{DEBIAN_RUSTC} (Debian's rustc-web)")),
        Some(root) => {
            let core = Path::new(root).join("lib/rustlib/src/rust/library/core/Cargo.toml");
            if !core.is_file() {
                missing.push(format!(
                    "the Rust library source for -Zbuild-std=core ({}; Debian's rust-web-src)",
                    core.display()
                ));
            }
        }
    }
    if missing.is_empty() {
        Ok((cargo, rustc))
    } else {
        Err(missing)
    }
}

impl Toolchain {
    /// Finds the tools for `targets`.
    ///
    /// # Errors
    ///
    /// [`Missing`] lists what is missing and the Debian packages that provide it.
    pub fn detect(targets: &[Target]) -> Result<Toolchain, Missing> {
        let mut m = Missing {
            what: Vec::new(),
            apt_packages: Vec::new(),
            other: Vec::new(),
        };
        let rustup_targets: Vec<Target> = targets
            .iter()
            .copied()
            .filter(|t| rustup_has_target(*t))
            .collect();
        let need_debian = targets.iter().any(|t| !rustup_targets.contains(t));
        let debian = if need_debian {
            match debian_rust() {
                Ok(d) => Some(d),
                Err(what) => {
                    m.what.extend(what);
                    m.apt_packages.extend(APT_RUST);
                    m.other.push(format!(
                        "(or, where rustup can download them: rustup target add {})",
                        targets
                            .iter()
                            .filter(|t| !rustup_targets.contains(t))
                            .map(|t| t.triple())
                            .collect::<Vec<_>>()
                            .join(" ")
                    ));
                    None
                }
            }
        } else {
            None
        };
        let linker = rustup_sysroot()
            .map(|(root, host)| root.join("lib/rustlib").join(host).join("bin/rust-lld"))
            .filter(|p| p.is_file());
        if linker.is_none() {
            m.what.push(
                "rust-lld (shipped with the rustup toolchain in lib/rustlib/<host>/bin)".into(),
            );
            m.other.push(
                "install Rust with rustup (https://rustup.rs), which ships rust-lld".to_string(),
            );
        }
        let qemu = which("qemu-system-arm");
        if qemu.is_none() {
            m.what.push("qemu-system-arm".into());
            m.apt_packages.push(APT_QEMU);
        }
        let objdump = which("arm-none-eabi-objdump");
        let nm = which("arm-none-eabi-nm");
        if objdump.is_none() || nm.is_none() {
            m.what
                .push("arm-none-eabi-objdump and arm-none-eabi-nm".into());
            m.apt_packages.push(APT_BINUTILS);
        }
        match (linker, qemu, objdump, nm) {
            (Some(linker), Some(qemu), Some(objdump), Some(nm)) if m.what.is_empty() => {
                Ok(Toolchain {
                    rustup_targets,
                    debian,
                    linker,
                    qemu,
                    objdump,
                    nm,
                })
            }
            _ => Err(m),
        }
    }

    /// How `target` is built, for the log.
    #[must_use]
    pub fn describe(&self, target: Target) -> String {
        if self.rustup_targets.contains(&target) {
            format!("{}: rustup's standard library", target.triple())
        } else {
            format!(
                "{}: {} with -Zbuild-std=core",
                target.triple(),
                self.debian
                    .as_ref()
                    .map_or_else(String::new, |(_, rustc)| rustc.display().to_string())
            )
        }
    }

    /// A `cargo` command set up for `target`: the toolchain, `build-std` where needed, the
    /// linker and the shared target folder.
    pub(crate) fn cargo_command(&self, target: Target) -> Command {
        let triple_env = target.triple().to_uppercase().replace('-', "_");
        let mut cmd = match (&self.debian, self.rustup_targets.contains(&target)) {
            (Some((cargo, rustc)), false) => {
                let mut cmd = Command::new(cargo);
                cmd.env("RUSTC", rustc).env("RUSTC_BOOTSTRAP", "1");
                cmd
            }
            _ => {
                let mut cmd = Command::new(which("cargo").unwrap_or_else(|| "cargo".into()));
                cmd.env_remove("RUSTC");
                cmd
            }
        };
        // Outer cargo runs must not leak their rustc wrappers or flags into the thumb build.
        cmd.env_remove("RUSTC_WRAPPER")
            .env_remove("RUSTC_WORKSPACE_WRAPPER")
            .env_remove("CARGO_ENCODED_RUSTFLAGS")
            .env_remove("CARGO_BUILD_TARGET")
            .env("CARGO_TARGET_DIR", super::target_dir())
            .env(format!("CARGO_TARGET_{triple_env}_LINKER"), &self.linker);
        if !self.rustup_targets.contains(&target) {
            cmd.args([
                "-Zbuild-std=core",
                "-Zbuild-std-features=compiler-builtins-mem",
            ]);
        }
        cmd
    }
}

/// The C cross compiler of the C firmware example, and `size` for its code size.
#[derive(Debug, Clone)]
pub struct CCompiler {
    /// `arm-none-eabi-gcc`.
    pub gcc: PathBuf,
    /// `arm-none-eabi-size`.
    pub size: PathBuf,
}

impl CCompiler {
    /// Finds `arm-none-eabi-gcc` and `arm-none-eabi-size` on `PATH`.
    ///
    /// # Errors
    ///
    /// [`Missing`] names what is missing and the Debian packages that provide it.
    pub fn detect() -> Result<CCompiler, Missing> {
        let mut m = Missing {
            what: Vec::new(),
            apt_packages: Vec::new(),
            other: Vec::new(),
        };
        let gcc = which("arm-none-eabi-gcc");
        if gcc.is_none() {
            m.what
                .push("arm-none-eabi-gcc (the C example of the C API)".into());
            m.apt_packages.push(APT_GCC);
        }
        let size = which("arm-none-eabi-size");
        if size.is_none() {
            m.what.push("arm-none-eabi-size".into());
            m.apt_packages.push(APT_BINUTILS);
        }
        match (gcc, size) {
            (Some(gcc), Some(size)) => Ok(CCompiler { gcc, size }),
            _ => Err(m),
        }
    }
}
