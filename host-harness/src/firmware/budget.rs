//! Cost budgets: `benches/target/budget.json`, checked by `cargo xtask test`.
//!
//! The file holds, per kernel and target, the measured instructions per call when the budget
//! was set and the allowed maximum, plus the allowed state bytes. Rules, each failing the check:
//! - every kernel the image reports has an entry for every target measured, and every entry
//!   names a kernel the image reports (nothing goes unchecked);
//! - a maximum is at most 20 % above the measured count it was set from ([`MAX_HEADROOM`]);
//! - the estimator update and the trip-detector sample stay within the hard caps
//!   ([`HARD_CAPS`]: 150 instructions on Cortex-M0, 50 on Cortex-M3/M4F);
//! - state is at most [`STATE_LIMIT_BYTES`] per channel per kernel, and at most
//!   [`DRIVER_STATE_LIMIT_BYTES`] for a driver's tick (`…_driver`: several kernels' states
//!   with the output and configuration handles, see [`state_limit`]);
//! - the current measurement is within the maximum.

use std::collections::BTreeMap;
use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use super::Target;
use super::cost::TargetCost;

/// Largest allowed headroom of a maximum over its measured count.
pub const MAX_HEADROOM: f64 = 0.20;
/// Headroom written by `lenz cost --write-budget`.
pub const WRITE_HEADROOM: f64 = 0.10;
/// State per channel per kernel, bytes.
pub const STATE_LIMIT_BYTES: u64 = 32;
/// State per channel of a driver (the kernels it wires together, its own fields, the output
/// and configuration handles), bytes.
pub const DRIVER_STATE_LIMIT_BYTES: u64 = 160;

/// The state limit of `kernel`: [`DRIVER_STATE_LIMIT_BYTES`] for a driver's tick (a name
/// ending in `_driver`), [`STATE_LIMIT_BYTES`] for a kernel.
#[must_use]
pub fn state_limit(kernel: &str) -> u64 {
    if kernel.ends_with("_driver") {
        DRIVER_STATE_LIMIT_BYTES
    } else {
        STATE_LIMIT_BYTES
    }
}
/// Hard caps on instructions per call: kernel name, Cortex-M0, Cortex-M3 and M4F.
pub const HARD_CAPS: &[(&str, u64, u64)] = &[("estimator", 150, 50), ("trip", 150, 50)];

/// One kernel on one target.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Entry {
    /// Instructions per call measured when the budget was set.
    pub measured_instructions: f64,
    /// Allowed instructions per call.
    pub max_instructions: u64,
    /// Allowed state per channel, bytes.
    pub max_state_bytes: u64,
}

/// The budget file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Budget {
    /// How the figures were obtained.
    pub note: String,
    /// Kernel name → target key (`m0`, `m3`, `m4f`) → entry.
    pub kernels: BTreeMap<String, BTreeMap<String, Entry>>,
}

/// The committed budget file.
#[must_use]
pub fn path() -> PathBuf {
    super::images_dir().join("budget.json")
}

/// Reads the committed budget.
///
/// # Errors
///
/// The file is missing or malformed.
pub fn load() -> Result<Budget, String> {
    let p = path();
    let text = std::fs::read_to_string(&p).map_err(|e| format!("{}: {e}", p.display()))?;
    serde_json::from_str(&text).map_err(|e| format!("{}: {e}", p.display()))
}

/// The hard cap for `kernel` on `target`, if there is one.
#[must_use]
pub fn hard_cap(kernel: &str, target: &str) -> Option<u64> {
    HARD_CAPS
        .iter()
        .find(|(k, _, _)| *k == kernel)
        .map(|&(_, m0, m3)| if target == Target::M0.key() { m0 } else { m3 })
}

/// Checks `costs` against `budget`; returns one line per violation (empty when within).
#[must_use]
pub fn check(budget: &Budget, costs: &[TargetCost]) -> Vec<String> {
    let mut v = Vec::new();
    for c in costs {
        for k in &c.kernels {
            let at = format!("{} on {}", k.kernel, c.core);
            if let Some(cap) = hard_cap(&k.kernel, &c.target)
                && k.instructions > cap as f64
            {
                v.push(format!(
                    "{at}: {:.1} instructions per call, above the hard cap of {cap}",
                    k.instructions
                ));
            }
            let limit = state_limit(&k.kernel);
            if k.state_bytes > limit {
                v.push(format!(
                    "{at}: state of {} bytes per channel, above {limit}",
                    k.state_bytes
                ));
            }
            let Some(e) = budget.kernels.get(&k.kernel).and_then(|t| t.get(&c.target)) else {
                v.push(format!(
                    "{at}: no budget in {} (kernels.{}.{})",
                    path().display(),
                    k.kernel,
                    c.target
                ));
                continue;
            };
            let allowed = (e.measured_instructions * (1.0 + MAX_HEADROOM)).ceil() as u64;
            if e.max_instructions > allowed {
                v.push(format!(
                    "{at}: budget of {} instructions is more than {:.0} % above its measured {:.1}",
                    e.max_instructions,
                    MAX_HEADROOM * 100.0,
                    e.measured_instructions
                ));
            }
            if let Some(cap) = hard_cap(&k.kernel, &c.target)
                && e.max_instructions > cap
            {
                v.push(format!(
                    "{at}: budget of {} instructions is above the hard cap of {cap}",
                    e.max_instructions
                ));
            }
            if k.instructions > e.max_instructions as f64 {
                v.push(format!(
                    "{at}: {:.1} instructions per call, above the budget of {}",
                    k.instructions, e.max_instructions
                ));
            }
            if e.max_state_bytes > limit || k.state_bytes > e.max_state_bytes {
                v.push(format!(
                    "{at}: state of {} bytes against a budget of {} (limit {limit})",
                    k.state_bytes, e.max_state_bytes
                ));
            }
        }
    }
    for (kernel, targets) in &budget.kernels {
        for c in costs {
            if targets.contains_key(&c.target) && !c.kernels.iter().any(|k| &k.kernel == kernel) {
                v.push(format!(
                    "budget lists {kernel} on {}, but the image does not report it",
                    c.core
                ));
            }
        }
    }
    v
}

