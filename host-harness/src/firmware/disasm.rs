//! Call graphs from the disassembly, the soft-float/division check and code sizes.
//!
//! `arm-none-eabi-objdump -d -C` lists every function (`<addr> <name>:`) and its instructions.
//! A direct branch (`bl`, `b`, `b<cond>`, `cbz`, …) whose target address lies in another
//! function is a call (or a tail call) of that function; the graph of a kernel is every
//! function reachable that way from its `lenz_kernel_<name>` symbol. An indirect branch
//! (`blx rN`, `bx rN` other than `bx lr`, a write to `pc`) cannot be followed and fails the check,
//! except a switch table: `mov pc, rN` or `add pc, rN` within four instructions after a
//! pc-relative address (`add rX, pc`, `adr`), the form Cortex-M0 code uses for a `match`. Such a
//! jump stays inside its function, whose direct branches are all followed anyway; where the
//! table holds addresses (`.word` entries right after `mov pc`), each must lie inside the
//! function, or the check fails.
//!
//! Forbidden in a kernel's graph: soft-float helpers (`__aeabi_f*`, `__aeabi_d*`, the
//! conversions `__aeabi_*2f`/`*2d`, libgcc-style `__addsf3`, `__fixdfsi`, …, anything from
//! `compiler_builtins::float` or `libm`), division helpers (`__…div…`/`__…mod…` names such as
//! `__aeabi_uidiv`, `__aeabi_ldivmod`, `__udivsi3`, and `…div_rem…`), and the instructions `sdiv`,
//! `udiv` and floating-point `v…` instructions.

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use std::process::Command;

use super::Toolchain;

/// One function of the disassembly.
#[derive(Debug, Clone, Default)]
pub struct Function {
    /// Demangled name.
    pub name: String,
    /// Start address.
    pub addr: u64,
    /// Direct branches: instruction address and target address.
    pub calls: Vec<(u64, u64)>,
    /// Indirect branches: instruction address and text.
    pub indirect: Vec<(u64, String)>,
    /// Switch tables: the jump's address and the table's addresses (thumb bit cleared; empty
    /// for a table of offsets).
    pub tables: Vec<(u64, Vec<u64>)>,
    /// Division or floating-point instructions: address and text.
    pub forbidden_insns: Vec<(u64, String)>,
}

/// The functions of an image, by start address.
#[derive(Debug, Clone, Default)]
pub struct Disassembly {
    /// Functions by start address.
    pub functions: BTreeMap<u64, Function>,
    /// Symbol sizes by address (from `nm -S`), bytes.
    pub sizes: BTreeMap<u64, u64>,
}

/// The reachable functions of one root symbol.
#[derive(Debug, Clone)]
pub struct CallGraph {
    /// The root symbol.
    pub root: String,
    /// Names of every function reached (the root first).
    pub functions: Vec<String>,
    /// Sum of their sizes, bytes.
    pub code_bytes: u64,
    /// Problems found (empty when clean).
    pub problems: Vec<String>,
}

const CONDITIONS: [&str; 15] = [
    "eq", "ne", "cs", "cc", "hs", "lo", "mi", "pl", "vs", "vc", "hi", "ls", "ge", "lt", "gt",
];

fn is_direct_branch(mnemonic: &str) -> bool {
    let m = mnemonic
        .strip_suffix(".n")
        .or_else(|| mnemonic.strip_suffix(".w"))
        .unwrap_or(mnemonic);
    matches!(m, "b" | "bl" | "blx" | "cbz" | "cbnz")
        || m.strip_prefix('b')
            .is_some_and(|c| CONDITIONS.contains(&c) || c == "le" || c == "al")
}

fn is_forbidden_insn(mnemonic: &str) -> bool {
    let m = mnemonic.split('.').next().unwrap_or(mnemonic);
    matches!(m, "sdiv" | "udiv") || (m.starts_with('v') && m.len() > 2)
}

