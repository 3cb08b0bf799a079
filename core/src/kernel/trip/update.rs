//! The per-sample update of the trip detector: the fast path, the full path and the block
//! update.

use super::block::{inverse_back, inverse_up, mean_square, thermal_step, x2_q24};
use super::config::TripConfig;
use super::log::TripLog;
use super::state::{
    BLANKING, BLOCK_LOG2_MAX, LATCHED, PHASE_MASK, PREV_ON, RETRY_SHIFT, RUNNING, SUM_MASK,
    THETA_ONE_Q24, TripState, WAITING,
};
use super::verdict::{Cause, TripEvent, Verdict};

impl TripConfig {
    /// `k` of the block (at most [`BLOCK_LOG2_MAX`]: every configuration is made by
    /// [`TripConfig::from_raw`], which clamps it).
    #[inline(always)]
    fn k(&self) -> u32 {
        debug_assert!(self.block_log2 <= BLOCK_LOG2_MAX);
        u32::from(self.block_log2)
    }

    /// Both accumulators over the block whose readings sum to `sum`, from the block sums;
    /// `Σ(r² >> 5)` restarts. The cause if one trips.
    #[inline(always)]
    fn block_update(&self, s: &mut TripState, sum: u32) -> Option<Cause> {
        let k = self.k();
        // Σ(r² >> 5) over 2^k samples, times 2^(5−k): the mean square, less the truncation,
        // whose mean over noisy readings (16 of r² >> 5's units) is added back.
        let mean_sq = mean_square(s.sum_sq, k);
        s.sum_sq = 0;
        let inverse = self.inverse_block(s, sum, k);
        let hot = self.thermal_block(s, mean_sq);
        if inverse {
            Some(Cause::InverseTime)
        } else if hot {
            Some(Cause::Thermal)
        } else {
            None
        }
    }

    /// [`TripConfig::block_update`] for the rarer callers (a block ending while waiting,
    /// latched or at a fault trip): one shared copy, not inlined.
    #[inline(never)]
    fn block(&self, s: &mut TripState, ctl: u32) -> Option<Cause> {
        self.block_update(s, ctl & SUM_MASK)
    }

    /// A sample that ends a block and trips nothing else; the tick and the control word of
    /// this sample are in the state already. The block update is inlined here, the once per
    /// block path of a running channel.
    #[cold]
    #[inline(never)]
    fn block_end(&self, s: &mut TripState, reading_counts: u16) -> Verdict {
        let ctl = s.sum_ctl;
        let cause = self.block_update(s, ctl & SUM_MASK);
        let ctl = ctl & !SUM_MASK;
        match cause {
            Some(c) => self.trip(s, ctl, s.tick.wrapping_sub(1), reading_counts, c),
            None => {
                s.sum_ctl = ctl;
                Verdict::Allow
            }
        }
    }

    /// One thermal update over a block of mean square reading `mean_sq`; `true` when θ is at
    /// or above one.
    #[inline(always)]
    fn thermal_block(&self, s: &mut TripState, mean_sq: u32) -> bool {
        if self.x2_mul == 0 {
            return false;
        }
        let x2 = x2_q24(mean_sq, self.x2_mul, self.x2_shift);
        // θ with its 16 fraction bits (Q40) plus the step (Q56 → Q40, floored).
        let (theta, frac) = thermal_step(
            s.theta_q24,
            s.theta_frac,
            x2,
            self.thermal_step_q32 & 0x7FFF_FFFF,
        );
        s.theta_q24 = theta;
        s.theta_frac = frac;
        s.theta_q24 >= THETA_ONE_Q24
    }