/// A budget from `costs` with [`WRITE_HEADROOM`], never above a hard cap.
#[must_use]
pub fn from_costs(costs: &[TargetCost]) -> Budget {
    let mut kernels: BTreeMap<String, BTreeMap<String, Entry>> = BTreeMap::new();
    for c in costs {
        for k in &c.kernels {
            let mut max = (k.instructions * (1.0 + WRITE_HEADROOM)).ceil() as u64;
            if let Some(cap) = hard_cap(&k.kernel, &c.target) {
                max = max.min(cap);
            }
            kernels.entry(k.kernel.clone()).or_default().insert(
                c.target.clone(),
                Entry {
                    measured_instructions: k.instructions,
                    max_instructions: max,
                    max_state_bytes: k.state_bytes,
                },
            );
        }
    }
    Budget {
        note: format!(
            "Instructions per call under qemu-system-arm -icount (see `lenz cost`), written by \
             `lenz cost --write-budget` with {:.0} % headroom; maxima may be at most {:.0} % \
             above the measured counts.",
            WRITE_HEADROOM * 100.0,
            MAX_HEADROOM * 100.0
        ),
        kernels,
    }
}

#[cfg(test)]
mod tests {
    use super::super::cost::KernelCost;
    use super::*;

    fn cost(target: Target, kernel: &str, instructions: f64, state_bytes: u64) -> TargetCost {
        TargetCost {
            target: target.key().into(),
            core: target.core().into(),
            triple: target.triple().into(),
            machine: target.machine().into(),
            ticks_per_instruction: 0.256,
            calls: 2048,
            kernels: vec![KernelCost {
                kernel: kernel.into(),
                instructions,
                code_bytes: 200,
                state_bytes,
                f32_instructions: 1000.0,
                f32_code_bytes: 2000,
                f32_state_bytes: 4,
                instructions_ratio: 1000.0 / instructions,
                code_ratio: 10.0,
            }],
        }
    }

    #[test]
    fn written_budget_passes_and_violations_are_named() {
        let costs = [
            cost(Target::M0, "estimator", 119.3, 8),
            cost(Target::M3, "estimator", 46.0, 8),
        ];
        let b = from_costs(&costs);
        assert_eq!(b.kernels["estimator"]["m0"].max_instructions, 132);
        // 46 · 1.1 = 50.6, held at the hard cap of 50.
        assert_eq!(b.kernels["estimator"]["m3"].max_instructions, 50);
        assert!(check(&b, &costs).is_empty());
        // Slower than the budget.
        let slow = [cost(Target::M0, "estimator", 140.0, 8)];
        assert!(check(&b, &slow)[0].contains("above the budget of 132"));
        // Above the hard cap, whatever the file says.
        let capped = [cost(Target::M3, "estimator", 51.0, 8)];
        assert!(
            check(&b, &capped)
                .iter()
                .any(|l| l.contains("hard cap of 50"))
        );
        // Too much headroom in the file.
        let mut loose = b.clone();
        if let Some(e) = loose
            .kernels
            .get_mut("estimator")
            .and_then(|t| t.get_mut("m0"))
        {
            e.max_instructions = 145;
        }
        assert!(
            check(&loose, &costs)
                .iter()
                .any(|l| l.contains("more than 20 %"))
        );
        // State above 32 bytes, and a kernel without a budget.
        let fat = [cost(Target::M0, "monitor", 200.0, 40)];
        let v = check(&b, &fat);
        assert!(v.iter().any(|l| l.contains("above 32")), "{v:?}");
        assert!(v.iter().any(|l| l.contains("no budget")), "{v:?}");
        assert!(v.iter().any(|l| l.contains("does not report")), "{v:?}");
        // A driver's tick may hold more (several kernels and the handles), up to its limit.
        let driver = [cost(Target::M0, "coil_driver", 600.0, 136)];
        let b = from_costs(&driver);
        assert!(check(&b, &driver).is_empty());
        let fat_driver = [cost(Target::M0, "coil_driver", 600.0, 200)];
        let v = check(&b, &fat_driver);
        assert!(v.iter().any(|l| l.contains("above 160")), "{v:?}");
    }
}
