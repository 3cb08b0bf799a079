//! The envelope between recorded samples: the lowest and highest switch voltage and coil
//! current the plant passed through since the previous recorded point.
//!
//! A sampled waveform shows the plant only at the sampling instants, so during PWM hold the
//! switch looks simply on or off and a spike between two samples is invisible. The loop
//! therefore notes the plant's true values at every instant it stops the plant (each PWM
//! edge, just before and just after switching, each fault and sampling instant, the end of
//! each tick) and adds the extremes the plant itself located inside its integration segments
//! (the ring peaks of an unclamped switch-off, see [`Plant::take_switch_v_window`]). Between
//! those instants a segment of one topology is an exponential, so it is monotonic: the
//! extremes of the segment are at its ends.

use super::{Plant, Probe};

/// Lowest and highest value of one quantity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Range {
    lo: f64,
    hi: f64,
}

impl Range {
    const EMPTY: Range = Range {
        lo: f64::INFINITY,
        hi: f64::NEG_INFINITY,
    };

    fn note(&mut self, lo: f64, hi: f64) {
        if lo.is_finite() {
            self.lo = self.lo.min(lo);
        }
        if hi.is_finite() {
            self.hi = self.hi.max(hi);
        }
    }

    /// `(lo, hi)`, NaN for a range that saw nothing.
    fn get(self) -> (f64, f64) {
        if self.lo <= self.hi {
            (self.lo, self.hi)
        } else {
            (f64::NAN, f64::NAN)
        }
    }
}

/// The envelope of switch voltage and coil current since the last recorded point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Envelope {
    switch_v: Range,
    current_a: Range,
}

impl Envelope {
    pub(super) const fn new() -> Self {
        Envelope {
            switch_v: Range::EMPTY,
            current_a: Range::EMPTY,
        }
    }

    /// Notes the plant's values now and the extremes it located since the last call.
    pub(super) fn note<P: Plant>(&mut self, plant: &mut P) {
        let Probe {
            current_a,
            switch_v,
            ..
        } = plant.probe();
        self.switch_v.note(switch_v, switch_v);
        self.current_a.note(current_a, current_a);
        if let Some((lo, hi)) = plant.take_switch_v_window() {
            self.switch_v.note(lo, hi);
        }
    }

    /// `(switch_v_min, switch_v_max, current_min_a, current_max_a)`, and a new window.
    pub(super) fn take(&mut self) -> (f64, f64, f64, f64) {
        let (v0, v1) = self.switch_v.get();
        let (i0, i1) = self.current_a.get();
        *self = Envelope::new();
        (v0, v1, i0, i1)
    }
}

#[cfg(test)]
mod tests {
    use super::Range;

    #[test]
    fn a_range_keeps_its_extremes_and_ignores_non_finite_values() {
        let mut r = Range::EMPTY;
        assert!(r.get().0.is_nan());
        r.note(2.0, 2.0);
        r.note(-1.0, 5.0);
        r.note(f64::NAN, f64::INFINITY);
        assert_eq!(r.get(), (-1.0, 5.0));
    }
}