    /// One inverse-time update over a block whose readings sum to `sum`; `true` when the
    /// accumulator reaches one.
    #[inline(always)]
    fn inverse_block(&self, s: &mut TripState, sum: u32, k: u32) -> bool {
        let t = &self.inverse;
        if t.m_scale_q32 == 0 {
            return false;
        }
        let m = t.m_q16_of_sum(sum, k);
        match t.increment_m(m) {
            Some(inc) => match inverse_up(s.inverse_q32, inc, k) {
                Some(total) => {
                    s.inverse_q32 = total;
                    false
                }
                None => {
                    s.inverse_q32 = 0;
                    true
                }
            },
            None if t.instant_reset => {
                s.inverse_q32 = 0;
                false
            }
            None => {
                // Run back by K·T_s(1 − M²)/(TD t_r), M < 1 here (Q16 below 2¹⁶).
                s.inverse_q32 = inverse_back(s.inverse_q32, t.reset_q32, m, k);
                false
            }
        }
    }

    /// Processes one sample.
    ///
    /// # Arguments
    ///
    /// - `reading_counts`: the ADC reading of this sample (zero current at 0).
    /// - `switch_on`: the switch state the firmware commands for this sample; a rising edge
    ///   starts the blanking time.
    ///
    /// # Returns
    ///
    /// The [`Verdict`]: the switch may stay on only on [`Verdict::Allow`].
    #[inline]
    pub fn update(&self, s: &mut TripState, reading_counts: u16, switch_on: bool) -> Verdict {
        let r = u32::from(reading_counts);
        let tick = s.tick;
        let next = tick.wrapping_add(1);
        s.tick = next;
        // The block sums: Σr in the low bits of the control word (2⁵ readings < 2²¹) and
        // Σ(r² >> 5) (r² < 2³², so 2⁵ terms fit). Wrapping only on a corrupted state.
        let ctl = s.sum_ctl.wrapping_add(r);
        s.sum_ctl = ctl;
        s.sum_sq = s.sum_sq.wrapping_add((r * r) >> BLOCK_LOG2_MAX);
        // Stuck sensor: the same reading again with the switch on continues the run (its
        // count `tick − start` is then 1 ..= limit − 1 on the fast path: not wrapped, not at
        // the limit); any other reading starts a new one.
        let sense = s.sense;
        let same = switch_on && sense & 0xFFFF == r;
        let stuck_ok =
            !same || (tick.wrapping_sub(sense >> 16) & 0xFFFF).wrapping_sub(1) < self.stuck_fast;
        // The common case, one test each: running (not blanking) with the switch as at the
        // last sample, nothing over and no over bit in the history, and the stuck count short
        // of its limit. Then only the block update may be due (once per block); everything
        // else takes the full path, which comes to the same result in this case.
        if (ctl >> 21) & 0b111 == u32::from(switch_on)
            && reading_counts < self.over_counts
            && s.history == 0
            && stuck_ok
        {
            if !same {
                s.sense = r | (tick << 16);
            }
            if next & self.block_mask != 0 {
                return Verdict::Allow;
            }
            return self.block_end(s, reading_counts);
        }
        self.full(s, r | (u32::from(switch_on) << 16))
    }

    /// Everything of a sample after the tick and the block sums; `x` is the reading
    /// (bits 0..=15) and the switch state (bit 16).
    #[cold]
    #[inline(never)]
    fn full(&self, s: &mut TripState, x: u32) -> Verdict {
        let reading_counts = x as u16;
        let r = x & 0xFFFF;
        let switch_on = x >> 16 != 0;
        let tick = s.tick.wrapping_sub(1);
        let mut ctl = s.sum_ctl;
        let sense = s.sense;
        let stuck = if switch_on && sense & 0xFFFF == r {
            let count = tick.wrapping_sub(sense >> 16) & 0xFFFF;
            if count == 0 {
                // 65536 in a row: hold the count at 65535 (the run starts one tick later).
                s.sense = r | (tick.wrapping_sub(0xFFFF) << 16);
                0xFFFF
            } else {
                count
            }
        } else {
            s.sense = r | (tick << 16);
            0
        };
        let mut phase = ctl & PHASE_MASK;
        if phase == WAITING || phase == LATCHED {
            return self.held(s, ctl, tick);
        }
        if switch_on {
            if ctl & PREV_ON == 0 {
                // Rising edge: blanking starts.
                ctl |= PREV_ON;
                s.timer = self.blank_samples;
                if self.blank_samples != 0 {
                    phase = BLANKING;
                }
            }
        } else {
            ctl &= !PREV_ON;
        }
        let mut over = false;
        if phase == BLANKING {
            let left = s.timer.saturating_sub(1);
            s.timer = left;
            if left == 0 {
                phase = RUNNING;
            }
        } else {
            over = reading_counts >= self.over_counts;
        }
        ctl = (ctl & !PHASE_MASK) | phase;
        let history = ((s.history << 1) | u32::from(over)) & self.history_mask;
        s.history = history;

        let cause = if stuck >= self.stuck_limit {
            Cause::SensorFault
        } else if over && history.count_ones() >= self.persistence_n {
            Cause::Instantaneous
        } else if tick.wrapping_add(1) & self.block_mask == 0 {
            s.sum_ctl = ctl;
            return self.block_end(s, reading_counts);
        } else {
            s.sum_ctl = ctl;
            return Verdict::Allow;
        };
        self.fault(s, ctl, tick, reading_counts, cause)
    }

