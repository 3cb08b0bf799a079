//! `lenz emit FILE --lang rust|c [--out PATH]`: the firmware's kernel configurations of a
//! scenario file's system as source constants ([`crate::system::emit`]).
//!
//! Exit code 0 when written, 2 on bad input (flag, or file:line:col and key).

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use super::common::CliError;
use crate::outputs::Staged;
use crate::system::{System, emit};

/// The language of the emitted constants.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Lang {
    /// Rust `const` items built with the kernels' `const fn from_raw`.
    Rust,
    /// A C11 header of `static const` initialisers of the C API's raw structs.
    C,
}

/// Arguments of `lenz emit`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML); its `[system]` and `[controller]` are used.
    #[arg(value_name = "FILE")]
    file: PathBuf,
    /// Language of the constants.
    #[arg(long, value_enum)]
    lang: Lang,
    /// Write to this file instead of standard output (its folder is created if missing).
    #[arg(long, value_name = "PATH")]
    out: Option<PathBuf>,
}

/// Runs `lenz emit`.
///
/// # Errors
///
/// Bad input (exit 2).
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    // The output is checked before any work.
    let staged = match &a.out {
        Some(p) => {
            if p.is_dir() {
                return Err(CliError(format!(
                    "--out {}: is a folder, not a file",
                    p.display()
                )));
            }
            let name = p
                .file_name()
                .ok_or_else(|| CliError(format!("--out {}: names no file", p.display())))?;
            let dir = p.parent().filter(|d| !d.as_os_str().is_empty());
            let staged = Staged::prepare("--out", dir.unwrap_or_else(|| Path::new(".")))?;
            staged.check_name(Path::new(name))?;
            Some((staged, name.to_string_lossy().into_owned()))
        }
        None => None,
    };
    let name = a.file.display().to_string();
    let text = crate::scenario::read(&a.file).map_err(|e| CliError(e.to_string()))?;
    let text = String::from_utf8(text).map_err(|_| {
        CliError(
            crate::scenario::ScenarioError {
                file: name.clone(),
                line: 0,
                column: 0,
                key: String::new(),
                problem: "not UTF-8 text".into(),
            }
            .to_string(),
        )
    })?;
    let system = System::from_toml(&name, &text).map_err(|e| CliError(e.to_string()))?;
    let located = |e: crate::system::SetupError| {
        CliError(crate::scenario::locate_problem(&name, &e.0).to_string())
    };
    let e = emit::constants(&system, emit::says_invented(&text)).map_err(located)?;
    let out = match a.lang {
        Lang::Rust => emit::rust::render(&e),
        Lang::C => {
            emit::c::render(&e, &emit::c::include_guard(a.out.as_deref())).map_err(located)?
        }
    };
    match staged {
        Some((mut s, file)) => {
            s.write(&file, &out)?;
            s.commit()?;
        }
        None => outln!("{}", out.trim_end()),
    }
    Ok(ExitCode::SUCCESS)
}
