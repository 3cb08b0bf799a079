//! Instructions per tick over a run: the distribution, its largest value and where it
//! occurred, and the `tick_budget` property.

use std::collections::BTreeMap;

use serde::Serialize;

/// The instructions of every tick of a run, as a histogram (memory bounded by the number of
/// distinct counts, not by the run's length).
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct TickCosts {
    /// Ticks counted.
    pub ticks: u64,
    /// Largest count.
    pub max: u64,
    /// The first tick with the largest count.
    pub max_tick: u64,
    /// Smallest count.
    pub min: u64,
    /// Mean count.
    pub mean: f64,
    /// Counts and how many ticks had each.
    #[serde(skip)]
    histogram: BTreeMap<u64, u64>,
    #[serde(skip)]
    sum: u128,
}

impl TickCosts {
    /// Adds tick `tick`'s count.
    pub fn add(&mut self, tick: u64, instructions: u64) {
        if self.ticks == 0 || instructions < self.min {
            self.min = instructions;
        }
        if self.ticks == 0 || instructions > self.max {
            self.max = instructions;
            self.max_tick = tick;
        }
        self.ticks += 1;
        self.sum += u128::from(instructions);
        self.mean = self.sum as f64 / self.ticks as f64;
        *self.histogram.entry(instructions).or_insert(0) += 1;
    }

    /// The smallest count that at least `q` (0 ..= 1) of the ticks stay at or below.
    #[must_use]
    pub fn quantile(&self, q: f64) -> u64 {
        let want = (q.clamp(0.0, 1.0) * self.ticks as f64).ceil() as u64;
        let mut seen = 0;
        for (&n, &c) in &self.histogram {
            seen += c;
            if seen >= want.max(1) {
                return n;
            }
        }
        self.max
    }
}

/// The limit of the `tick_budget` property.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub enum TickBudget {
    /// At most this many instructions in any tick.
    Instructions(u64),
    /// The worst tick's time at this clock within `fraction` of the tick period, at one
    /// instruction per clock cycle.
    Clock {
        /// Core clock, MHz.
        mhz: f64,
        /// Share of the tick period the tick function may take (0 < fraction ≤ 1).
        fraction: f64,
    },
}

impl TickBudget {
    /// The limit in instructions for a tick of `tick_s`.
    ///
    /// At one instruction per cycle the limit is `fraction · f · T`. Cortex-M cores take one
    /// cycle for most instructions but more for loads, branches, multiplies on some parts and
    /// flash wait states, so the time is a lower bound and the fraction must leave room for
    /// that and for the rest of the firmware (common practice, no source).
    #[must_use]
    pub fn limit_instructions(&self, tick_s: f64) -> u64 {
        match *self {
            TickBudget::Instructions(n) => n,
            TickBudget::Clock { mhz, fraction } => {
                // Floor, but a product that is a whole number up to rounding stays whole
                // (0.5 · 16 MHz · 100 µs is 800, not 799.99…).
                let x = fraction * mhz * 1e6 * tick_s;
                let r = x.round();
                if (x - r).abs() <= 1e-9 * r.max(1.0) {
                    r as u64
                } else {
                    x.floor() as u64
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distribution_keeps_the_first_worst_tick() {
        let mut c = TickCosts::default();
        for (k, n) in [(0, 90), (1, 250), (2, 120), (3, 250), (4, 100)] {
            c.add(k, n);
        }
        assert_eq!((c.max, c.max_tick, c.min, c.ticks), (250, 1, 90, 5));
        assert!((c.mean - 162.0).abs() < 1e-12);
        assert_eq!(c.quantile(0.5), 120);
        assert_eq!(c.quantile(1.0), 250);
        assert_eq!(c.quantile(0.0), 90);
    }

    #[test]
    fn clock_budget_is_a_share_of_the_tick_period() {
        // 16 MHz, 100 µs tick, half the period: 800 instructions at one per cycle.
        let b = TickBudget::Clock {
            mhz: 16.0,
            fraction: 0.5,
        };
        assert_eq!(b.limit_instructions(100e-6), 800);
        assert_eq!(TickBudget::Instructions(1234).limit_instructions(1.0), 1234);
    }
}
