//! A coil whose armature moves: the electrical state coupled to the armature's position and
//! velocity through the gap inductance, with end stops, bounce and release.
//!
//! # Equations
//!
//! State: flux linkage `λ`, gap `x` (largest at the open stop), velocity `v = dx/dt`.
//!
//! ```text
//!   dλ/dt = a − b·i,             i = i(λ, x)          (Faraday; λ = L(x)·i unsaturated)
//!   m·dv/dt = F_o(x) − F(i, x) − c·v,   dx/dt = v      (while moving)
//!   F_o(x) = P + k·(x_open − x) + F_load               (spring with preload, constant load)
//! ```
//!
//! with the pull force `F(i, x)` of [`GapMagnet`]. Integrating the flux linkage keeps the
//! motional EMF: unsaturated, `L·di/dt = a − b·i − i·(dL/dx)·v`; as the armature closes
//! (`v < 0`, `dL/dx < 0`) the term `−i·(dL/dx)·v` is negative and the current dips.
//!
//! Electrical topologies, each `dλ/dt = a − b·i` like the one-state segments of
//! [`super::coil_drive`], so the two can later share their clamp networks and PWM:
//!
//! | topology | `a` | `b` | ends when |
//! |---|---|---|---|
//! | on | `V_s` | `R_w + R_on` | switch edge |
//! | freewheel diode | `−V_f` | `R_w` | `i = 0` |
//! | idle | 0 (λ = 0) | — | switch edge |
//!
//! (`R_on` lumps the switch, shunt and source resistances.)
//!
//! Mechanical modes: at rest at the open stop, moving, at rest at the closed stop, or jammed
//! (the stuck-armature fault). Events, each located exactly by the integrator's event search
//! (module `rk`):
//!
//! - **lift-off** from the open stop when `F(i, x_open)` exceeds `F_o(x_open)`;
//! - **impact** at the closed stop (`x = x_closed`) or the open stop (`x = x_open`): the
//!   velocity reverses with the coefficient of restitution `e`, `v ← −e·v`; a rebound slower
//!   than `rest_speed_m_s` ends the bounce and the armature rests there (otherwise the bounces
//!   of an inelastic impact would accumulate without end);
//! - **release** from the closed stop when `F(i, x_closed)` falls below `F_o(x_closed)`;
//! - **current zero** of the freewheel diode.
//!
//! # Faults (parameters of the armature)
//!
//! - stuck: the armature does not move from the open stop whatever the force;
//! - sluggish: extra viscous friction (modelled as damping; dry friction is not modelled);
//! - excess load: an extra constant force against closing.
//!
//! # Energy
//!
//! The plant books the supply energy, the winding, switch-path and diode losses, the damping
//! loss and the kinetic energy lost in each impact; with the magnetic stored energy
//! `λ·i − W′`, the kinetic energy and the spring and load potentials they balance (a check in
//! `host-harness/tests/plant_armature.rs`).

pub use super::armature_motion::{
    ArmatureEvent, ArmatureEventKind, ArmatureFaults, ArmatureMode, ArmatureSpec, EndStop, Stroke,
};
use super::armature_motion::{Motion, V_ATOL};
use super::gap_magnet::GapMagnet;
use super::rk::{Rk, StepUnderflow, Stop};
use super::{in_range, positive};
use lenz::Error;
use serde::{Deserialize, Serialize};

/// The drive: supply through a low-side switch, freewheel diode across the coil.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ArmatureDriveSpec {
    /// The armature.
    pub armature: ArmatureSpec,
    /// Winding resistance at its working temperature, Ω.
    pub winding_ohm: f64,
    /// Switch, shunt and source resistance in the on loop, Ω.
    pub on_path_ohm: f64,
    /// Supply voltage, V.
    pub supply_v: f64,
    /// Forward drop of the freewheel diode, V.
    pub freewheel_vf_v: f64,
}

/// The electrical topology.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Topology {
    /// Switch on.
    On,
    /// Switch off, freewheel diode conducting.
    Freewheel,
    /// Switch off, no current.
    Idle,
}

/// Energies since the start, J.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ArmatureEnergies {
    /// Delivered by the supply.
    pub supply_j: f64,
    /// Winding copper loss.
    pub winding_j: f64,
    /// Switch, shunt and source loss.
    pub on_path_j: f64,
    /// Freewheel diode loss.
    pub diode_j: f64,
    /// Viscous damping loss.
    pub damping_j: f64,
    /// Kinetic energy lost in impacts.
    pub impact_j: f64,
}

/// The standalone armature plant (module docs).
#[derive(Debug, Clone)]
pub struct ArmatureDrive {
    spec: ArmatureDriveSpec,
    motion: Motion,
    t: f64,
    lam: f64,
    topo: Topology,
    cmd_on: bool,
    energies: ArmatureEnergies,
    rk: Rk<6>,
    failure: Option<StepUnderflow>,
    lam_scale: f64,
}

