//! Monte Carlo sweeps over the tolerances of a scenario file.
//!
//! Run `i` of a sweep with seed `S` draws its part values from `(S, i)` alone
//! ([`Params::draw`]) and runs every scenario of the file with them. Runs are independent, so
//! they are spread over a local thread pool; results are put back in run order before
//! anything is summed, so the summary does not depend on the number of threads.
//!
//! # Shards
//!
//! `--shard K/N` runs the contiguous slice `[(K−1)·R/N, K·R/N)` of the `R` runs. Every output
//! carries its run records; [`merge`] checks that the shards belong to one sweep (same file
//! contents, whatever the path's spelling; seed, run count and shard count; each shard exactly
//! once), puts the records back in order and summarises them with the same code as an
//! unsharded run, so the merged JSON is byte-for-byte the unsharded one.
//!
//! # Summary
//!
//! Per scenario and property: the pass rate, the worst run (largest value; ties go to the
//! lowest index) with its part values and the command that replays it, the value range, the
//! mean, and a histogram of 20 equal bins over the finite values (infinite values, a trip that
//! never came, are counted apart). The range and mean are exact; a value is put in its bin at
//! `f32` precision (kept that way to hold memory at 4 bytes per run and property), so a value
//! within 1e-7 (relative) of a bin edge may land in the neighbouring bin.
//!
//! # Memory
//!
//! A run's results are reduced to its property values on the worker thread and folded into
//! the summary in index order; the full results of a run are never kept. See [`sweep`].

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::closed_loop::{Bound, RunResult};
use crate::scenario::File;
use crate::scenario::run::{self, Params, Record, RunSetupError};

/// Number of histogram bins.
pub const BINS: usize = 20;

/// One property of one scenario, as swept.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Key {
    /// Scenario name.
    pub scenario: String,
    /// Property name.
    pub property: String,
    /// Unit.
    pub unit: String,
    /// Limit.
    pub limit: f64,
    /// The limit's side (a maximum unless said otherwise).
    #[serde(default = "max_bound")]
    pub bound: Bound,
}

fn max_bound() -> Bound {
    Bound::Max
}

/// One run: its index, part values and the value of every property (in [`Key`] order).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunRecord {
    /// Run index.
    pub index: u64,
    /// Part values.
    pub params: Params,
    /// Property values (`null` in JSON for a value that is not finite).
    pub values: Vec<Option<f64>>,
    /// Whether each property held.
    pub pass: Vec<bool>,
}

/// A shard: `k` of `n` (from 1).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Shard {
    /// This shard, 1 ..= n.
    pub k: u64,
    /// Number of shards.
    pub n: u64,
}

impl Shard {
    /// Parses `K/N`.
    ///
    /// # Errors
    ///
    /// Not of that form, or not 1 ≤ K ≤ N.
    pub fn parse(s: &str) -> Result<Shard, String> {
        let (a, b) = s
            .split_once('/')
            .ok_or_else(|| format!("'{s}' is not K/N"))?;
        let k: u64 = a
            .trim()
            .parse()
            .map_err(|_| format!("'{a}' is not a shard number"))?;
        let n: u64 = b
            .trim()
            .parse()
            .map_err(|_| format!("'{b}' is not a shard count"))?;
        if k == 0 || n == 0 || k > n {
            return Err(format!("'{s}': needs 1 ≤ K ≤ N"));
        }
        Ok(Shard { k, n })
    }

    /// The run indices of this shard out of `runs` (a shard that [`Shard::parse`] would reject
    /// is taken as the nearest valid one; [`merge`] rejects it first).
    #[must_use]
    pub fn range(&self, runs: u64) -> std::ops::Range<u64> {
        let n = u128::from(self.n.max(1));
        let k = self.k.clamp(1, self.n.max(1));
        let cut = |j: u64| ((u128::from(j) * u128::from(runs)) / n) as u64;
        cut(k - 1)..cut(k)
    }
}

/// Histogram of the finite values.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Histogram {
    /// Lower edge of the first bin.
    pub lo: f64,
    /// Upper edge of the last bin.
    pub hi: f64,
    /// Counts per bin.
    pub counts: Vec<u64>,
    /// Values that are not finite.
    pub not_finite: u64,
}

