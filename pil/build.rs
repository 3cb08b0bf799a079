//! Build script of the runtime: on a Cortex-M target, the memory map of the emulated machine
//! and the linker script (the target images' own, `benches/target/memory/<machine>.x` and
//! `benches/target/link.x`: one map per machine in the repository) go to `OUT_DIR`, which is
//! put on the linker's search path of every image that depends on this crate. The image passes
//! `-Tlink.x` itself. On the host nothing is done.

use std::path::{Path, PathBuf};

fn main() {
    let target = std::env::var("TARGET").unwrap_or_default();
    println!("cargo::rustc-check-cfg=cfg(lenz_fpu)");
    let machine = match target.as_str() {
        "thumbv6m-none-eabi" => "microbit",
        "thumbv7m-none-eabi" => "lm3s6965evb",
        "thumbv7em-none-eabihf" | "thumbv7em-none-eabi" => "mps2-an386",
        _ => return,
    };
    if target.ends_with("eabihf") {
        println!("cargo::rustc-cfg=lenz_fpu");
    }
    let images = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("..")
        .join("benches")
        .join("target");
    let out = PathBuf::from(std::env::var("OUT_DIR").expect("cargo sets OUT_DIR"));
    let memory = images.join("memory").join(format!("{machine}.x"));
    let link = images.join("link.x");
    std::fs::copy(&memory, out.join("memory.x")).expect("copy the memory map");
    std::fs::copy(&link, out.join("link.x")).expect("copy link.x");
    println!("cargo::rustc-link-search={}", out.display());
    println!("cargo::rerun-if-changed={}", memory.display());
    println!("cargo::rerun-if-changed={}", link.display());
}
