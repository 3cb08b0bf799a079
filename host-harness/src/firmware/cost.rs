//! Cost per kernel call on target: instructions under `-icount`, code bytes, state bytes, and
//! the same figures for the straightforward f32/libm version.
//!
//! # Method
//!
//! The benchmark image (`benches/target/src/bin/cost.rs`) runs under
//! `qemu-system-arm -icount shift=4`: the emulator advances its virtual clock by exactly
//! 16 ns per executed instruction, and SysTick (processor clock) counts on that clock, so
//! SysTick ticks are a fixed multiple of executed instructions and every run gives the same
//! counts.
//!
//! - *Ticks per instruction*: an assembly loop of exactly two instructions per iteration
//!   (`subs`, `bne`) is timed for 10 000 and 30 000 iterations; the slope is
//!   `(t₂ − t₁) / 40 000`.
//! - *Instructions per call*: the kernel is called [`CALLS`](self) times through a function
//!   pointer over the bench inputs, and the identical loop is run with an empty function of
//!   the same signature; `(t_kernel − t_empty) / calls / slope`. This is everything the kernel
//!   function executes (prologue and return included) less the two instructions of the empty
//!   function; the loop, the input loads and the call itself cancel.
//! - *Code bytes*: the sum of the `nm -S` sizes of every function in the call graph of the
//!   kernel's symbol (`lenz_kernel_<name>` or `lenz_naive_<name>`; see [`super::disasm`]),
//!   library helpers such as `__aeabi_lmul` or `expf` included.
//! - *State bytes*: `size_of` the per-channel state type, printed by the image itself.
//!
//! The straightforward version computes in f32 with libm and recomputes what depends on a
//! measured value every call (the estimator: `expf(−T·R/L)` and a division by `R` each tick).
//! The ratio is straightforward ÷ integer kernel.

use serde::{Deserialize, Serialize};

use super::disasm::Disassembly;
use super::{Build, Target, Toolchain, build, field, field_u64, run};

/// `-icount shift` of the cost runs (16 ns per instruction).
pub const ICOUNT_SHIFT: u32 = 4;

/// Cost of one kernel on one target.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct KernelCost {
    /// Kernel name.
    pub kernel: String,
    /// Instructions per call of the integer kernel.
    pub instructions: f64,
    /// Code bytes of the integer kernel's call graph.
    pub code_bytes: u64,
    /// Per-channel state of the integer kernel, bytes.
    pub state_bytes: u64,
    /// Instructions per call of the straightforward f32/libm version.
    pub f32_instructions: f64,
    /// Code bytes of the straightforward version's call graph.
    pub f32_code_bytes: u64,
    /// Per-channel state of the straightforward version, bytes.
    pub f32_state_bytes: u64,
    /// `f32_instructions / instructions`.
    pub instructions_ratio: f64,
    /// `f32_code_bytes / code_bytes`.
    pub code_ratio: f64,
}

/// Costs of every kernel on one target.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TargetCost {
    /// Short name (`m0`, `m3`, `m4f`).
    pub target: String,
    /// Core.
    pub core: String,
    /// Rust target triple.
    pub triple: String,
    /// Emulated machine.
    pub machine: String,
    /// SysTick ticks per instruction from the calibration loop.
    pub ticks_per_instruction: f64,
    /// Calls per measurement.
    pub calls: u64,
    /// Per kernel.
    pub kernels: Vec<KernelCost>,
}

fn round1(x: f64) -> f64 {
    (x * 10.0).round() / 10.0
}

fn ratio(a: f64, b: f64) -> f64 {
    if b > 0.0 {
        (a / b * 100.0).round() / 100.0
    } else {
        f64::NAN
    }
}

/// Raw figures of one `cost kernel=…` line.
#[derive(Debug, Clone, PartialEq)]
struct RawCost {
    kernel: String,
    calls: u64,
    ticks: [u64; 4],
    state_bytes: u64,
    f32_state_bytes: u64,
}

/// Parses the benchmark image's report into the slope and the per-kernel ticks.
fn parse(console: &str) -> Result<(f64, Vec<RawCost>), String> {
    let lines: Vec<&str> = console.lines().collect();
    if let Some(fail) = lines.iter().find(|l| l.starts_with("FAIL")) {
        return Err(fail.to_string());
    }
    if !lines.iter().any(|l| l.trim() == "DONE") {
        return Err(format!("incomplete report:\n{console}"));
    }
    let calib = lines
        .iter()
        .find(|l| l.starts_with("calib "))
        .ok_or("no calibration line")?;
    let get = |k: &str| field_u64(calib, k).ok_or_else(|| format!("calibration: no {k}"));
    let (n1, t1, n2, t2) = (get("n1")?, get("t1")?, get("n2")?, get("t2")?);
    if n2 <= n1 || t2 <= t1 {
        return Err(format!(
            "calibration did not advance (t1={t1}, t2={t2}): is the timer clocked under -icount?"
        ));
    }
    let slope = (t2 - t1) as f64 / (2 * (n2 - n1)) as f64;
    let mut raw = Vec::new();
    for l in lines.iter().filter(|l| l.starts_with("cost ")) {
        let get = |k: &str| field_u64(l, k).ok_or_else(|| format!("`{l}`: no {k}"));
        // The first `kernel=` field is the name, the second the kernel's ticks.
        let mut kernel_fields = l
            .split_whitespace()
            .filter_map(|kv| kv.strip_prefix("kernel="));
        let name = kernel_fields.next().ok_or("cost line without a kernel")?;
        let ticks_kernel: u64 = kernel_fields
            .next()
            .and_then(|v| v.parse().ok())
            .ok_or_else(|| format!("`{l}`: no kernel ticks"))?;
        raw.push(RawCost {
            kernel: name.to_string(),
            calls: get("calls")?,
            ticks: [
                ticks_kernel,
                get("empty")?,
                get("naive")?,
                get("naive_empty")?,
            ],
            state_bytes: get("state_bytes")?,
            f32_state_bytes: get("naive_state_bytes")?,
        });
    }
    if raw.is_empty() {
        return Err("the benchmark image reported no kernel".to_string());
    }
    let _ = field;
    Ok((slope, raw))
}