/// The worst run of a property.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Worst {
    /// Run index.
    pub index: u64,
    /// Its value (`null`: not finite).
    pub value: Option<f64>,
    /// Its part values.
    pub params: Params,
    /// The command that replays it.
    pub replay: String,
}

/// Summary of one property.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PropertySummary {
    /// Scenario name.
    pub scenario: String,
    /// Property name.
    pub property: String,
    /// Unit.
    pub unit: String,
    /// Limit.
    pub limit: f64,
    /// Runs.
    pub runs: u64,
    /// Runs in which it held.
    pub passed: u64,
    /// `passed / runs`.
    pub pass_rate: f64,
    /// Worst run.
    pub worst: Option<Worst>,
    /// Smallest finite value.
    pub min: Option<f64>,
    /// Largest finite value.
    pub max: Option<f64>,
    /// Mean of the finite values.
    pub mean: Option<f64>,
    /// Histogram.
    pub histogram: Histogram,
}

/// A sweep's output (also the JSON of `--json` and of `sweep-merge`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Output {
    /// The scenario file as given.
    pub file: String,
    /// FNV-1a 64 hash of the file's bytes, hex.
    pub file_hash: String,
    /// The system's name.
    pub system: String,
    /// Seed.
    pub seed: u64,
    /// Runs of the whole sweep.
    pub runs: u64,
    /// The shard this output covers (`None`: all runs).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub shard: Option<Shard>,
    /// Runs in which every property held.
    pub all_passed: u64,
    /// Per property.
    pub summary: Vec<PropertySummary>,
    /// The runs (of this shard), in index order (empty from [`sweep_summary`]).
    pub records: Vec<RunRecord>,
    /// The properties, in the order of the record values.
    pub keys: Vec<Key>,
}

/// FNV-1a 64 of `bytes`, as 16 hex digits.
#[must_use]
pub fn fnv1a(bytes: &[u8]) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in bytes {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    format!("{h:016x}")
}

/// What a sweep runs.
#[derive(Debug, Clone, Copy)]
pub struct Plan<'a> {
    /// The file as given (for the replay command).
    pub file_name: &'a str,
    /// Its bytes' hash.
    pub file_hash: &'a str,
    /// The parsed file.
    pub file: &'a File,
    /// Seed.
    pub seed: u64,
    /// Runs of the whole sweep.
    pub runs: u64,
    /// Shard (`None`: all).
    pub shard: Option<Shard>,
    /// Threads.
    pub jobs: usize,
}

/// One run: every scenario of the file with the part values of run `index`.
///
/// # Errors
///
/// A value the plans or the plant reject.
pub fn run_one(
    file: &File,
    seed: u64,
    index: u64,
) -> Result<(Params, Vec<RunResult>), RunSetupError> {
    let p = Params::draw(file, seed, index);
    let results = (0..file.scenarios.len())
        .map(|k| run::run(file, k, &p, Record::None))
        .collect::<Result<Vec<_>, _>>()?;
    Ok((p, results))
}

/// The properties of a run, in [`Key`] order.
fn keys_of(file: &File, results: &[RunResult]) -> Vec<Key> {
    let mut keys = Vec::new();
    for (sc, r) in file.scenarios.iter().zip(results) {
        for p in &r.properties {
            keys.push(Key {
                scenario: sc.name.clone(),
                property: p.name.to_string(),
                unit: p.unit.to_string(),
                limit: p.limit,
                bound: p.bound,
            });
        }
    }
    keys
}

/// Runs in flight at once: results are folded into the summary in index order one batch at a
/// time, so the summary does not depend on the thread count and memory on the batch only.
const BATCH: u64 = 1024;

/// Runs the sweep and keeps every run's record in the output (as `--json` prints them);
/// `tick` is called after every run (for a progress bar).
///
/// Memory: each run is reduced to its record (part values, one value and one pass flag per
/// property) on the worker thread, so its waveforms, events and switch-offs are freed as soon
/// as it ends, and folded into the running summary ([`Summary`]) in index order.
///
/// # Errors
///
/// A value the plans or the plant reject, or the thread pool cannot start.
pub fn sweep(plan: &Plan<'_>, tick: &(dyn Fn() + Sync)) -> Result<Output, RunSetupError> {
    sweep_with(plan, true, tick)
}

