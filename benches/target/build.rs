//! Build script of the target images (runs on the host):
//! - picks the memory map of the emulated machine for the target and passes `link.x`;
//! - generates the test vectors and the expected results with the host build of lenz
//!   (`gen/`), into `OUT_DIR/<kernel>.rs`, and the list of generated kernels.

#[path = "gen/mod.rs"]
mod generate;

use std::path::PathBuf;

fn main() {
    let target = std::env::var("TARGET").unwrap_or_default();
    let out = PathBuf::from(std::env::var("OUT_DIR").expect("cargo sets OUT_DIR"));
    let machine = match target.as_str() {
        "thumbv6m-none-eabi" => "microbit",
        "thumbv7m-none-eabi" => "lm3s6965evb",
        "thumbv7em-none-eabihf" => "mps2-an386",
        other => panic!(
            "lenz-target builds only for thumbv6m-none-eabi, thumbv7m-none-eabi and \
             thumbv7em-none-eabihf, not `{other}`"
        ),
    };
    let memory = std::fs::read_to_string(format!("memory/{machine}.x")).expect("memory map");
    std::fs::write(out.join("memory.x"), memory).expect("write memory.x");
    println!("cargo::rustc-link-search={}", out.display());
    println!("cargo::rustc-link-arg-bins=-Tlink.x");
    println!("cargo::rerun-if-changed=memory/{machine}.x");
    println!("cargo::rerun-if-changed=link.x");
    println!("cargo::rerun-if-changed=gen");
    println!("cargo::rustc-check-cfg=cfg(lenz_fpu)");
    if target.ends_with("eabihf") {
        println!("cargo::rustc-cfg=lenz_fpu");
    }
    generate::write_all(&out);
}
