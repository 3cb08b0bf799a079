//! Where the files of a run go: CSV waveforms, SVG plots and the JUnit report, each in a staged
//! output folder ([`Staged`]) checked before the run.

use std::path::{Path, PathBuf};

use crate::input_error::InputError;
use crate::outputs::Staged;
use crate::report::{self, Names, Outcome};

/// Where the files of a run go: CSV waveforms, SVG plots, the JUnit report, each in a staged
/// folder ([`Staged`]) checked before the run.
#[derive(Debug, Default)]
pub struct Sink {
    stages: Vec<Staged>,
    /// Stage index and name prefix of the CSV files.
    csv: Option<(usize, String)>,
    /// Stage index and name prefix of the SVG plots.
    plot: Option<(usize, String)>,
    /// Stage index and file name of the JUnit report.
    junit: Option<(usize, String)>,
    names: Names,
}

impl Sink {
    /// Adds a staged folder; returns its index.
    pub fn add_stage(&mut self, s: Staged) -> usize {
        self.stages.push(s);
        self.stages.len() - 1
    }

    /// Writes the CSV files as `PREFIX<stem>.csv` into stage `k`.
    pub fn csv_into(&mut self, k: usize, prefix: &str) {
        self.csv = Some((k, prefix.to_string()));
    }

    /// Writes the SVG plots as `PREFIX<stem>.svg` into stage `k`.
    pub fn plot_into(&mut self, k: usize, prefix: &str) {
        self.plot = Some((k, prefix.to_string()));
    }

    /// Writes the JUnit report as `name` into stage `k`.
    pub fn junit_into(&mut self, k: usize, name: &str) {
        self.junit = Some((k, name.to_string()));
    }

    /// The outputs of `lenz sim`'s flags, each checked (and its folder created) now.
    ///
    /// # Errors
    ///
    /// A folder or file that cannot be written, naming the flag.
    pub fn for_flags(
        csv: Option<&Path>,
        plot: Option<&Path>,
        junit: Option<&Path>,
    ) -> Result<Sink, InputError> {
        let mut s = Sink::default();
        if let Some(dir) = csv {
            let k = s.add_stage(Staged::prepare("--csv", dir)?);
            s.csv_into(k, "");
        }
        if let Some(dir) = plot {
            let k = s.add_stage(Staged::prepare("--plot", dir)?);
            s.plot_into(k, "");
        }
        if let Some(p) = junit {
            let name = p
                .file_name()
                .and_then(|n| n.to_str())
                .filter(|n| !n.is_empty())
                .ok_or_else(|| InputError(format!("--junit {}: not a file name", p.display())))?
                .to_string();
            let parent = p
                .parent()
                .filter(|d| !d.as_os_str().is_empty())
                .unwrap_or(Path::new("."));
            let stage = Staged::prepare("--junit", parent)?;
            stage.check_name(Path::new(&name))?;
            let k = s.add_stage(stage);
            s.junit_into(k, &name);
        }
        Ok(s)
    }

    /// A file stem for `base` not yet given out by this sink (`base`, `base-2`, …).
    pub fn unique_stem(&mut self, base: &str) -> String {
        self.names.unique(base)
    }

    /// Whether the run must record waveforms.
    #[must_use]
    pub fn wants_waveforms(&self) -> bool {
        self.csv.is_some() || self.plot.is_some()
    }

    /// The staged folder `k` (for a command's own files).
    ///
    /// # Errors
    ///
    /// There is no folder `k`.
    pub fn staged(&mut self, k: usize) -> Result<&mut Staged, InputError> {
        self.stages
            .get_mut(k)
            .ok_or_else(|| InputError(format!("no output folder number {k}")))
    }

    /// Writes the CSV and SVG files of one scenario.
    ///
    /// # Errors
    ///
    /// A file cannot be written or drawn.
    pub fn scenario(&mut self, o: &Outcome) -> Result<(), InputError> {
        if let Some((k, prefix)) = self.csv.clone() {
            self.staged(k)?
                .write_with(&format!("{prefix}{}.csv", o.stem), |w| {
                    report::csv::write_csv(w, &o.result.waveform)
                })?;
        }
        if let Some((k, prefix)) = self.plot.clone() {
            let svg = report::svg::waveform_svg(o).map_err(InputError)?;
            self.staged(k)?
                .write(&format!("{prefix}{}.svg", o.stem), &svg)?;
        }
        Ok(())
    }

    /// Writes the JUnit report and moves every file into place; returns the files.
    ///
    /// # Errors
    ///
    /// A file cannot be written or moved.
    pub fn finish(mut self, outcomes: &[Outcome]) -> Result<Vec<PathBuf>, InputError> {
        if let Some((k, name)) = self.junit.clone() {
            self.staged(k)?
                .write(&name, &report::junit::to_junit(outcomes))?;
        }
        let mut written = Vec::new();
        for s in std::mem::take(&mut self.stages) {
            written.extend(s.commit()?);
        }
        Ok(written)
    }
}

impl Drop for Sink {
    fn drop(&mut self) {
        // Last prepared first: a folder an earlier flag created is empty only once the later
        // flags' staging folders in it are gone.
        while let Some(s) = self.stages.pop() {
            drop(s);
        }
    }
}
