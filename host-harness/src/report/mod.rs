//! Reports of closed-loop runs: CSV waveforms, SVG plots, JUnit XML, and histograms of sweep
//! results.
//!
//! - [`csv`]: one file per scenario, one row per recorded tick.
//! - [`svg`]: shared plot helpers and histograms; [`waveform_plot`]: coil (inductor) current
//!   with the firmware's estimate, switch voltage, output voltage and the drive over the whole
//!   run, a zoomed panel around each switch-off and fault, the switch voltage and current as
//!   their min..max envelope between samples, demand changes, faults and trips (time and the
//!   fault before) marked. Drawn with `plotters`' SVG backend and its built-in text metrics,
//!   so no system font library is needed: text is written as SVG `<text>` and rendered by the
//!   viewer.
//! - [`junit`]: one `<testcase>` per scenario and property, for CI systems.
//! - [`text`]: numbers in engineering notation and tables for people.
//! - [`html`]: the index page of a report folder, with the [`summary`] at its top.
//! - [`sink`]: where the files of a run go ([`Sink`]), staged and moved into place at the end.
//! - [`browser`]: the page opened in headless Chromium: every image and link resolves, and a
//!   screenshot.

pub mod browser;
pub mod csv;
pub mod html;
pub mod junit;
pub mod sink;
pub mod summary;
pub mod svg;
pub mod text;
pub mod waveform_plot;

pub use sink::Sink;

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
    /// The base name of its CSV and SVG files, unique within the command's output
    /// ([`Names`]).
    pub stem: String,
    /// The run (its waveform is dropped once written, to keep memory bounded).
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

/// The readable base name (without extension) of the files of scenario `scenario` of `file`:
/// `FILE-STEM--SCENARIO`, both as [`slug`]s. Two scenarios can share it (names that differ in
/// case, punctuation or non-ASCII letters, files of one name in two folders): [`Names`] makes
/// it unique.
#[must_use]
pub fn base_stem(file: &str, scenario: &str) -> String {
    let f = std::path::Path::new(file)
        .file_stem()
        .map_or_else(|| "file".to_string(), |s| s.to_string_lossy().into_owned());
    format!("{}--{}", slug(&f), slug(scenario))
}

/// Hands out file names that are unique within one command's output: the first to ask for a
/// base name gets it, later ones get `BASE-2`, `BASE-3`… (in the order asked, which is the
/// order of the files and scenarios on the command line). Names are compared in lowercase, as
/// a case-insensitive file system would.
#[derive(Debug, Default)]
pub struct Names {
    used: std::collections::HashSet<String>,
}

impl Names {
    /// A name not handed out before, from `base`.
    pub fn unique(&mut self, base: &str) -> String {
        let mut name = base.to_string();
        let mut n = 2u64;
        while !self.used.insert(name.to_lowercase()) {
            name = format!("{base}-{n}");
            n += 1;
        }
        name
    }
}

#[cfg(test)]
mod tests {
    use super::{Names, base_stem, slug};

    #[test]
    fn names_that_slug_alike_get_their_own_files() {
        let mut n = Names::default();
        let a = n.unique(&base_stem("a/valve.toml", "Cold coil"));
        let b = n.unique(&base_stem("b/valve.toml", "cold-coil"));
        let c = n.unique(&base_stem("valve.toml", "Ventil ä"));
        let d = n.unique(&base_stem("valve.toml", "Ventil ö"));
        let e = n.unique("valve--cold-coil-2");
        assert_eq!(a, "valve--cold-coil");
        assert_eq!(b, "valve--cold-coil-2");
        assert_eq!(
            (c.as_str(), d.as_str()),
            ("valve--ventil", "valve--ventil-2")
        );
        assert_eq!(e, "valve--cold-coil-2-2");
        assert_eq!(n.unique("X"), "X");
        assert_eq!(n.unique("x"), "x-2", "case-insensitive file systems");
    }

    #[test]
    fn slugs() {
        assert_eq!(slug("Cold coil, high supply"), "cold-coil-high-supply");
        assert_eq!(slug("  --  "), "x");
        assert_eq!(slug("supply sag to 18 V"), "supply-sag-to-18-v");
    }
}