impl ArmatureDrive {
    /// Builds the plant at time 0: switch off, no current, armature at rest at the open stop.
    ///
    /// # Errors
    ///
    /// Names the first bad value: the armature's ([`Motion::new`]), `winding_ohm`,
    /// `on_path_ohm`, `supply_v`, `freewheel_vf_v`.
    pub fn new(spec: ArmatureDriveSpec) -> Result<Self, Error> {
        let motion = Motion::new(spec.armature.clone(), true)?;
        in_range(
            "winding_ohm",
            positive("winding_ohm", spec.winding_ohm)?,
            1e-6,
            1e6,
        )?;
        in_range("on_path_ohm", spec.on_path_ohm, 0.0, 1e6)?;
        let vs = in_range("supply_v", spec.supply_v, 0.0, 1e4)?;
        in_range("freewheel_vf_v", spec.freewheel_vf_v, 0.0, 1e3)?;
        // Flux-linkage scale for the tolerances: the steady flux at the closed gap.
        let lam_scale = motion.flux_scale(vs.max(1.0) / spec.winding_ohm);
        let [x_atol, v_atol] = motion.state_atol();
        debug_assert_eq!(v_atol, V_ATOL);
        Ok(Self {
            t: 0.0,
            lam: 0.0,
            topo: Topology::Idle,
            cmd_on: false,
            energies: ArmatureEnergies::default(),
            rk: Rk::new(
                1e-11,
                [1e-15 * lam_scale, x_atol, v_atol, 1e-18, 1e-18, 1e-18],
                1e-7,
            ),
            failure: None,
            lam_scale,
            motion,
            spec,
        })
    }

    /// Time, s.
    #[must_use]
    pub fn time_s(&self) -> f64 {
        self.t
    }

    /// Coil current, A.
    #[must_use]
    pub fn current_a(&self) -> f64 {
        self.motion.current(self.lam, self.motion.gap_m())
    }

    /// Flux linkage, V·s.
    #[must_use]
    pub fn flux_linkage_vs(&self) -> f64 {
        self.lam
    }

    /// Air gap, m.
    #[must_use]
    pub fn gap_m(&self) -> f64 {
        self.motion.gap_m()
    }

    /// Armature velocity (positive opening), m/s.
    #[must_use]
    pub fn velocity_m_s(&self) -> f64 {
        self.motion.velocity_m_s()
    }

    /// Unsaturated inductance at the present gap, H.
    #[must_use]
    pub fn inductance_h(&self) -> f64 {
        self.motion.magnet().inductance_h(self.motion.gap_m())
    }

    /// Where the armature is.
    #[must_use]
    pub fn mode(&self) -> ArmatureMode {
        self.motion.mode()
    }

    /// The electrical topology in force.
    #[must_use]
    pub fn topology(&self) -> Topology {
        self.topo
    }

    /// Events so far.
    #[must_use]
    pub fn events(&self) -> &[ArmatureEvent] {
        self.motion.events()
    }

    /// Actuations so far.
    #[must_use]
    pub fn strokes(&self) -> &[Stroke] {
        self.motion.strokes()
    }

    /// The integrator's step underflow, if one stopped the plant (the state after it is not
    /// a solution).
    #[must_use]
    pub fn failure(&self) -> Option<StepUnderflow> {
        self.failure
    }

    /// Energies booked so far.
    #[must_use]
    pub fn energies(&self) -> ArmatureEnergies {
        ArmatureEnergies {
            damping_j: self.motion.damping_j(),
            impact_j: self.motion.impact_j(),
            ..self.energies
        }
    }

    /// The magnetic model.
    #[must_use]
    pub fn magnet(&self) -> &GapMagnet {
        self.motion.magnet()
    }

    /// Magnetic energy stored, J.
    #[must_use]
    pub fn magnetic_energy_j(&self) -> f64 {
        self.motion.magnetic_energy_j(self.lam)
    }

    /// Kinetic energy of the armature, J.
    #[must_use]
    pub fn kinetic_energy_j(&self) -> f64 {
        self.motion.kinetic_energy_j()
    }

    /// Work stored against the spring and the load since the open stop, J.
    #[must_use]
    pub fn potential_energy_j(&self) -> f64 {
        self.motion.potential_energy_j()
    }

    fn event(&mut self, kind: ArmatureEventKind) {
        self.motion.record(self.t, kind, self.energies.supply_j);
    }

    fn settle(&mut self) {
        self.motion.settle(self.t, self.lam, self.energies.supply_j);
    }

    /// Sets the switch command at the present time.
    pub fn set_switch(&mut self, on: bool) {
        if on == self.cmd_on {
            return;
        }
        self.cmd_on = on;
        if on {
            self.topo = Topology::On;
            self.event(ArmatureEventKind::SwitchOn);
        } else {
            self.event(ArmatureEventKind::SwitchOff);
            self.topo = if self.lam > 0.0 {
                Topology::Freewheel
            } else {
                self.lam = 0.0;
                Topology::Idle
            };
        }
        self.settle();
    }

    /// Sets the supply voltage (sag, surge), V; negative or non-finite values are ignored and
    /// reported as `false`.
    pub fn set_supply_v(&mut self, v: f64) -> bool {
        if v.is_finite() && v >= 0.0 {
            self.spec.supply_v = v;
            true
        } else {
            false
        }
    }