/// Parses `objdump -d -C --no-show-raw-insn` output.
#[must_use]
pub fn parse_objdump(text: &str) -> BTreeMap<u64, Function> {
    let mut functions = BTreeMap::new();
    let mut current: Option<Function> = None;
    // The last instructions of the current function, and whether `.word` lines now belong to
    // the last switch table.
    let mut recent: Vec<(String, String)> = Vec::new();
    let mut in_table = false;
    for line in text.lines() {
        // Function header: `00000be4 <lenz_kernel_estimator>:`
        if let Some((addr, rest)) = line.split_once(" <")
            && let Some(name) = rest.strip_suffix(">:")
            && let Ok(addr) = u64::from_str_radix(addr.trim(), 16)
        {
            if let Some(f) = current.take() {
                functions.insert(f.addr, f);
            }
            current = Some(Function {
                name: name.to_string(),
                addr,
                ..Function::default()
            });
            recent.clear();
            in_table = false;
            continue;
        }
        let Some(f) = current.as_mut() else { continue };
        // Instruction: `     c1a:\tbl\t296a <__aeabi_lmul>`
        let mut parts = line.split('\t');
        let (Some(addr), Some(mnemonic)) = (parts.next(), parts.next()) else {
            continue;
        };
        let Some(Ok(at)) = addr
            .trim()
            .strip_suffix(':')
            .map(|a| u64::from_str_radix(a, 16))
        else {
            continue;
        };
        let mnemonic = mnemonic.trim();
        let operands = parts.next().unwrap_or("").trim();
        if mnemonic == ".word" {
            if in_table
                && let Some(v) = operands
                    .strip_prefix("0x")
                    .and_then(|h| u64::from_str_radix(h, 16).ok())
                && let Some((_, entries)) = f.tables.last_mut()
            {
                entries.push(v & !1);
            }
            continue;
        }
        in_table = false;
        let switch = matches!(mnemonic, "mov" | "add")
            && operands.starts_with("pc, r")
            && recent.iter().any(|(m, o)| {
                (m == "add" && (o.ends_with(", pc") || o.contains(", pc, #"))) || m == "adr"
            });
        recent.push((mnemonic.to_string(), operands.to_string()));
        if recent.len() > 4 {
            recent.remove(0);
        }
        if switch {
            f.tables.push((at, Vec::new()));
            in_table = mnemonic == "mov";
            continue;
        }
        if is_direct_branch(mnemonic) && operands.contains('<') {
            let target = operands
                .split(" <")
                .next()
                .and_then(|s| s.rsplit([' ', ',']).next())
                .and_then(|s| u64::from_str_radix(s.trim(), 16).ok());
            if let Some(t) = target {
                f.calls.push((at, t));
            }
        } else if matches!(mnemonic, "blx" | "bx")
            || (operands.starts_with("pc,") && !mnemonic.starts_with("cmp"))
        {
            if operands != "lr" {
                f.indirect.push((at, format!("{mnemonic} {operands}")));
            }
        } else if is_forbidden_insn(mnemonic) {
            f.forbidden_insns
                .push((at, format!("{mnemonic} {operands}")));
        }
    }
    if let Some(f) = current.take() {
        functions.insert(f.addr, f);
    }
    functions
}

/// Parses `nm -S` output into sizes by (even) address.
#[must_use]
pub fn parse_nm_sizes(text: &str) -> BTreeMap<u64, u64> {
    let mut sizes = BTreeMap::new();
    for line in text.lines() {
        let mut it = line.split_whitespace();
        let (Some(addr), Some(size), Some(kind)) = (it.next(), it.next(), it.next()) else {
            continue;
        };
        if !matches!(kind, "T" | "t" | "W" | "w") {
            continue;
        }
        if let (Ok(a), Ok(s)) = (u64::from_str_radix(addr, 16), u64::from_str_radix(size, 16)) {
            let e = sizes.entry(a & !1).or_insert(0);
            *e = (*e).max(s);
        }
    }
    sizes
}

/// Why a function name is forbidden in a kernel's graph, if it is.
#[must_use]
pub fn forbidden_helper(name: &str) -> Option<&'static str> {
    let last = name.rsplit("::").next().unwrap_or(name);
    let lower = name.to_ascii_lowercase();
    let aeabi = last.strip_prefix("__aeabi_");
    let helper = last.starts_with("__");
    if (helper && (last.contains("div") || last.contains("mod"))) || lower.contains("div_rem") {
        return Some("division helper");
    }
    if aeabi.is_some_and(|r| {
        r.starts_with('f') || r.starts_with('d') || r.ends_with("2f") || r.ends_with("2d")
    }) {
        return Some("soft-float helper");
    }
    if helper && (last.contains("sf") || last.contains("df") || last.contains("tf")) {
        return Some("soft-float helper");
    }
    if lower.split("::").any(|s| s == "libm" || s == "float") {
        return Some("floating-point library function");
    }
    None
}

