//! Reports of closed-loop runs: CSV waveforms, SVG plots, JUnit XML, and histograms of sweep
//! results.
//!
//! - [`csv`]: one file per scenario, one row per recorded tick.
//! - [`svg`]: coil (inductor) current with the firmware's estimate, switch voltage and output
//!   voltage in three panels, with demand changes, faults and trips marked; histograms. Drawn
//!   with `plotters`' SVG backend and its built-in text metrics, so no system font library is
//!   needed: text is written as SVG `<text>` and rendered by the viewer.
//! - [`junit`]: one `<testcase>` per scenario and property, for CI systems.
//! - [`html`]: the index page of a report folder.
//! - [`text`]: numbers in engineering notation and tables for people.

pub mod csv;
pub mod html;
pub mod junit;
pub mod svg;
pub mod text;

use crate::closed_loop::RunResult;

/// One scenario's run, with where it came from.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// The scenario file, as given.
    pub file: String,
    /// The system's name.
    pub system: String,
    /// The scenario's name.
    pub scenario: String,
    /// The run.
    pub result: RunResult,
}

/// A file-name-safe form of `name`: lowercase letters, digits and single dashes.
#[must_use]
pub fn slug(name: &str) -> String {
    let mut out = String::new();
    for c in name.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    while out.ends_with('-') {
        out.pop();
    }
    if out.is_empty() {
        out.push('x');
    }
    out
}

/// The base name (without extension) of the files of one scenario.
#[must_use]
pub fn stem(o: &Outcome) -> String {
    let f = std::path::Path::new(&o.file)
        .file_stem()
        .map_or_else(|| "file".to_string(), |s| s.to_string_lossy().into_owned());
    format!("{}--{}", slug(&f), slug(&o.scenario))
}

#[cfg(test)]
mod tests {
    use super::slug;

    #[test]
    fn slugs() {
        assert_eq!(slug("Cold coil, high supply"), "cold-coil-high-supply");
        assert_eq!(slug("  --  "), "x");
        assert_eq!(slug("supply sag to 18 V"), "supply-sag-to-18-v");
    }
}