    /// Integrates one segment for at most `span`; returns the time used and the event that
    /// fired (0: current zero, 1 and 2: the mechanical events of the mode).
    fn advance_segment(&mut self, span: f64) -> (f64, Option<usize>) {
        let sp = &self.spec;
        let (a, b) = match self.topo {
            Topology::On => (sp.supply_v, sp.winding_ohm + sp.on_path_ohm),
            Topology::Freewheel => (-sp.freewheel_vf_v, sp.winding_ohm),
            Topology::Idle => (0.0, 0.0),
        };
        let motion = &self.motion;
        let freewheel = self.topo == Topology::Freewheel;
        let f = |y: &[f64; 6]| {
            let i = motion.current(y[0], y[1]);
            let [dx, dv, dd] = motion.rhs(i, y[1], y[2]);
            [a - b * i, dx, dv, i, i * i, dd]
        };
        let g = |y: &[f64; 6]| {
            let e0 = if freewheel { y[0] } else { 1.0 };
            let [e1, e2] = motion.event_fns(motion.current(y[0], y[1]), y[1]);
            [e0, e1, e2]
        };
        let [t1, t2] = motion.event_tol();
        let tol = [1e-14 * self.lam_scale, t1, t2];
        let mut y = [
            self.lam,
            motion.gap_m(),
            motion.velocity_m_s(),
            0.0,
            0.0,
            0.0,
        ];
        let stop = self.rk.integrate(&f, &g, &tol, &mut y, span);
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
        self.lam = y[0];
        self.motion.take_segment(y[1], y[2], y[5]);
        let e = &mut self.energies;
        e.winding_j += self.spec.winding_ohm * y[4];
        match self.topo {
            Topology::On => {
                e.supply_j += self.spec.supply_v * y[3];
                e.on_path_j += self.spec.on_path_ohm * y[4];
            }
            Topology::Freewheel => e.diode_j += self.spec.freewheel_vf_v * y[3],
            Topology::Idle => {}
        }
        (dt, ev)
    }

    /// Advances the plant to `t_s` with the switch as commanded. A time not after the present
    /// one, or not finite, leaves the plant unchanged.
    pub fn advance_to(&mut self, t_s: f64) {
        if !t_s.is_finite() {
            return;
        }
        let mut guard = 0u32;
        while self.t < t_s && guard < 10_000_000 && self.failure.is_none() {
            guard += 1;
            let span = t_s - self.t;
            let frozen = self.topo == Topology::Idle && !self.motion.moving();
            if frozen {
                self.t = t_s;
                break;
            }
            let (dt, ev) = self.advance_segment(span);
            self.t += dt;
            match ev {
                Some(0) => {
                    self.lam = 0.0;
                    self.topo = Topology::Idle;
                    self.event(ArmatureEventKind::CurrentZero);
                    self.settle();
                }
                Some(j) => {
                    let supply = self.energies.supply_j;
                    self.motion.on_event(self.t, j - 1, self.lam, supply);
                }
                None => {}
            }
        }
        self.t = self.t.max(t_s);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::demo::armature::VALVE;
    use crate::plant::GapCurve;

    #[test]
    fn bad_values_are_named() {
        let named = |f: &dyn Fn(&mut ArmatureDriveSpec)| {
            let mut s = VALVE.drive();
            f(&mut s);
            ArmatureDrive::new(s).unwrap_err().param()
        };
        assert_eq!(named(&|s| s.armature.restitution = 1.5), "restitution");
        assert_eq!(named(&|s| s.armature.closed_gap_m = 2e-3), "closed_gap_m");
        assert_eq!(named(&|s| s.armature.mass_kg = f64::NAN), "mass_kg");
        assert_eq!(
            named(&|s| {
                s.armature.spring_preload_n = 0.0;
                s.armature.load_n = 0.0;
            }),
            "spring_preload_n"
        );
        assert_eq!(
            named(&|s| s.armature.gap = GapCurve::Table(vec![(0.0, 0.2), (1e-3, 0.3)])),
            "gap_table"
        );
        assert_eq!(named(&|s| s.supply_v = -1.0), "supply_v");
    }

    #[test]
    fn a_stuck_armature_is_a_plain_coil() {
        // Computed: first-order step response with L at the open gap, i = V/R·(1 − e^(−tR/L)).
        let mut s = VALVE.drive();
        s.armature.faults.stuck = true;
        let mut p = ArmatureDrive::new(s).unwrap();
        p.set_switch(true);
        p.advance_to(5e-3);
        let (r, l) = (32.2f64, 0.12f64);
        let want = 24.0 / r * (1.0 - (-5e-3 * r / l).exp());
        assert!(
            (p.current_a() - want).abs() < 1e-10 * want,
            "{}",
            p.current_a()
        );
        assert_eq!(p.mode(), ArmatureMode::Jammed);
        assert!(p.strokes()[0].lift_off_t_s.is_none());
    }
}