/// [`sweep`] without the run records (`records` is empty): what grows with the number of runs
/// is then 4 bytes per property and run, for the histogram.
///
/// # Errors
///
/// As [`sweep`].
pub fn sweep_summary(plan: &Plan<'_>, tick: &(dyn Fn() + Sync)) -> Result<Output, RunSetupError> {
    sweep_with(plan, false, tick)
}

fn sweep_with(
    plan: &Plan<'_>,
    keep_records: bool,
    tick: &(dyn Fn() + Sync),
) -> Result<Output, RunSetupError> {
    sweep_runs(plan, keep_records, tick, &run_one)
}

/// One run of a sweep: every scenario of `file` with the part values of run `index` of `seed`,
/// with whatever controller the caller builds ([`run_one`] for the file's built-in example).
pub type RunFn<'a> =
    dyn Fn(&File, u64, u64) -> Result<(Params, Vec<RunResult>), RunSetupError> + Sync + 'a;

/// The sweep loop itself, for any controller: `run` makes one run; the runs are folded into
/// the summary in index order, one batch at a time (the same code for the built-in examples and
/// for a user's controller through [`crate::System::sweep`]).
///
/// # Errors
///
/// `run`'s error, or the thread pool cannot start.
pub fn sweep_runs(
    plan: &Plan<'_>,
    keep_records: bool,
    tick: &(dyn Fn() + Sync),
    run: &RunFn<'_>,
) -> Result<Output, RunSetupError> {
    let range = plan.shard.map_or(0..plan.runs, |s| s.range(plan.runs));
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(plan.jobs.max(1))
        .build()
        .map_err(|e| RunSetupError(format!("--jobs: cannot start the threads: {e}")))?;
    let mut keys: Option<Vec<Key>> = None;
    let mut summary = Summary::default();
    let mut records = Vec::new();
    let mut start = range.start;
    while start < range.end {
        let end = range.end.min(start.saturating_add(BATCH));
        let batch: Vec<(RunRecord, Option<Vec<Key>>)> = pool.install(|| {
            (start..end)
                .into_par_iter()
                .map(|index| {
                    let r = run(plan.file, plan.seed, index).map(|(params, res)| {
                        let props = || res.iter().flat_map(|r| r.properties.iter());
                        let record = RunRecord {
                            index,
                            params,
                            values: props()
                                .map(|p| Some(p.value).filter(|v| v.is_finite()))
                                .collect(),
                            pass: props().map(|p| p.pass).collect(),
                        };
                        let k = (index == range.start).then(|| keys_of(plan.file, &res));
                        (record, k)
                    });
                    tick();
                    r
                })
                .collect::<Result<Vec<_>, _>>()
        })?;
        for (record, k) in batch {
            if let Some(k) = k {
                keys = Some(k);
            }
            summary.push(&record.values, &record.pass, record.index);
            if keep_records {
                records.push(record);
            }
        }
        start = end;
    }
    let keys = keys.unwrap_or_default();
    let seed = plan.seed;
    let file = plan.file;
    Ok(Output {
        file: plan.file_name.to_string(),
        file_hash: plan.file_hash.to_string(),
        system: plan.file.system.name.clone(),
        seed,
        runs: plan.runs,
        shard: plan.shard,
        all_passed: summary.all_passed,
        summary: summary.finish(&keys, plan.file_name, seed, &|i| {
            Params::draw(file, seed, i)
        }),
        records,
        keys,
    })
}

/// The running summary of a sweep, fed run by run in index order (the same code for a sweep
/// and for merged shards, so both give the same numbers to the last bit).
#[derive(Debug, Default)]
pub struct Summary {
    props: Vec<Acc>,
    /// Runs in which every property held.
    pub all_passed: u64,
}

/// One property's running figures.
#[derive(Debug, Default)]
struct Acc {
    runs: u64,
    passed: u64,
    /// Worst so far against an upper limit (the largest): index and value (`None`: not
    /// finite, which ranks first).
    worst: Option<(u64, Option<f64>)>,
    /// Worst so far against a lower limit (the smallest), ranked the same way.
    worst_low: Option<(u64, Option<f64>)>,
    min: Option<f64>,
    max: Option<f64>,
    sum: f64,
    /// The finite values, as `f32`, for the histogram's bins once the range is known.
    finite: Vec<f32>,
}

