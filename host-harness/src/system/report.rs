//! What a user's test gets back: every property of every scenario as value against limit,
//! readable (`Display` lists what failed first), as JUnit XML for CI, and queryable.

use std::fmt;
use std::path::Path;

use crate::closed_loop::Property;
use crate::report::{Outcome, junit};
use crate::scenario::run::Params;
use crate::sweep::Output;

/// Every scenario of a file, run once with one set of part values.
#[derive(Debug, Clone)]
pub struct RunReport {
    /// The file as given.
    pub file: String,
    /// The system's name.
    pub system: String,
    /// The sweep run this replays (`seed`, `index`), if any.
    pub replay: Option<(u64, u64)>,
    /// The part values.
    pub params: Params,
    /// One outcome per scenario, in file order.
    pub outcomes: Vec<Outcome>,
}

impl RunReport {
    /// Every property of every scenario holds.
    #[must_use]
    pub fn all_hold(&self) -> bool {
        self.outcomes.iter().all(|o| o.result.passed())
    }

    /// The property `name` of scenario `scenario`.
    #[must_use]
    pub fn property(&self, scenario: &str, name: &str) -> Option<&Property> {
        self.outcomes
            .iter()
            .find(|o| o.scenario == scenario)
            .and_then(|o| o.result.property(name))
    }

    /// Each failed property as `scenario: property = value, limit`.
    #[must_use]
    pub fn failures(&self) -> Vec<String> {
        self.outcomes
            .iter()
            .flat_map(|o| {
                o.result
                    .violations()
                    .into_iter()
                    .map(move |p| format!("{}: {}", o.scenario, describe(p)))
            })
            .collect()
    }

    /// The JUnit XML document (one test case per scenario and property).
    #[must_use]
    pub fn junit(&self) -> String {
        junit::to_junit(&self.outcomes)
    }

    /// Writes [`RunReport::junit`] to `path`, creating its folder.
    ///
    /// # Errors
    ///
    /// The folder or the file cannot be written.
    pub fn write_junit(&self, path: impl AsRef<Path>) -> std::io::Result<()> {
        write(path.as_ref(), &self.junit())
    }
}

/// `name = value unit, limit ≤ limit unit`.
fn describe(p: &Property) -> String {
    format!(
        "{} = {} {} (limit {} {})",
        p.name,
        number(p.value),
        p.unit,
        number(p.limit),
        p.unit
    )
}

fn number(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.6e}")
    } else {
        format!("{v}")
    }
}

fn write(path: &Path, text: &str) -> std::io::Result<()> {
    if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir)?;
    }
    std::fs::write(path, text)
}

impl fmt::Display for RunReport {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let failures = self.failures();
        write!(f, "{} ({})", self.file, self.system)?;
        if let Some((seed, index)) = self.replay {
            write!(f, ", run {seed}:{index} of a sweep")?;
        }
        writeln!(f)?;
        if failures.is_empty() {
            writeln!(f, "every property holds")?;
        } else {
            writeln!(f, "{} properties fail:", failures.len())?;
            for x in &failures {
                writeln!(f, "  FAIL {x}")?;
            }
        }
        for o in &self.outcomes {
            writeln!(f, "scenario '{}':", o.scenario)?;
            for p in &o.result.properties {
                writeln!(
                    f,
                    "  {} {}",
                    if p.pass { "pass" } else { "FAIL" },
                    describe(p)
                )?;
            }
        }
        Ok(())
    }
}

/// A sweep of every scenario over the tolerances.
#[derive(Debug, Clone)]
pub struct SweepReport {
    /// The sweep's output (the same form as `lenz sweep --json`).
    pub output: Output,
}

impl SweepReport {
    /// Every property held in every run.
    #[must_use]
    pub fn all_hold(&self) -> bool {
        self.output.summary.iter().all(|s| s.passed == s.runs)
    }

    /// Each property that failed in some run, with its worst run as `seed:index` for
    /// [`System::replay`](super::System::replay).
    #[must_use]
    pub fn failures(&self) -> Vec<String> {
        self.output
            .summary
            .iter()
            .filter(|s| s.passed < s.runs)
            .map(|s| {
                let worst = s.worst.as_ref().map_or(String::new(), |w| {
                    format!(
                        "; worst {} {} in run {}:{}",
                        w.value.map_or_else(|| "not finite".into(), number),
                        s.unit,
                        self.output.seed,
                        w.index
                    )
                });
                format!(
                    "{}: {} fails in {} of {} runs (limit {} {}){worst}",
                    s.scenario,
                    s.property,
                    s.runs - s.passed,
                    s.runs,
                    number(s.limit),
                    s.unit
                )
            })
            .collect()
    }

    /// The value of `property` of `scenario` in run `index` (`None`: not in this sweep, or
    /// not finite).
    #[must_use]
    pub fn value(&self, scenario: &str, property: &str, index: u64) -> Option<f64> {
        let k = self
            .output
            .keys
            .iter()
            .position(|k| k.scenario == scenario && k.property == property)?;
        let r = self.output.records.iter().find(|r| r.index == index)?;
        r.values.get(k).copied().flatten()
    }

    /// The JUnit XML document: one test case per scenario and property, failed when any run
    /// failed (the message names the worst run).
    #[must_use]
    pub fn junit(&self) -> String {
        use std::fmt::Write as _;
        let o = &self.output;
        let failed = o.summary.iter().filter(|s| s.passed < s.runs).count();
        let mut x = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
        let _ = writeln!(
            x,
            "<testsuites name=\"lenz sweep\" tests=\"{}\" failures=\"{failed}\">",
            o.summary.len()
        );
        let _ = writeln!(
            x,
            "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{failed}\" errors=\"0\">",
            junit::escape(&format!(
                "{} ({}), seed {}, {} runs",
                o.file, o.system, o.seed, o.runs
            )),
            o.summary.len()
        );
        let messages = self.failures();
        let mut m = messages.iter();
        for s in &o.summary {
            let _ = write!(
                x,
                "    <testcase classname=\"{}\" name=\"{}\" time=\"0\"",
                junit::escape(&s.scenario),
                junit::escape(&s.property)
            );
            match (s.passed < s.runs).then(|| m.next()).flatten() {
                None => x.push_str("/>\n"),
                Some(msg) => {
                    let _ = writeln!(
                        x,
                        ">\n      <failure message=\"{}\" type=\"property\"/>\n    </testcase>",
                        junit::escape(msg)
                    );
                }
            }
        }
        x.push_str("  </testsuite>\n</testsuites>\n");
        x
    }

    /// Writes [`SweepReport::junit`] to `path`, creating its folder.
    ///
    /// # Errors
    ///
    /// The folder or the file cannot be written.
    pub fn write_junit(&self, path: impl AsRef<Path>) -> std::io::Result<()> {
        write(path.as_ref(), &self.junit())
    }
}

impl fmt::Display for SweepReport {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let o = &self.output;
        writeln!(
            f,
            "{} ({}): sweep of {} runs, seed {}; every property held in {} runs",
            o.file, o.system, o.runs, o.seed, o.all_passed
        )?;
        for x in self.failures() {
            writeln!(f, "  FAIL {x}")?;
        }
        for s in &o.summary {
            writeln!(
                f,
                "  {}: {}: {} of {} runs hold, max {} {} (limit {} {})",
                s.scenario,
                s.property,
                s.passed,
                s.runs,
                s.max.map_or_else(|| "—".into(), number),
                s.unit,
                number(s.limit),
                s.unit
            )?;
        }
        Ok(())
    }
}
