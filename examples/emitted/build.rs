//! Runs the emitter library on the shipped scenario files: `OUT_DIR/<name>.rs`, included by
//! `src/lib.rs`.

use std::path::{Path, PathBuf};

use lenz_harness::system::{System, emit};

/// The shipped scenario files (invented demo data), by module name.
const FILES: [(&str, &str); 3] = [
    ("valve", "valve.toml"),
    ("relay", "relay.toml"),
    ("boost", "boost.toml"),
];

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let scenarios = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../host-harness/scenarios");
    let out = PathBuf::from(std::env::var("OUT_DIR")?);
    for (module, file) in FILES {
        let path = scenarios.join(file);
        println!("cargo::rerun-if-changed={}", path.display());
        let text = std::fs::read_to_string(&path)?;
        let system = System::from_toml(file, &text)?;
        let e = emit::constants(&system, emit::says_invented(&text))?;
        std::fs::write(out.join(format!("{module}.rs")), emit::rust::render(&e))?;
    }
    Ok(())
}
