//! Vector generators, run by the build script on the host: one module per kernel and one line
//! in [`GENERATORS`]. Each writes `OUT_DIR/<name>.rs`, included by `src/kernels/<name>.rs`.
//!
//! Inputs are plan-derived configurations of the demo coils (invented values) plus raw edge
//! configurations, driven by a fixed-seed generator; the expected results are what the host
//! build of lenz computes for the same calls.

mod boost_driver;
mod bridge;
mod coil_driver;
mod duty;
mod estimator;
mod jam;
mod monitor;
mod movement;
mod offtimer;
mod speed;
mod trip;

use std::fmt::Write as _;
use std::path::Path;

/// Every kernel with vectors: name and generator (returns the Rust source to include).
const GENERATORS: &[(&str, fn() -> String)] = &[
    ("estimator", estimator::generate),
    ("duty", duty::generate),
    ("monitor", monitor::generate),
    ("offtimer", offtimer::generate),
    ("offtimer_planned", offtimer::generate_planned),
    ("trip", trip::generate),
    ("trip_block", trip::generate_block),
    ("movement", movement::generate),
    ("speed", speed::generate),
    ("jam", jam::generate),
    ("bridge", bridge::generate),
    ("coil_driver", coil_driver::generate),
    ("boost_driver", boost_driver::generate),
];

/// Writes every kernel's vectors and `generated.rs` (the list of names) into `out`.
pub fn write_all(out: &Path) {
    let mut names =
        String::from("/// Kernels with generated vectors.\npub const GENERATED: &[&str] = &[");
    for (name, generate) in GENERATORS {
        std::fs::write(out.join(format!("{name}.rs")), generate()).expect("write vectors");
        let _ = write!(names, "{name:?}, ");
    }
    names.push_str("];\n");
    std::fs::write(out.join("generated.rs"), names).expect("write generated.rs");
}

/// SplitMix64: a small fixed-seed generator, so the vectors are the same on every build.
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64) -> Self {
        Self(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Any `i32`, with the edges (0, ±1, MIN, MAX) drawn often.
    pub fn any_i32(&mut self) -> i32 {
        let r = self.next_u64();
        match r % 8 {
            0 => [
                0,
                1,
                -1,
                i32::MIN,
                i32::MAX,
                i32::MIN + 1,
                i32::MAX - 1,
                1 << 30,
            ][(r >> 8) as usize % 8],
            _ => (r >> 16) as i32,
        }
    }

    /// Uniform in `lo ..= hi`.
    pub fn range(&mut self, lo: i32, hi: i32) -> i32 {
        let span = (hi as i64 - lo as i64 + 1) as u64;
        (lo as i64 + (self.next_u64() % span) as i64) as i32
    }

    pub fn bool(&mut self) -> bool {
        self.next_u64() & 1 == 1
    }
}