    /// A sample while waiting for a retry or latched. The switch is held off here whatever
    /// the firmware commands, so the first sample on after a retry is a switch-on and starts
    /// the blanking time. The accumulators go on (the winding cools).
    #[cold]
    #[inline(never)]
    fn held(&self, s: &mut TripState, ctl: u32, tick: u32) -> Verdict {
        let mut ctl = ctl & !PREV_ON;
        if tick.wrapping_add(1) & self.block_mask == 0 {
            let _ = self.block(s, ctl);
            ctl &= !SUM_MASK;
        }
        if ctl & PHASE_MASK == WAITING {
            let left = s.timer.saturating_sub(1);
            s.timer = left;
            if left == 0 && s.theta_q24 < THETA_ONE_Q24 {
                let retries = (ctl >> RETRY_SHIFT).saturating_add(1).min(0xFF);
                s.sum_ctl = (ctl & (SUM_MASK | PREV_ON)) | (retries << RETRY_SHIFT);
                return Verdict::Allow;
            }
            s.sum_ctl = ctl;
            return Verdict::Waiting;
        }
        s.sum_ctl = ctl;
        Verdict::Latched
    }

    /// A sensor-fault or instantaneous trip at this sample. A block that ends here is
    /// accounted first (its own trip, if any, is the lesser cause).
    #[cold]
    #[inline(never)]
    fn fault(
        &self,
        s: &mut TripState,
        ctl: u32,
        tick: u32,
        reading_counts: u16,
        cause: Cause,
    ) -> Verdict {
        let mut ctl = ctl;
        if tick.wrapping_add(1) & self.block_mask == 0 {
            let _ = self.block(s, ctl);
            ctl &= !SUM_MASK;
        }
        self.trip(s, ctl, tick, reading_counts, cause)
    }

    /// A trip at this sample: the event, and the phase that follows.
    #[inline(never)]
    fn trip(
        &self,
        s: &mut TripState,
        ctl: u32,
        tick: u32,
        reading_counts: u16,
        cause: Cause,
    ) -> Verdict {
        let retry = (ctl >> RETRY_SHIFT) as u8;
        s.history = 0;
        let phase = if cause == Cause::SensorFault || retry >= self.retries {
            LATCHED
        } else {
            s.timer = self.retry_samples;
            WAITING
        };
        s.sum_ctl = (ctl & !PHASE_MASK) | phase;
        Verdict::Trip(TripEvent {
            tick,
            reading_counts,
            retry,
            cause,
        })
    }

    /// [`TripConfig::update`], recording a trip in `log`.
    #[inline]
    pub fn update_logged<const N: usize>(
        &self,
        s: &mut TripState,
        log: &mut TripLog<N>,
        reading_counts: u16,
        switch_on: bool,
    ) -> Verdict {
        let v = self.update(s, reading_counts, switch_on);
        if let Verdict::Trip(e) = v {
            log.record(e);
        }
        v
    }
}
