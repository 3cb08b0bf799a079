//! A sweep with any controller: the runs of [`crate::sweep`] (same draws, shards, summary and
//! replay commands), each run's scenarios built by the caller's controller factory.

use super::{FirmwareInputs, SetupError, SweepReport, System, run};
use crate::closed_loop::Controller;
use crate::scenario::File;
use crate::scenario::run::{Params, Record};
use crate::sweep::{Plan, Shard};

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

pub(super) fn sweep<C: Controller>(
    sys: &System,
    opts: &SweepOptions,
    make: impl Fn(&FirmwareInputs) -> C + Sync,
) -> Result<SweepReport, SetupError> {
    if opts.runs == 0 {
        return Err(SetupError::new("sweep: runs must be at least 1"));
    }
    let jobs = if opts.jobs > 0 {
        opts.jobs
    } else {
        std::thread::available_parallelism().map_or(1, std::num::NonZero::get)
    };
    let plan = Plan {
        file_name: sys.name(),
        file_hash: &sys.text_hash,
        file: sys.description(),
        seed: opts.seed,
        runs: opts.runs,
        shard: opts.shard,
        jobs,
    };
    // The same loop as `lenz sweep` (crate::sweep), with the user's controller in each run.
    let run = |file: &File, seed: u64, index: u64| {
        let params = Params::draw(file, seed, index);
        let results = (0..file.scenarios.len())
            .map(|k| run::run_fallible(file, k, &params, Record::None, |fw| Ok(make(fw))))
            .collect::<Result<Vec<_>, _>>()?;
        Ok((params, results))
    };
    let mut output = crate::sweep::sweep_runs(&plan, true, &|| {}, &run)?;
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