impl Summary {
    /// Adds run `index` (which must follow the previous one).
    pub fn push(&mut self, values: &[Option<f64>], pass: &[bool], index: u64) {
        if self.props.len() < values.len() {
            self.props.resize_with(values.len(), Acc::default);
        }
        for (j, a) in self.props.iter_mut().enumerate() {
            let v = values.get(j).copied().flatten();
            let ok = pass.get(j).copied().unwrap_or(false);
            a.runs += 1;
            a.passed += u64::from(ok);
            // Worst: a non-finite value first, then the largest (the smallest for a lower
            // limit); ties to the lowest index. The key's side is known only at the end, so
            // both are kept.
            let rank = |v: Option<f64>| v.unwrap_or(f64::INFINITY);
            if a.worst.is_none_or(|(_, w)| rank(v) > rank(w)) {
                a.worst = Some((index, v));
            }
            let rank_low = |v: Option<f64>| v.map_or(f64::INFINITY, |x| -x);
            if a.worst_low.is_none_or(|(_, w)| rank_low(v) > rank_low(w)) {
                a.worst_low = Some((index, v));
            }
            if let Some(v) = v {
                a.min = Some(a.min.map_or(v, |m| m.min(v)));
                a.max = Some(a.max.map_or(v, |m| m.max(v)));
                a.sum += v;
                a.finite.push(v as f32);
            }
        }
        if pass.iter().all(|p| *p) {
            self.all_passed += 1;
        }
    }

    /// The summary of every property of `keys`; `params_of` gives a run's part values (for
    /// the worst runs), `file` names the file in the replay commands.
    #[must_use]
    pub fn finish(
        self,
        keys: &[Key],
        file: &str,
        seed: u64,
        params_of: &dyn Fn(u64) -> Params,
    ) -> Vec<PropertySummary> {
        let mut props = self.props.into_iter();
        keys.iter()
            .map(|key| {
                let a = props.next().unwrap_or_default();
                let n = a.runs;
                let (lo, hi) = (a.min.unwrap_or(0.0), a.max.unwrap_or(0.0));
                let mut counts = vec![0u64; BINS];
                for &v in &a.finite {
                    let b = if hi > lo {
                        (((f64::from(v) - lo) / (hi - lo)) * BINS as f64).floor() as usize
                    } else {
                        0
                    };
                    if let Some(c) = counts.get_mut(b.min(BINS - 1)) {
                        *c += 1;
                    }
                }
                let n_finite = a.finite.len() as u64;
                PropertySummary {
                    scenario: key.scenario.clone(),
                    property: key.property.clone(),
                    unit: key.unit.clone(),
                    limit: key.limit,
                    runs: n,
                    passed: a.passed,
                    pass_rate: if n == 0 {
                        0.0
                    } else {
                        a.passed as f64 / n as f64
                    },
                    worst: match key.bound {
                        Bound::Max => a.worst,
                        Bound::Min => a.worst_low,
                    }
                    .map(|(index, value)| Worst {
                        index,
                        value,
                        params: params_of(index),
                        replay: format!("lenz sim {file} --replay {seed}:{index}"),
                    }),
                    min: a.min,
                    max: a.max,
                    mean: (n_finite > 0).then(|| a.sum / n_finite as f64),
                    histogram: Histogram {
                        lo,
                        hi,
                        counts,
                        not_finite: n - n_finite,
                    },
                }
            })
            .collect()
    }
}

/// Builds the output from records (sorted here by index).
#[allow(clippy::too_many_arguments)] // every field of the output, named at the call.
#[must_use]
pub fn summarise(
    file: &str,
    file_hash: &str,
    system: &str,
    seed: u64,
    runs: u64,
    shard: Option<Shard>,
    keys: Vec<Key>,
    mut records: Vec<RunRecord>,
) -> Output {
    records.sort_by_key(|r| r.index);
    let mut s = Summary::default();
    for r in &records {
        s.push(&r.values, &r.pass, r.index);
    }
    let all_passed = s.all_passed;
    let params_of = |i: u64| {
        records
            .binary_search_by_key(&i, |r| r.index)
            .ok()
            .and_then(|k| records.get(k))
            .map_or(Params::NOMINAL, |r| r.params)
    };
    let summary = s.finish(&keys, file, seed, &params_of);
    Output {
        file: file.to_string(),
        file_hash: file_hash.to_string(),
        system: system.to_string(),
        seed,
        runs,
        shard,
        all_passed,
        summary,
        records,
        keys,
    }
}

