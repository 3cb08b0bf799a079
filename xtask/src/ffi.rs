//! The C API's checks of `cargo xtask test`, after the Rust target checks:
//!
//! 1. the C cross compiler (`arm-none-eabi-gcc`, Debian's `gcc-arm-none-eabi`), installed
//!    with apt-get when missing and running as root on Debian, otherwise a stop naming the
//!    package (never skipped);
//! 2. `liblenz_ffi.a` built for thumbv6m-none-eabi, thumbv7m-none-eabi and
//!    thumbv7em-none-eabihf;
//! 3. the C firmware example `ffi/examples/c-vectors` with the on-target vectors as C
//!    tables (`lenz_harness::firmware::c_vectors`), compiled with `-std=c99 -Wall -Wextra
//!    -Werror -ffreestanding -nostdlib`, linked with the library (`--gc-sections`) and run on
//!    each emulated core: every kernel through the C API, bit for bit with the Rust kernels on
//!    the host;
//! 4. the link-time proof that no panic can cross the boundary: every function of
//!    `ffi/include/lenz.h` is in the image, and no panic path, soft-float helper, division
//!    helper or instruction, or indirect branch is reachable from any of them (call graphs
//!    from the disassembly; division allowed in the start-up functions of `INIT_TIME`); no
//!    panic machinery is linked at all;
//! 5. the code sizes (`arm-none-eabi-size`): the example's own code, the library's code it
//!    links, and the vectors.

use std::collections::BTreeSet;
use std::ffi::{OsStr, OsString};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use lenz_harness::firmware::disasm::Disassembly;
use lenz_harness::firmware::{
    Build, CCompiler, TARGETS, Target, Toolchain, build, c_vectors, parse_check, run, target_dir,
    workspace_root,
};

fn timed<T>(name: &str, f: impl FnOnce() -> Result<T, String>) -> Result<T, String> {
    let t = Instant::now();
    let r = f().map_err(|e| format!("{name}: {e}"))?;
    println!("xtask: {name}: ok ({:.1} s)", t.elapsed().as_secs_f64());
    Ok(r)
}

/// The C cross compiler, installed first when missing and allowed.
fn c_compiler() -> Result<CCompiler, String> {
    let missing = match CCompiler::detect() {
        Ok(cc) => return Ok(cc),
        Err(m) => m,
    };
    let debian = Path::new("/etc/debian_version").is_file();
    if !(super::target::is_root() && debian) || missing.apt_packages.is_empty() {
        return Err(missing.to_string());
    }
    super::target::apt_get(&["update"])?;
    let mut args = vec!["install", "-y", "--no-install-recommends"];
    args.extend(missing.apt_packages.iter().copied());
    super::target::apt_get(&args)?;
    CCompiler::detect().map_err(|m| m.to_string())
}

fn example_dir() -> PathBuf {
    workspace_root()
        .join("ffi")
        .join("examples")
        .join("c-vectors")
}

fn include_dir() -> PathBuf {
    workspace_root().join("ffi").join("include")
}

/// The functions `lenz.h` declares (`LenzStatus lenz_…(`).
fn api_functions() -> Result<Vec<String>, String> {
    let header = std::fs::read_to_string(include_dir().join("lenz.h"))
        .map_err(|e| format!("reading ffi/include/lenz.h: {e}"))?;
    let names: Vec<String> = header
        .lines()
        .filter_map(|l| l.strip_prefix("LenzStatus "))
        .filter_map(|l| l.split('(').next())
        .filter(|n| n.starts_with("lenz_"))
        .map(str::to_string)
        .collect();
    if names.len() < 30 {
        return Err(format!("only {} functions found in lenz.h", names.len()));
    }
    Ok(names)
}

/// `arm-none-eabi-gcc` flags of a core.
pub(crate) fn cpu_flags(t: Target) -> &'static [&'static str] {
    match t {
        Target::M0 => &["-mcpu=cortex-m0", "-mthumb", "-mfloat-abi=soft"],
        Target::M3 => &["-mcpu=cortex-m3", "-mthumb", "-mfloat-abi=soft"],
        Target::M4f => &[
            "-mcpu=cortex-m4",
            "-mthumb",
            "-mfloat-abi=hard",
            "-mfpu=fpv4-sp-d16",
        ],
    }
}

