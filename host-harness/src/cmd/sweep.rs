//! `lenz sweep FILE --runs N`: Monte Carlo over the file's tolerances (see [`crate::sweep`]);
//! `lenz sweep-merge FILE...`: combines the `--json` outputs of `--shard K/N` runs.
//!
//! Exit code 0 when every property held in every run, 1 when any failed, 2 on bad input.

use std::io::IsTerminal as _;
use std::path::PathBuf;
use std::process::ExitCode;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use super::common::{CAUTION, CliError};
use super::sim::{describe, value};
use super::table::new_table;
use crate::outputs::Staged;
use crate::report::{Names, slug};
use crate::sweep::{self, Output, Plan, Shard};

/// Arguments of `lenz sweep`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML) with a [tolerances] table.
    #[arg(value_name = "FILE")]
    file: PathBuf,
    /// Number of runs of the whole sweep.
    #[arg(long, value_name = "N")]
    runs: u64,
    /// Seed: run I of seed S always draws the same part values.
    #[arg(long, value_name = "S", default_value_t = 1)]
    seed: u64,
    /// Threads (default: all cores).
    #[arg(long, value_name = "J")]
    jobs: Option<usize>,
    /// Run only slice K of N of the runs (for a CI matrix); merge with `lenz sweep-merge`.
    #[arg(long, value_name = "K/N", value_parser = Shard::parse)]
    shard: Option<Shard>,
    /// Print one JSON object (summary and run records) instead of the tables.
    #[arg(long)]
    json: bool,
    /// Write an SVG histogram per property into this folder.
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
}

/// Arguments of `lenz sweep-merge`.
#[derive(Debug, clap::Args)]
pub struct MergeArgs {
    /// The `--json` outputs of every shard of one sweep.
    #[arg(value_name = "FILE", required = true)]
    files: Vec<PathBuf>,
    /// Print the merged output as JSON (identical to an unsharded `--json` run).
    #[arg(long)]
    json: bool,
    /// Write an SVG histogram per property into this folder.
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
}

/// Runs `lenz sweep`.
///
/// # Errors
///
/// Bad input (exit 2).
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    if a.runs == 0 {
        return Err(CliError("--runs: must be at least 1".into()));
    }
    if a.runs > 10_000_000 {
        return Err(CliError("--runs: at most 10 000 000".into()));
    }
    let jobs = match a.jobs {
        Some(0) => return Err(CliError("--jobs: must be at least 1".into())),
        Some(j) if j > 1024 => return Err(CliError("--jobs: at most 1024".into())),
        Some(j) => j,
        None => std::thread::available_parallelism().map_or(1, usize::from),
    };
    // The plot folder is checked before any work.
    let plot = a
        .plot
        .as_deref()
        .map(|d| Staged::prepare("--plot", d))
        .transpose()?;
    let name = a.file.display().to_string();
    let bytes = crate::scenario::read(&a.file).map_err(|e| CliError(e.to_string()))?;
    let text = String::from_utf8(bytes.clone())
        .map_err(|_| CliError(format!("{name}: not UTF-8 text")))?;
    let file = crate::scenario::parse(&name, &text).map_err(|e| CliError(e.to_string()))?;
    let hash = sweep::fnv1a(&bytes);
    let plan = Plan {
        file_name: &name,
        file_hash: &hash,
        file: &file,
        seed: a.seed,
        runs: a.runs,
        shard: a.shard,
        jobs,
    };
    let todo = a.shard.map_or(a.runs, |s| {
        let r = s.range(a.runs);
        r.end - r.start
    });
    let bar = if std::io::stderr().is_terminal() {
        let b = ProgressBar::with_draw_target(Some(todo), ProgressDrawTarget::stderr());
        if let Ok(style) =
            ProgressStyle::with_template("{bar:40} {pos}/{len} runs, {per_sec}, eta {eta}")
        {
            b.set_style(style);
        }
        b
    } else {
        ProgressBar::hidden()
    };
    // The run records are printed only with --json; without, memory does not keep them.
    let run = if a.json {
        sweep::sweep
    } else {
        sweep::sweep_summary
    };
    let out = run(&plan, &|| bar.inc(1))
        .map_err(|e| CliError(crate::scenario::locate_problem(&name, &e.0).to_string()))?;
    bar.finish_and_clear();
    report(&out, a.json, plot)
}

