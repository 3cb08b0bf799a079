//! A sweep with any controller: the runs of [`crate::sweep`] (same draws, shards, summary and
//! replay commands), each run's scenarios built by the caller's controller factory.

use rayon::prelude::*;

use super::{FirmwareInputs, SetupError, SweepReport, System, run};
use crate::closed_loop::Controller;
use crate::scenario::run::{Params, Record};
use crate::sweep::{Key, RunRecord, Shard, summarise};

/// Runs, seed, threads and shard of a sweep.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SweepOptions {
    /// Runs of the whole sweep.
    pub runs: u64,
    /// Seed.
    pub seed: u64,
    /// Threads (0: as many as the machine has).
    pub jobs: usize,
    /// The shard to run (`None`: every run).
    pub shard: Option<Shard>,
}

impl SweepOptions {
    /// `runs` runs with seed 1, on every core, unsharded.
    #[must_use]
    pub const fn runs(runs: u64) -> SweepOptions {
        SweepOptions {
            runs,
            seed: 1,
            jobs: 0,
            shard: None,
        }
    }

    /// With `seed`.
    #[must_use]
    pub const fn seed(mut self, seed: u64) -> SweepOptions {
        self.seed = seed;
        self
    }

    /// On `jobs` threads.
    #[must_use]
    pub const fn jobs(mut self, jobs: usize) -> SweepOptions {
        self.jobs = jobs;
        self
    }

    /// Only shard `k` of `n` (from 1).
    ///
    /// # Errors
    ///
    /// Not 1 ≤ k ≤ n.
    pub fn shard(mut self, k: u64, n: u64) -> Result<SweepOptions, SetupError> {
        self.shard = Some(
            Shard::parse(&format!("{k}/{n}")).map_err(|e| SetupError::new(format!("shard {e}")))?,
        );
        Ok(self)
    }
}

/// One run's property values, waveforms dropped: memory stays bounded by runs × properties.
fn one_run<C: Controller>(
    sys: &System,
    seed: u64,
    index: u64,
    make: &(impl Fn(&FirmwareInputs) -> C + Sync),
) -> Result<(RunRecord, Vec<Key>), SetupError> {
    let file = sys.description();
    let params = Params::draw(file, seed, index);
    let mut keys = Vec::new();
    let mut values = Vec::new();
    let mut pass = Vec::new();
    for (k, sc) in file.scenarios.iter().enumerate() {
        let r = run::run_fallible(file, k, &params, Record::None, |fw| Ok(make(fw)))?;
        for p in &r.properties {
            keys.push(Key {
                scenario: sc.name.clone(),
                property: p.name.to_string(),
                unit: p.unit.to_string(),
                limit: p.limit,
                bound: p.bound,
            });
            values.push(Some(p.value).filter(|v| v.is_finite()));
            pass.push(p.pass);
        }
    }
    Ok((
        RunRecord {
            index,
            params,
            values,
            pass,
        },
        keys,
    ))
}

pub(super) fn sweep<C: Controller>(
    sys: &System,
    opts: &SweepOptions,
    make: impl Fn(&FirmwareInputs) -> C + Sync,
) -> Result<SweepReport, SetupError> {
    if opts.runs == 0 {
        return Err(SetupError::new("sweep: runs must be at least 1"));
    }
    let range = opts.shard.map_or(0..opts.runs, |s| s.range(opts.runs));
    let mut pool = rayon::ThreadPoolBuilder::new();
    if opts.jobs > 0 {
        pool = pool.num_threads(opts.jobs);
    }
    let pool = pool
        .build()
        .map_err(|e| SetupError::new(format!("sweep: cannot start the threads: {e}")))?;
    let runs = pool.install(|| {
        range
            .into_par_iter()
            .map(|i| one_run(sys, opts.seed, i, &make))
            .collect::<Result<Vec<_>, _>>()
    })?;
    let keys = runs.first().map(|r| r.1.clone()).unwrap_or_default();
    let records = runs.into_iter().map(|r| r.0).collect();
    let mut output = summarise(
        sys.name(),
        &sys.text_hash,
        &sys.description().system.name,
        opts.seed,
        opts.runs,
        opts.shard,
        keys,
        records,
    );
    // The built-in command cannot rebuild a user's controller: name the library call.
    for s in &mut output.summary {
        if let Some(w) = &mut s.worst {
            w.replay = format!(
                "System::replay(\"{}:{}\", …) of {}",
                opts.seed,
                w.index,
                sys.name()
            );
        }
    }
    Ok(SweepReport { output })
}