/// Merges shard outputs into the output of the whole sweep.
///
/// # Errors
///
/// The outputs do not belong to one sweep, a shard is missing or given twice, or a shard's
/// records do not match its slice.
pub fn merge(parts: Vec<Output>) -> Result<Output, String> {
    let first = parts.first().ok_or("no shard outputs given")?;
    let (file, hash, system, seed, runs) = (
        first.file.clone(),
        first.file_hash.clone(),
        first.system.clone(),
        first.seed,
        first.runs,
    );
    let n = first
        .shard
        .ok_or("the first output is not a shard (no `shard` in it)")?
        .n;
    if n == 0 || n > 1_000_000 {
        return Err(format!("a shard count of {n} is outside 1 … 1 000 000"));
    }
    let mut seen = vec![false; n as usize];
    let mut keys: Option<Vec<Key>> = None;
    let mut records = Vec::new();
    for p in parts {
        let s = p
            .shard
            .ok_or("an output is not a shard (no `shard` in it)")?;
        if s.k == 0 || s.k > s.n {
            return Err(format!("shard {}/{}: needs 1 ≤ K ≤ N", s.k, s.n));
        }
        // The file's contents decide, not how its path was spelled (`./a.toml`, `a.toml`, a
        // CI runner's own checkout folder); the merged output names it as the first shard does.
        if p.file_hash != hash {
            return Err(format!(
                "shard {}/{} is of another file ({}, contents {}) than the first ({file}, \
                 contents {hash})",
                s.k, s.n, p.file, p.file_hash
            ));
        }
        if p.seed != seed || p.runs != runs || s.n != n {
            return Err(format!(
                "shard {}/{} has seed {} and {} runs; the first has seed {seed}, {runs} runs and {n} shards",
                s.k, s.n, p.seed, p.runs
            ));
        }
        let slot = seen
            .get_mut((s.k - 1) as usize)
            .ok_or_else(|| format!("shard {}/{} is out of range", s.k, s.n))?;
        if *slot {
            return Err(format!("shard {}/{} is given twice", s.k, s.n));
        }
        *slot = true;
        let want: Vec<u64> = s.range(runs).collect();
        let got: Vec<u64> = p.records.iter().map(|r| r.index).collect();
        if want != got {
            return Err(format!("shard {}/{}: its runs are not its slice", s.k, s.n));
        }
        if !p.records.is_empty() {
            match &keys {
                None => keys = Some(p.keys.clone()),
                Some(k) if *k != p.keys => {
                    return Err(format!(
                        "shard {}/{}: other properties than shard 1",
                        s.k, s.n
                    ));
                }
                Some(_) => {}
            }
        }
        records.extend(p.records);
    }
    if let Some(missing) = seen.iter().position(|s| !s) {
        return Err(format!("shard {}/{n} is missing", missing + 1));
    }
    Ok(summarise(
        &file,
        &hash,
        &system,
        seed,
        runs,
        None,
        keys.unwrap_or_default(),
        records,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_cover_every_run_once() {
        for runs in [0u64, 1, 7, 100, 1001] {
            for n in 1..=7u64 {
                let mut all = Vec::new();
                for k in 1..=n {
                    all.extend(Shard { k, n }.range(runs));
                }
                assert_eq!(
                    all,
                    (0..runs).collect::<Vec<_>>(),
                    "{runs} runs, {n} shards"
                );
            }
        }
        assert!(Shard::parse("0/3").is_err());
        assert!(Shard::parse("4/3").is_err());
        assert!(Shard::parse("2-3").is_err());
        assert_eq!(Shard::parse("2/3"), Ok(Shard { k: 2, n: 3 }));
    }

    #[test]
    fn fnv_reference() {
        // FNV-1a 64 test vectors (common practice, no source): "" and "a".
        assert_eq!(fnv1a(b""), "cbf29ce484222325");
        assert_eq!(fnv1a(b"a"), "af63dc4c8601ec8c");
    }
}
