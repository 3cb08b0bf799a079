//! The target checks of `cargo xtask test`, after the host tests:
//!
//! 1. the format of the target-only crate, and the prerequisites: the firmware toolchain, installed with apt-get when missing and running
//!    as root on Debian, otherwise a stop with the exact packages to install (never skipped);
//! 2. `lenz` built for thumbv6m-none-eabi, thumbv7m-none-eabi and thumbv7em-none-eabihf,
//!    with no features and with `defmt` (the `drive` module has no feature gate: it is in both
//!    builds, and its drivers are instantiated on a PWM in the images);
//! 3. the on-target test images (`check`, `check2`) on each emulated core: every kernel and
//!    driver tick on the host's vectors, bit for bit (a difference fails naming the kernel and
//!    the vector);
//! 4. the disassembly check: no soft-float and no division in any kernel's or driver tick's
//!    call graph (required on thumbv6m, where both would be library calls; run on all three);
//! 5. `lenz cost` on each core and the committed budget (`benches/target/budget.json`).
//!
//! `cargo xtask target` runs these steps alone.

use std::path::Path;
use std::process::Command;
use std::time::Instant;

use lenz_harness::firmware::disasm::Disassembly;
use lenz_harness::firmware::{
    Build, TARGETS, Toolchain, budget, build, check_images_on_target, cost,
};

fn timed<T>(name: &str, f: impl FnOnce() -> Result<T, String>) -> Result<T, String> {
    let t = Instant::now();
    let r = f().map_err(|e| format!("{name}: {e}"))?;
    println!("xtask: {name}: ok ({:.1} s)", t.elapsed().as_secs_f64());
    Ok(r)
}

pub(crate) fn is_root() -> bool {
    Command::new("id")
        .arg("-u")
        .output()
        .is_ok_and(|o| String::from_utf8_lossy(&o.stdout).trim() == "0")
}

pub(crate) fn apt_get(args: &[&str]) -> Result<(), String> {
    println!("xtask: apt-get {}", args.join(" "));
    let status = Command::new("apt-get")
        .args(args)
        .env("DEBIAN_FRONTEND", "noninteractive")
        .status()
        .map_err(|e| format!("could not start apt-get: {e}"))?;
    if status.success() {
        Ok(())
    } else {
        Err(format!("apt-get {} failed ({status})", args.join(" ")))
    }
}

/// The toolchain, installing Debian packages first when they are missing and allowed.
fn prerequisites() -> Result<Toolchain, String> {
    let missing = match Toolchain::detect(&TARGETS) {
        Ok(tc) => return Ok(tc),
        Err(m) => m,
    };
    let debian = Path::new("/etc/debian_version").is_file();
    if !(is_root() && debian) || missing.apt_packages.is_empty() {
        return Err(format!(
            "{}(cargo test --workspace runs the host tests alone)",
            missing
        ));
    }
    println!(
        "xtask: installing the firmware tools: {}",
        missing.apt_packages.join(" ")
    );
    apt_get(&["update"])?;
    let mut args = vec!["install", "-y", "--no-install-recommends"];
    args.extend(missing.apt_packages.iter().copied());
    apt_get(&args)?;
    Toolchain::detect(&TARGETS).map_err(|m| m.to_string())
}

/// `cargo fmt --check` of the target-only crate (outside the workspace, so `cargo fmt --all`
/// does not see it).
fn format_images() -> Result<(), String> {
    let manifest = lenz_harness::firmware::images_dir().join("Cargo.toml");
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".to_string());
    let status = Command::new(cargo)
        .args(["fmt", "--check", "--manifest-path"])
        .arg(manifest)
        .status()
        .map_err(|e| format!("could not start cargo fmt: {e}"))?;
    if status.success() {
        Ok(())
    } else {
        Err(format!(
            "not formatted ({status}); run cargo fmt in benches/target"
        ))
    }
}

/// Runs every target check; `Err` names what failed.
pub fn checks() -> Result<(), String> {
    timed("format of benches/target", format_images)?;
    let tc = timed("firmware tools", prerequisites)?;
    for t in TARGETS {
        println!("xtask: {}", tc.describe(t));
    }
    for t in TARGETS {
        for defmt in [false, true] {
            let name = format!(
                "build lenz for {}{}",
                t.triple(),
                if defmt { " with defmt" } else { "" }
            );
            timed(&name, || build(&tc, t, Build::Lenz { defmt }))?;
        }
    }
    let mut images = std::collections::BTreeMap::new();
    for t in TARGETS {
        let name = format!("on-target test on {} ({})", t.core(), t.machine());
        let checked = timed(&name, || check_images_on_target(&tc, t))?;
        for i in &checked {
            for k in &i.kernels {
                println!(
                    "xtask:   {}: {} vectors bit-identical to the host, state {} bytes",
                    k.name, k.vectors, k.state_bytes
                );
            }
        }
        images.insert(t, checked);
    }
    for t in TARGETS {
        let name = format!("disassembly check on {}", t.triple());
        timed(&name, || {
            let mut problems = Vec::new();
            for i in images.get(&t).into_iter().flatten() {
                let dis = Disassembly::of(&tc, &i.image)?;
                problems.extend(graphs(&dis, &i.kernels)?);
            }
            if problems.is_empty() {
                Ok(())
            } else {
                Err(problems.join("\n  "))
            }
        })?;
    }
    let costs = timed("cost on every core", || {
        TARGETS
            .iter()
            .map(|&t| cost::measure(&tc, t))
            .collect::<Result<Vec<_>, _>>()
    })?;
    println!("{}", cost::table(&costs));
    timed("cost budget", || {
        let b = budget::load()?;
        let v = budget::check(&b, &costs);
        if v.is_empty() {
            Ok(())
        } else {
            Err(format!("exceeded:\n  {}", v.join("\n  ")))
        }
    })
}

/// The call graph of each kernel's symbol in an image, printed; the problems found (soft-float
/// or division helpers).
fn graphs(
    dis: &Disassembly,
    kernels: &[lenz_harness::firmware::KernelCheck],
) -> Result<Vec<String>, String> {
    let mut problems = Vec::new();
    for k in kernels.iter().map(|k| &k.name) {
        let g = dis.graph(&format!("lenz_kernel_{k}"))?;
        println!(
            "xtask:   {}: calls {} ({} code bytes)",
            g.root,
            if g.functions.len() > 1 {
                g.functions[1..].join(", ")
            } else {
                "nothing".to_string()
            },
            g.code_bytes
        );
        problems.extend(g.problems.iter().map(|p| format!("{}: {p}", g.root)));
    }
    Ok(problems)
}