/// Builds and runs the benchmark image for `target` and measures every kernel.
///
/// # Errors
///
/// A build, run or parse failure, or a kernel symbol missing from the image.
pub fn measure(tc: &Toolchain, target: Target) -> Result<TargetCost, String> {
    let image = build(tc, target, Build::Cost)?;
    let out = run(tc, target, &image, Some(ICOUNT_SHIFT))?;
    if !out.success {
        return Err(format!(
            "benchmark image on {} failed ({}):\n{}",
            target.machine(),
            out.status,
            out.console
        ));
    }
    let (slope, raw) = parse(&out.console).map_err(|e| format!("{}: {e}", target.triple()))?;
    let dis = Disassembly::of(tc, &image)?;
    let mut kernels = Vec::new();
    let mut calls = 0;
    for r in raw {
        calls = r.calls;
        let per_call = |t: u64, e: u64| round1((t as f64 - e as f64) / r.calls as f64 / slope);
        let instructions = per_call(r.ticks[0], r.ticks[1]);
        let f32_instructions = per_call(r.ticks[2], r.ticks[3]);
        let code_bytes = dis.graph(&format!("lenz_kernel_{}", r.kernel))?.code_bytes;
        let f32_code_bytes = dis.graph(&format!("lenz_naive_{}", r.kernel))?.code_bytes;
        kernels.push(KernelCost {
            kernel: r.kernel,
            instructions,
            code_bytes,
            state_bytes: r.state_bytes,
            f32_instructions,
            f32_code_bytes,
            f32_state_bytes: r.f32_state_bytes,
            instructions_ratio: ratio(f32_instructions, instructions),
            code_ratio: ratio(f32_code_bytes as f64, code_bytes as f64),
        });
    }
    Ok(TargetCost {
        target: target.key().to_string(),
        core: target.core().to_string(),
        triple: target.triple().to_string(),
        machine: target.machine().to_string(),
        ticks_per_instruction: slope,
        calls,
        kernels,
    })
}

/// The human table of `costs`.
#[must_use]
pub fn table(costs: &[TargetCost]) -> String {
    let mut t = crate::report::text::new_table(&[
        "Core",
        "Kernel",
        "Instr/call",
        "Code B",
        "State B",
        "f32+libm instr/call",
        "f32 code B",
        "f32 state B",
        "Ratio instr (f32/int)",
        "Ratio code (f32/int)",
    ]);
    for c in costs {
        for k in &c.kernels {
            t.add_row(vec![
                c.core.clone(),
                k.kernel.clone(),
                format!("{:.1}", k.instructions),
                k.code_bytes.to_string(),
                k.state_bytes.to_string(),
                format!("{:.1}", k.f32_instructions),
                k.f32_code_bytes.to_string(),
                k.f32_state_bytes.to_string(),
                format!("{:.2}", k.instructions_ratio),
                format!("{:.2}", k.code_ratio),
            ]);
        }
    }
    t.to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn report_parses_into_slope_and_ticks() {
        let console = "Timer with period zero, disabling\n\
            calib n1=10000 t1=5122 n2=30000 t2=15362\n\
            cost kernel=estimator calls=2048 kernel=79122 empty=11018 naive=1299144 naive_empty=11019 state_bytes=8 naive_state_bytes=4\n\
            DONE\n";
        let (slope, raw) = parse(console).unwrap();
        assert!((slope - 0.256).abs() < 1e-12);
        assert_eq!(raw[0].kernel, "estimator");
        assert_eq!(raw[0].ticks, [79122, 11018, 1299144, 11019]);
        // (79122 − 11018) / 2048 / 0.256 = 129.9 instructions per call.
        let per_call = round1((79122.0 - 11018.0) / 2048.0 / slope);
        assert!((per_call - 129.9).abs() < 1e-9);
        assert!(parse("calib n1=1 t1=5 n2=2 t2=5\nDONE\n").is_err());
        assert!(parse("FAIL estimator: the 24-bit timer wrapped\n").is_err());
        assert!(parse("calib n1=1 t1=5 n2=2 t2=9\n").is_err());
    }
}
