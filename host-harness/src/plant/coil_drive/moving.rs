//! The coil drive with a moving armature: every topology of the coil drive (every clamp
//! network, the switch, its breakdown, the supply, the shunt, PWM, heating) with the armature's
//! position and velocity ([`Motion`]) coupled to the flux linkage through the gap inductance.
//!
//! # Equations
//!
//! The one-state topologies keep their `dλ/dt = a − b·i` of the module table, the unclamped
//! ringing its two states; only the current now depends on the gap, `i = i(λ, x)`
//! ([`super::super::GapMagnet`]), so the motional EMF is in the flux linkage's equation. Beside
//! the electrical states the adaptive integrator carries `x`, `v` and the damping loss
//! ([`Motion::rhs`]), and the armature's two event functions join the segment's own
//! (current zero, switch clamp end, body diode, the watched current level). The armature's
//! gap curve replaces the coil's magnetisation curve; the winding resistance, its
//! temperature and the rest of the drive are the coil drive's.
//!
//! Every segment runs through the integrator (relative tolerance 1e-11), also at rest: the
//! lift-off and release are events on the current at a fixed gap.
//!
//! Faults of the coil act on the armature too: shorted turns scale the gap curve, a shorted
//! coil no longer pulls (the armature returns under its spring), an open coil drops the
//! current and so the armature.

use super::{CoilDrive, CoilDriveSpec, Ended};
use crate::plant::armature_motion::{ArmatureEventKind, ArmatureFaults, ArmatureSpec, Motion};
use crate::plant::inductance::Magnetisation;
use crate::plant::rk::{Rk, StepUnderflow, Stop};
use lenz::Error;

/// Current at flux linkage `lam` and gap `x`: through the gap magnet while the coil pulls,
/// else through the coil's own (residual) magnetisation.
fn current(motion: &Motion, mag: &Magnetisation, lam: f64, x: f64) -> f64 {
    if motion.coupled() {
        motion.current(lam, x)
    } else {
        mag.current(lam)
    }
}

impl CoilDrive {
    /// Builds the plant of a coil with a moving armature, at time 0, switch off, no current,
    /// armature at rest at the open stop (module `moving`).
    ///
    /// # Errors
    ///
    /// Those of [`CoilDrive::new`], then the armature's ([`Motion::new`]).
    pub fn with_armature(spec: CoilDriveSpec, armature: ArmatureSpec) -> Result<Self, Error> {
        let mut p = Self::new(spec)?;
        let motion = Motion::new(armature, false)?;
        let steady_a = p.supply_v.max(1.0) / p.spec.coil.r20_ohm;
        let lam_scale = motion.flux_scale(steady_a);
        let [xa, va] = motion.state_atol();
        p.rk_arm = Rk::new(
            1e-11,
            [1e-15 * lam_scale, 1e-18, 1e-18, xa, va, 1e-18],
            1e-7,
        );
        p.rk_arm_ring = Rk::new(
            1e-11,
            [1e-15 * lam_scale, 1e-9, 1e-18, 1e-18, xa, va, 1e-18],
            1e-9,
        );
        p.arm = Some(motion);
        Ok(p)
    }

    /// The moving armature, if the coil has one.
    #[must_use]
    pub fn armature(&self) -> Option<&Motion> {
        self.arm.as_ref()
    }

    /// Sets the armature's faults from now on (stuck, sluggish, excess load); `false` when the
    /// coil has no armature or a value is out of range.
    pub fn set_armature_faults(&mut self, faults: ArmatureFaults) -> bool {
        let (t, lam, supply) = (self.t, self.lam, self.energies.supply_j);
        match &mut self.arm {
            Some(m) => m.set_faults(t, faults, lam, supply),
            None => false,
        }
    }

    pub(super) fn arm_moving(&self) -> bool {
        self.arm.as_ref().is_some_and(Motion::moving)
    }

    /// Lets a resting armature leave its stop if the forces now say so.
    pub(super) fn arm_settle(&mut self) {
        let (t, lam, supply) = (self.t, self.lam, self.energies.supply_j);
        if let Some(m) = &mut self.arm {
            m.settle(t, lam, supply);
        }
    }

    /// A switch edge: the armature's strokes start at a switch-on from the open stop.
    pub(super) fn arm_switched(&mut self, on: bool) {
        let (t, supply) = (self.t, self.energies.supply_j);
        if let Some(m) = &mut self.arm {
            let kind = if on {
                ArmatureEventKind::SwitchOn
            } else {
                ArmatureEventKind::SwitchOff
            };
            m.record(t, kind, supply);
        }
        self.arm_settle();
    }

    /// The armature's event `j` fired at the present time.
    pub(super) fn arm_event(&mut self, j: usize) {
        let (t, lam, supply) = (self.t, self.lam, self.energies.supply_j);
        if let Some(m) = &mut self.arm {
            m.on_event(t, j, lam, supply);
        }
    }