impl Disassembly {
    /// Disassembles `image` with the toolchain's objdump and nm.
    ///
    /// # Errors
    ///
    /// objdump or nm failed.
    pub fn of(tc: &Toolchain, image: &Path) -> Result<Disassembly, String> {
        let run = |program: &Path, args: &[&str]| -> Result<String, String> {
            let out = Command::new(program)
                .args(args)
                .arg(image)
                .output()
                .map_err(|e| format!("could not start {}: {e}", program.display()))?;
            if !out.status.success() {
                return Err(format!(
                    "{} {} failed: {}",
                    program.display(),
                    image.display(),
                    String::from_utf8_lossy(&out.stderr).trim()
                ));
            }
            Ok(String::from_utf8_lossy(&out.stdout).into_owned())
        };
        let dump = run(&tc.objdump, &["-d", "-C", "--no-show-raw-insn"])?;
        let nm = run(&tc.nm, &["-S", "-C"])?;
        Ok(Disassembly {
            functions: parse_objdump(&dump),
            sizes: parse_nm_sizes(&nm),
        })
    }

    /// Whether an instruction address lies within `f`'s symbol size (objdump also decodes the
    /// alignment padding after a function as instructions; those are not part of it). Without
    /// a size, everything up to the next function counts.
    fn inside(&self, f: &Function) -> impl Fn(u64) -> bool + use<> {
        let end = self.sizes.get(&f.addr).map_or(u64::MAX, |s| f.addr + s);
        move |at| at < end
    }

    /// The function containing `addr`.
    fn function_at(&self, addr: u64) -> Option<&Function> {
        self.functions.range(..=addr).next_back().map(|(_, f)| f)
    }

