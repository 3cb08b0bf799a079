//! The coil properties of a run: pull-in time, hold current, winding temperature and the
//! winding's mean power while held.
//!
//! - **Pull-in time**: from each on command to the coil current first reaching the pull-in
//!   current; the longest over the run. An on period that ends (or a run that ends) before the
//!   current got there counts as infinite: it never pulled in.
//! - **Hold current**: the lowest coil current after the pull-in while the demand is on, over
//!   every plant advance (every PWM edge and sampling instant, so the PWM ripple's valleys are
//!   seen at the edges where they occur). A run that never pulled in holds nothing: 0 A.
//! - **Coil temperature**: the winding's highest temperature (the plant's thermal model; a coil
//!   without one stays at its starting temperature).
//! - **Coil power**: the winding's copper loss integrated by the plant over every hold phase,
//!   divided by the time held: the mean electrical power the winding turns into heat while
//!   held. A hold phase belongs to one on period (demand on) that has pulled in; it opens at
//!   the start of the first control tick after the pull-in whose actuation is not full on
//!   (PWM below duty 1, or off, while the demand is still on): the moment the controller drops
//!   from its pull-in drive to its hold drive. It closes with the on period (demand off, or
//!   the run's end). A controller that stays full on for the whole on period after the
//!   pull-in holds at full drive: its hold phase is the on period from the pull-in on. A run
//!   with no hold phase has no coil power (the property then fails as infinite).

use super::{Plant, PullIn};

/// Running state of the coil properties.
#[derive(Debug, Clone, Default)]
pub(super) struct CoilWatch {
    pull_in: Option<PullIn>,
    /// Start of the present on period, s.
    on_from: Option<f64>,
    /// The present on period has pulled in.
    pulled_in: bool,
    /// Longest pull-in so far, s.
    pull_in_worst: f64,
    /// Lowest current while held, A.
    hold_min: Option<f64>,
    /// Pull-in of the present on period: time, s, and winding loss so far, J (where its hold
    /// phase starts if the drive never leaves full on).
    pulled_in_at: Option<(f64, f64)>,
    /// Start of the present hold drive (the first actuation after the pull-in that is not
    /// full on): time, s, and winding loss so far, J.
    hold_from: Option<(f64, f64)>,
    /// Time held and winding loss while held, s and J.
    held: (f64, f64),
    /// Highest winding temperature, °C.
    temp_max: Option<f64>,
}

/// The coil properties' values at the end of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct CoilValues {
    pub pull_in_s: f64,
    pub hold_min_a: f64,
    pub temp_max_c: Option<f64>,
    pub power_w: Option<f64>,
}

impl CoilWatch {
    pub(super) fn new(pull_in: Option<PullIn>) -> CoilWatch {
        CoilWatch {
            pull_in,
            ..CoilWatch::default()
        }
    }

    /// The demand changed at `t_s`.
    pub(super) fn demand<P: Plant>(&mut self, plant: &P, t_s: f64, on: bool) {
        if on {
            self.on_from = Some(t_s);
            self.pulled_in = false;
        } else {
            self.end_on_period(plant, t_s);
        }
    }

    fn end_on_period<P: Plant>(&mut self, plant: &P, t_s: f64) {
        if self.on_from.take().is_some() && !self.pulled_in {
            self.pull_in_worst = f64::INFINITY;
        }
        let from = self.hold_from.take().or(self.pulled_in_at);
        self.pulled_in_at = None;
        if let (Some((t0, j0)), Some(j1)) = (from, plant.winding_loss_j()) {
            self.held.0 += t_s - t0;
            self.held.1 += j1 - j0;
        }
    }

    /// The controller's actuation for the tick starting at `t_s` (the plant is at `t_s`):
    /// `full_on` when it drives the switch on for the whole tick. The first one after the
    /// pull-in that is not full on opens the hold phase.
    pub(super) fn actuation<P: Plant>(&mut self, plant: &P, t_s: f64, full_on: bool) {
        if full_on || !self.pulled_in || self.on_from.is_none() || self.hold_from.is_some() {
            return;
        }
        self.hold_from = plant.winding_loss_j().map(|j| (t_s, j));
    }

    /// The plant has advanced to `t_s`.
    pub(super) fn observe<P: Plant>(&mut self, plant: &P, t_s: f64) {
        if let Some(t) = plant.winding_temp_c() {
            self.temp_max = Some(self.temp_max.map_or(t, |m| m.max(t)));
        }
        let Some(pi) = self.pull_in else { return };
        let Some(from) = self.on_from else { return };
        let i = plant.probe().current_a;
        if !self.pulled_in && i >= pi.current_a {
            self.pulled_in = true;
            self.pull_in_worst = self.pull_in_worst.max(t_s - from);
            self.pulled_in_at = plant.winding_loss_j().map(|j| (t_s, j));
        }
        if self.pulled_in {
            self.hold_min = Some(self.hold_min.map_or(i, |m| m.min(i)));
        }
    }

    /// The values at the end of the run (`t_s`).
    pub(super) fn finish<P: Plant>(&mut self, plant: &P, t_s: f64) -> CoilValues {
        self.end_on_period(plant, t_s);
        CoilValues {
            pull_in_s: self.pull_in_worst,
            hold_min_a: self.hold_min.unwrap_or(0.0),
            temp_max_c: self.temp_max,
            power_w: (self.held.0 > 0.0).then(|| self.held.1 / self.held.0),
        }
    }
}