    /// A one-state segment with the armature, by the integrator: states
    /// `[λ, Q, S, x, v, damping loss]`, events `[topology, watch, armature 0, armature 1]`.
    pub(super) fn advance1_arm(&mut self, span: f64) -> (f64, Ended) {
        let s = self.seg1();
        let watch = self.watch;
        let i_tol = 1e-12 * self.peak_current_a.max(1e-3);
        let Some(motion) = self.arm.as_ref() else {
            return (span, Ended::Span);
        };
        let mag = &self.mag;
        let (ix, dir) = s.event.unwrap_or((0.0, 0.0));
        let f = |y: &[f64; 6]| {
            let i = current(motion, mag, y[0], y[3]);
            let [dx, dv, dd] = motion.rhs(i, y[3], y[4]);
            [s.a - s.b * i, i, i * i, dx, dv, dd]
        };
        let g = |y: &[f64; 6]| {
            let i = current(motion, mag, y[0], y[3]);
            let e = if dir == 0.0 { 1.0 } else { dir * (i - ix) };
            let [e1, e2] = motion.event_fns(i, y[3]);
            [e, watch.map_or(1.0, |w| i - w), e1, e2]
        };
        let [m0, m1] = motion.event_tol();
        let tol = [i_tol, i_tol, m0, m1];
        let mut y = [
            self.lam,
            0.0,
            0.0,
            motion.gap_m(),
            motion.velocity_m_s(),
            0.0,
        ];
        let stop = self.rk_arm.integrate(&f, &g, &tol, &mut y, span);
        let (dt, ended) = match stop {
            Stop::End => (span, Ended::Span),
            Stop::Event { index: 0, dt } => (dt, Ended::Topology),
            Stop::Event { index: 1, dt } => (dt, Ended::Watch),
            Stop::Event { index, dt } => (dt, Ended::Armature(index - 2)),
            Stop::Stalled { dt, h } => {
                self.failure.get_or_insert(StepUnderflow {
                    t_s: self.t + dt,
                    step_s: h,
                });
                (span, Ended::Span)
            }
        };
        if let Some(m) = &mut self.arm {
            m.take_segment(y[3], y[4], y[5]);
        }
        self.lam = match (ended, watch) {
            (Ended::Topology, _) => self.flux_of(ix),
            (Ended::Watch, Some(w)) => self.flux_of(w),
            _ => y[0],
        };
        self.book1(&s, dt, y[1], y[2]);
        (dt, ended)
    }

    /// The unclamped ringing with the armature, by the integrator: states
    /// `[λ, v_C, Q, S, x, v, damping loss]`, events `[switch limit, body diode, current zero,
    /// watch, armature 0, armature 1]` (numbered as in `advance_ring`, the armature's as 4
    /// and 5).
    pub(super) fn advance_ring_arm(&mut self, span: f64, c_f: f64) -> (f64, Option<usize>) {
        let (rsrc, rsh) = (self.spec.source_resistance_ohm, self.spec.shunt_ohm);
        let rl = rsrc + self.r_w + rsh;
        let vs = self.supply_v;
        let (v_lim, _) = self.v_lim();
        let i0 = self.current_a();
        let v0 = self.v_c;
        let watch = self.watch;
        let sgn = if i0 != 0.0 {
            i0.signum()
        } else {
            (vs - v0).signum()
        };
        let i_tol = 1e-12 * self.peak_current_a.max(1e-3);
        let Some(motion) = self.arm.as_ref() else {
            return (span, None);
        };
        let mag = &self.mag;
        let f = |y: &[f64; 7]| {
            let i = current(motion, mag, y[0], y[4]);
            let [dx, dv, dd] = motion.rhs(i, y[4], y[5]);
            [vs - y[1] - rl * i, i / c_f, i, i * i, dx, dv, dd]
        };
        let g = |y: &[f64; 7]| {
            let i = current(motion, mag, y[0], y[4]);
            let [e1, e2] = motion.event_fns(i, y[4]);
            [
                v_lim - y[1],
                if i < 0.0 { y[1] } else { 1.0 },
                sgn * i,
                watch.map_or(1.0, |w| i - w),
                e1,
                e2,
            ]
        };
        let [m0, m1] = motion.event_tol();
        let tol = [1e-9, 1e-12 * v_lim, i_tol, i_tol, m0, m1];
        let mut y = [
            self.lam,
            v0,
            0.0,
            0.0,
            motion.gap_m(),
            motion.velocity_m_s(),
            0.0,
        ];
        let stop = self.rk_arm_ring.integrate(&f, &g, &tol, &mut y, span);
        let (dt, ev) = match stop {
            Stop::End => (span, None),
            Stop::Event { index, dt } => (dt, Some(index)),
            Stop::Stalled { dt, h } => {
                self.failure.get_or_insert(StepUnderflow {
                    t_s: self.t + dt,
                    step_s: h,
                });
                (span, None)
            }
        };
        if let Some(m) = &mut self.arm {
            m.take_segment(y[4], y[5], y[6]);
        }
        self.lam = match (ev, watch) {
            (Some(2), _) => 0.0,
            (Some(3), Some(w)) => self.flux_of(w),
            _ => y[0],
        };
        self.v_c = match ev {
            Some(0) => v_lim,
            Some(1) => 0.0,
            _ => y[1],
        };
        let (q, sq) = (y[2], y[3]);
        self.charge_c += q;
        let e = &mut self.energies;
        e.winding_j += self.r_w * sq;
        e.shunt_j += rsh * sq;
        e.source_j += rsrc * sq;
        e.supply_j += vs * q;
        (dt, ev)
    }
}