pub(crate) fn command(program: &Path, args: &[OsString]) -> Result<String, String> {
    let out = Command::new(program)
        .args(args)
        .output()
        .map_err(|e| format!("could not start {}: {e}", program.display()))?;
    if out.status.success() {
        Ok(String::from_utf8_lossy(&out.stdout).into_owned())
    } else {
        Err(format!(
            "{} failed:\n{}{}",
            program.display(),
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        ))
    }
}

/// Arguments as `OsString`s.
pub(crate) fn args<const N: usize>(a: [&dyn AsRef<OsStr>; N]) -> Vec<OsString> {
    a.iter().map(|x| x.as_ref().to_os_string()).collect()
}

const SOURCES: [&str; 3] = ["main.c", "startup.c", "semihosting.c"];

pub(crate) const C_FLAGS: [&str; 8] = [
    "-std=c99",
    "-Wall",
    "-Wextra",
    "-Werror",
    "-Os",
    "-ffreestanding",
    "-ffunction-sections",
    "-fdata-sections",
];

/// Compiles the example for `t` in `dir` (with `vectors.c` there) and links it with `lib`.
fn compile(cc: &CCompiler, t: Target, lib: &Path, dir: &Path) -> Result<PathBuf, String> {
    let memory = lenz_harness::firmware::images_dir()
        .join("memory")
        .join(format!("{}.x", t.machine()));
    std::fs::copy(&memory, dir.join("memory.x"))
        .map_err(|e| format!("copying {}: {e}", memory.display()))?;
    let cpu: Vec<OsString> = cpu_flags(t).iter().map(OsString::from).collect();
    let (inc, ex) = (include_dir(), example_dir());
    let mut objects = Vec::new();
    for src in SOURCES
        .iter()
        .map(|s| ex.join(s))
        .chain([dir.join("vectors.c")])
    {
        let name = src.file_name().ok_or("source without a name")?;
        let obj = dir.join(Path::new(name).with_extension("o"));
        let mut a: Vec<OsString> = C_FLAGS.iter().map(OsString::from).collect();
        a.extend(cpu.iter().cloned());
        a.extend(args([&"-I", &inc, &"-I", &ex, &"-c", &src, &"-o", &obj]));
        command(&cc.gcc, &a)?;
        objects.push(obj);
    }
    let image = dir.join("c-vectors.elf");
    let mut a = cpu;
    a.extend(args([
        &"-nostdlib",
        &"-Wl,--gc-sections",
        &"-T",
        &ex.join("link.ld"),
        &"-L",
        &dir,
    ]));
    a.extend(objects.into_iter().map(PathBuf::into_os_string));
    a.extend(args([&lib, &"-lgcc", &"-o", &image]));
    command(&cc.gcc, &a)?;
    Ok(image)
}

/// `(text, data, bss)` of a file from `size` (Berkeley format).
fn sizes(cc: &CCompiler, file: &Path) -> Result<(u64, u64, u64), String> {
    let out = command(&cc.size, &args([&file]))?;
    let line = out.lines().nth(1).ok_or("no size line")?;
    let v: Vec<u64> = line
        .split_whitespace()
        .take(3)
        .filter_map(|x| x.parse().ok())
        .collect();
    match v[..] {
        [t, d, b] => Ok((t, d, b)),
        _ => Err(format!("cannot read `{line}`")),
    }
}

/// A symbol of the panic machinery.
fn is_panic(name: &str) -> bool {
    let n = name.to_ascii_lowercase();
    [
        "panic",
        "rust_begin_unwind",
        "unwrap_failed",
        "expect_failed",
        "slice_index",
        "slice_end_index",
        "slice_start_index",
        "len_mismatch",
        "overflow",
    ]
    .iter()
    .any(|p| n.contains(p))
}

/// Functions run once at start-up, which may divide (never panic): the coil driver sizes its
/// PWM scale with a division when it starts.
const INIT_TIME: [&str; 1] = ["lenz_coil_driver_start"];

/// A problem of the call graph that is a division (helper or instruction).
fn is_division(problem: &str) -> bool {
    problem.contains("division helper")
        || problem.contains("instruction `udiv")
        || problem.contains("instruction `sdiv")
}