    /// The call graph of the function named `root`.
    ///
    /// # Errors
    ///
    /// No function has that name.
    pub fn graph(&self, root: &str) -> Result<CallGraph, String> {
        let start = self
            .functions
            .values()
            .find(|f| f.name == root)
            .ok_or_else(|| format!("symbol `{root}` not found in the image"))?;
        let mut seen = BTreeSet::from([start.addr]);
        let mut order = vec![start.addr];
        let mut k = 0;
        while let Some(&addr) = order.get(k) {
            k += 1;
            let Some(f) = self.functions.get(&addr) else {
                continue;
            };
            let inside = self.inside(f);
            for &(_, t) in f.calls.iter().filter(|(at, _)| inside(*at)) {
                if let Some(callee) = self.function_at(t)
                    && callee.addr != f.addr
                    && seen.insert(callee.addr)
                {
                    order.push(callee.addr);
                }
            }
        }
        let mut problems = Vec::new();
        let mut names = Vec::new();
        let mut code_bytes = 0;
        for addr in &order {
            let Some(f) = self.functions.get(addr) else {
                continue;
            };
            names.push(f.name.clone());
            code_bytes += self.sizes.get(addr).copied().unwrap_or(0);
            if let Some(why) = forbidden_helper(&f.name) {
                problems.push(format!("calls {} `{}`", why, f.name));
            }
            let inside = self.inside(f);
            for (_, i) in f.indirect.iter().filter(|(at, _)| inside(*at)) {
                problems.push(format!(
                    "indirect branch `{i}` in `{}` (cannot be followed)",
                    f.name
                ));
            }
            for (at, entries) in f.tables.iter().filter(|(at, _)| inside(*at)) {
                for e in entries {
                    if *e < f.addr || !inside(*e) {
                        problems.push(format!(
                            "switch table at {at:#x} in `{}` jumps to {e:#x}, outside the function",
                            f.name
                        ));
                    }
                }
            }
            for (_, i) in f.forbidden_insns.iter().filter(|(at, _)| inside(*at)) {
                problems.push(format!(
                    "division or floating-point instruction `{i}` in `{}`",
                    f.name
                ));
            }
        }
        Ok(CallGraph {
            root: root.to_string(),
            functions: names,
            code_bytes,
            problems,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const DUMP: &str = "\
00000100 <lenz_kernel_a>:
     100:\tpush\t{r4, lr}
     102:\tcbz\tr2, 10a <lenz_kernel_a+0xa>
     104:\tbl\t200 <__aeabi_lmul>
     108:\tb.n\t10a <lenz_kernel_a+0xa>
     10a:\tpop\t{r4, pc}

00000110 <lenz_kernel_b>:
     110:\tbl\t300 <__aeabi_uidiv>
     114:\tb.w\t400 <libm::math::expf::expf>
     118:\tblx\tr3

00000200 <__aeabi_lmul>:
     200:\tmuls\tr0, r2
     202:\tbx\tlr
     204:\tbmi.n\t300 <__aeabi_uidiv>

00000300 <__aeabi_uidiv>:
     300:\tudiv\tr0, r0, r1
     304:\tbx\tlr

00000400 <libm::math::expf::expf>:
     400:\tvmul.f32\ts0, s0, s1
     404:\tbx\tlr

00000500 <lenz_kernel_switch>:
     500:\tlsls\tr0, r3, #2
     502:\tadd\tr2, pc, #4\t@ (adr r2, 508 <lenz_kernel_switch+0x8>)
     504:\tldr\tr0, [r2, r0]
     506:\tmov\tpc, r0
     508:\t.word\t0x00000511
     50c:\t.word\t0x00000513
     510:\tbx\tlr
     512:\tbx\tlr

00000600 <lenz_kernel_escape>:
     600:\tlsls\tr0, r3, #2
     602:\tadd\tr2, pc, #4\t@ (adr r2, 608 <lenz_kernel_escape+0x8>)
     604:\tldr\tr0, [r2, r0]
     606:\tmov\tpc, r0
     608:\t.word\t0x00000401
     60c:\tbx\tlr
";

    #[test]
    fn graph_follows_calls_and_flags_helpers() {
        let d = Disassembly {
            functions: parse_objdump(DUMP),
            sizes: parse_nm_sizes(
                "00000100 0000000c T lenz_kernel_a\n00000201 00000004 t __aeabi_lmul\n",
            ),
        };
        let a = d.graph("lenz_kernel_a").unwrap();
        // The branch at 0x204 is padding beyond the 4-byte symbol: not a call.
        assert_eq!(a.functions, ["lenz_kernel_a", "__aeabi_lmul"]);
        assert_eq!(a.code_bytes, 16);
        assert!(a.problems.is_empty(), "{:?}", a.problems);
        let b = d.graph("lenz_kernel_b").unwrap();
        let text = b.problems.join("\n");
        assert!(text.contains("division helper `__aeabi_uidiv`"), "{text}");
        assert!(text.contains("floating-point library function"), "{text}");
        assert!(text.contains("indirect branch `blx r3`"), "{text}");
        assert!(text.contains("`udiv r0, r0, r1`"), "{text}");
        assert!(text.contains("`vmul.f32 s0, s0, s1`"), "{text}");
        assert!(d.graph("lenz_kernel_c").is_err());
    }

    #[test]
    fn switch_tables_inside_the_function_pass() {
        let d = Disassembly {
            functions: parse_objdump(DUMP),
            sizes: parse_nm_sizes(
                "00000500 00000014 T lenz_kernel_switch\n00000600 0000000e T lenz_kernel_escape\n",
            ),
        };
        let ok = d.graph("lenz_kernel_switch").unwrap();
        assert!(ok.problems.is_empty(), "{:?}", ok.problems);
        let bad = d.graph("lenz_kernel_escape").unwrap().problems.join("\n");
        assert!(
            bad.contains("jumps to 0x400, outside the function"),
            "{bad}"
        );
    }

    #[test]
    fn helper_names() {
        for name in [
            "__aeabi_fadd",
            "__aeabi_dmul",
            "__aeabi_i2f",
            "__aeabi_ul2d",
            "__addsf3",
            "__fixdfsi",
            "__aeabi_idivmod",
            "__udivsi3",
            "__umoddi3",
            "compiler_builtins::float::mul::__mulsf3",
            "libm::math::expf::expf",
            "compiler_builtins::int::specialized_div_rem::u32_div_rem",
        ] {
            assert!(forbidden_helper(name).is_some(), "{name}");
        }
        for name in [
            "__aeabi_lmul",
            "__aeabi_memcpy",
            "lenz_kernel_estimator",
            "__muldi3",
            "lenz::kernel::model::update",
        ] {
            assert!(forbidden_helper(name).is_none(), "{name}");
        }
    }
}