/// Runs `lenz sweep-merge`.
///
/// # Errors
///
/// Bad input (exit 2).
pub fn merge(a: &MergeArgs) -> Result<ExitCode, CliError> {
    let plot = a
        .plot
        .as_deref()
        .map(|d| Staged::prepare("--plot", d))
        .transpose()?;
    let mut parts = Vec::new();
    for p in &a.files {
        let text = std::fs::read_to_string(p)
            .map_err(|e| CliError(format!("{}: cannot read the file: {e}", p.display())))?;
        let o: Output = serde_json::from_str(&text).map_err(|e| {
            CliError(format!(
                "{}:{}:{}: not a `lenz sweep --json` output: {e}",
                p.display(),
                e.line(),
                e.column()
            ))
        })?;
        parts.push(o);
    }
    let out = sweep::merge(parts).map_err(CliError)?;
    report(&out, a.json, plot)
}

const SPARK: [char; 8] = ['▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'];

/// A one-line text histogram.
fn sparkline(counts: &[u64]) -> String {
    let max = counts.iter().copied().max().unwrap_or(0);
    counts
        .iter()
        .map(|&c| {
            if c == 0 {
                ' '
            } else {
                let k = ((c * 7).div_ceil(max.max(1))) as usize;
                SPARK.get(k.min(7)).copied().unwrap_or('█')
            }
        })
        .collect()
}

fn opt(v: Option<f64>, unit: &str) -> String {
    v.map_or_else(|| "never".to_string(), |v| value(v, unit))
}

fn report(out: &Output, json: bool, plot: Option<Staged>) -> Result<ExitCode, CliError> {
    if let Some(mut stage) = plot {
        let mut names = Names::default();
        for s in &out.summary {
            let svg = crate::report::svg::histogram_svg(
                &format!(
                    "{} — {}: {} runs, {:.1} % pass",
                    s.scenario,
                    s.property.replace('_', " "),
                    s.runs,
                    s.pass_rate * 100.0
                ),
                &s.unit,
                s.histogram.lo,
                s.histogram.hi,
                &s.histogram.counts,
                s.limit,
            )
            .map_err(CliError)?;
            let stem = names.unique(&format!("{}--{}", slug(&s.scenario), slug(&s.property)));
            stage.write(&format!("{stem}.svg"), &svg)?;
        }
        stage.commit()?;
    }
    let done = out.summary.first().map_or(0, |s| s.runs);
    let ok = out.all_passed == done;
    if json {
        crate::out::json(out).map_err(|e| CliError(e.to_string()))?;
    } else {
        let slice = out
            .shard
            .map(|s| format!(" (shard {}/{}: {done} runs)", s.k, s.n))
            .unwrap_or_default();
        outln!(
            "lenz sweep: {} ({}), seed {}, {} runs{slice}",
            out.file,
            out.system,
            out.seed,
            out.runs
        );
        let mut t = new_table(&[
            "Scenario",
            "Property",
            "Pass",
            "Worst",
            "Run",
            "Limit",
            "Histogram (min … max)",
        ]);
        for s in &out.summary {
            t.add_row(vec![
                s.scenario.clone(),
                s.property.replace('_', " "),
                format!("{:.1} %", s.pass_rate * 100.0),
                s.worst
                    .as_ref()
                    .map_or_else(String::new, |w| opt(w.value, &s.unit)),
                s.worst
                    .as_ref()
                    .map_or_else(String::new, |w| w.index.to_string()),
                value(s.limit, &s.unit),
                format!(
                    "{} … |{}| … {}{}",
                    opt(s.min, &s.unit),
                    sparkline(&s.histogram.counts),
                    opt(s.max, &s.unit),
                    if s.histogram.not_finite > 0 {
                        format!(" (+{} never)", s.histogram.not_finite)
                    } else {
                        String::new()
                    }
                ),
            ]);
        }
        outln!("{t}");
        outln!("\n{} of {done} runs passed every property.", out.all_passed);
        let mut shown = Vec::new();
        for s in out.summary.iter().filter(|s| s.passed < s.runs) {
            if let Some(w) = s.worst.as_ref().filter(|w| !shown.contains(&w.index)) {
                shown.push(w.index);
                outln!(
                    "worst run {} ({} {}): {}\n  replay: {}",
                    w.index,
                    s.scenario,
                    s.property.replace('_', " "),
                    describe(&w.params),
                    w.replay
                );
            }
        }
        outln!("{CAUTION}");
    }
    Ok(if ok {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