/// The link-time proof (item 4 above); returns the bytes of library code reachable from the
/// API.
fn no_panic(tc: &Toolchain, image: &Path, api: &[String]) -> Result<u64, String> {
    let dis = Disassembly::of(tc, image)?;
    // Identical functions are merged into one body with several symbols, of which the
    // disassembly names one: find each API function by its symbol's address.
    let nm = command(&tc.nm, &args([&image]))?;
    let address = |name: &str| {
        nm.lines().find_map(|l| {
            let mut it = l.split_whitespace();
            let (addr, kind, sym) = (it.next()?, it.next()?, it.next()?);
            (sym == name && kind == "T")
                .then(|| u64::from_str_radix(addr, 16).ok())
                .flatten()
        })
    };
    let mut problems = Vec::new();
    let mut reached = BTreeSet::new();
    for f in api {
        let body = address(f)
            .and_then(|a| dis.functions.get(&(a & !1)))
            .ok_or_else(|| {
                format!(
                    "`{f}` is not in the image: the C example must call every function of lenz.h"
                )
            })?;
        let g = dis.graph(&body.name)?;
        problems.extend(
            g.problems
                .iter()
                .filter(|p| !(INIT_TIME.contains(&f.as_str()) && is_division(p)))
                .map(|p| format!("{f}: {p}")),
        );
        for name in &g.functions {
            if is_panic(name) {
                problems.push(format!("{f}: reaches the panic path `{name}`"));
            }
            reached.insert(name.clone());
        }
    }
    for f in dis.functions.values() {
        if is_panic(&f.name) {
            problems.push(format!("the image links the panic machinery: `{}`", f.name));
        }
    }
    if !problems.is_empty() {
        return Err(problems.join("\n  "));
    }
    Ok(dis
        .functions
        .values()
        .filter(|f| reached.contains(&f.name))
        .map(|f| dis.sizes.get(&f.addr).copied().unwrap_or(0))
        .sum())
}

/// Runs every check of the C API on the Cortex-M targets; `Err` names what failed.
pub fn checks() -> Result<(), String> {
    let tc = Toolchain::detect(&TARGETS).map_err(|m| m.to_string())?;
    let cc = timed("C cross compiler", c_compiler)?;
    let api = api_functions()?;
    let root = target_dir().join("c-vectors");
    let counts = timed("C vectors", || {
        let (src, counts) = c_vectors::source()?;
        std::fs::create_dir_all(&root).map_err(|e| e.to_string())?;
        std::fs::write(root.join("vectors.c"), src).map_err(|e| e.to_string())?;
        Ok(counts)
    })?;
    println!(
        "xtask:   {} cases, {} steps from benches/target/gen",
        counts.cases, counts.steps
    );
    for t in TARGETS {
        let dir = root.join(t.triple());
        std::fs::create_dir_all(&dir).map_err(|e| e.to_string())?;
        std::fs::copy(root.join("vectors.c"), dir.join("vectors.c")).map_err(|e| e.to_string())?;
        let lib = timed(&format!("build lenz-ffi for {}", t.triple()), || {
            build(&tc, t, Build::Ffi)
        })?;
        let image = timed(&format!("compile the C example for {}", t.core()), || {
            compile(&cc, t, &lib, &dir)
        })?;
        let name = format!("C example on {} ({})", t.core(), t.machine());
        let checked = timed(&name, || {
            let out = run(&tc, t, &image, None)?;
            parse_check(t, &out)
        })?;
        for k in &checked {
            println!(
                "xtask:   {}: {} vectors through the C API bit-identical to the host",
                k.name, k.vectors
            );
        }
        let lib_code = timed(
            &format!("no panic path from the C API on {}", t.triple()),
            || no_panic(&tc, &image, &api),
        )?;
        let (text, data, bss) = sizes(&cc, &image)?;
        let mut own = 0;
        for s in SOURCES {
            own += sizes(&cc, &dir.join(Path::new(s).with_extension("o")))?.0;
        }
        let (vt, vd, _) = sizes(&cc, &dir.join("vectors.o"))?;
        println!(
            "xtask:   size on {}: image text {text} B, data {data} B, bss {bss} B; example code {own} B, \
             lenz code reached from the API {lib_code} B, vectors {} B",
            t.core(),
            vt + vd
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::is_panic;

    #[test]
    fn panic_machinery_is_recognised() {
        for name in [
            "core::panicking::panic_bounds_check",
            "rust_begin_unwind",
            "core::slice::index::slice_end_index_len_fail",
            "core::result::unwrap_failed",
            "core::panicking::panic_const::panic_const_add_overflow",
        ] {
            assert!(is_panic(name), "{name}");
        }
        for name in ["lenz_trip_update", "__aeabi_lmul", "memcpy"] {
            assert!(!is_panic(name), "{name}");
        }
    }
}
