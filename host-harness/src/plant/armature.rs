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

use super::gap_magnet::{GapCurve, GapMagnet};
use super::rk::{Rk, StepUnderflow, Stop};
use super::{in_range, non_negative, positive};
use lenz::Error;
use serde::{Deserialize, Serialize};

/// Faults of the armature, as parameters.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ArmatureFaults {
    /// The armature does not move from the open stop.
    pub stuck: bool,
    /// Extra viscous friction (a sluggish armature), N·s/m.
    pub extra_damping_n_s_per_m: f64,
    /// Extra constant force against closing, N.
    pub extra_load_n: f64,
}

/// The armature: magnetic circuit and mechanics.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ArmatureSpec {
    /// Inductance versus gap.
    pub gap: GapCurve,
    /// Saturation flux linkage, V·s (`None`: unsaturated).
    pub saturation_flux_vs: Option<f64>,
    /// Moving mass, kg.
    pub mass_kg: f64,
    /// Gap at the open stop, m.
    pub open_gap_m: f64,
    /// Gap at the closed stop (residual gap), m.
    pub closed_gap_m: f64,
    /// Spring force at the open stop, pushing open, N.
    pub spring_preload_n: f64,
    /// Spring rate, N/m.
    pub spring_rate_n_per_m: f64,
    /// Viscous damping, N·s/m.
    pub damping_n_s_per_m: f64,
    /// Constant load pushing open, N.
    pub load_n: f64,
    /// Coefficient of restitution at both stops, `0 ..= 1`.
    pub restitution: f64,
    /// A rebound slower than this ends the bounce, m/s.
    pub rest_speed_m_s: f64,
    /// Faults.
    pub faults: ArmatureFaults,
}

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

/// Where the armature is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum ArmatureMode {
    /// At rest at the open stop.
    RestOpen,
    /// Moving between the stops.
    Moving,
    /// At rest at the closed stop (seated).
    RestClosed,
    /// Stuck (fault): does not move.
    Jammed,
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

/// A stop of the armature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum EndStop {
    /// The open stop.
    Open,
    /// The closed stop.
    Closed,
}

/// What happened.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum ArmatureEventKind {
    /// The switch closed.
    SwitchOn,
    /// The switch opened.
    SwitchOff,
    /// The freewheel current reached zero.
    CurrentZero,
    /// The armature left a stop.
    LiftOff(EndStop),
    /// The armature hit a stop at this speed, m/s.
    Impact(EndStop, f64),
    /// The armature came to rest at a stop.
    Rest(EndStop),
}

/// An event with its time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ArmatureEvent {
    /// Time, s.
    pub t_s: f64,
    /// What happened.
    pub kind: ArmatureEventKind,
}

/// One actuation: from a switch-on with the armature open to its return to the open stop.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Stroke {
    /// Switch-on (the command), s.
    pub on_t_s: f64,
    /// The armature left the open stop, s.
    pub lift_off_t_s: Option<f64>,
    /// First impact at the closed stop, s.
    pub first_impact_t_s: Option<f64>,
    /// Speed of the first impact at the closed stop, m/s.
    pub impact_speed_m_s: Option<f64>,
    /// Impacts at the closed stop until it rested there.
    pub closed_impacts: u32,
    /// Final seating (rest at the closed stop), s.
    pub seated_t_s: Option<f64>,
    /// Energy from the supply from switch-on to seating, J.
    pub seat_energy_j: Option<f64>,
    /// The last switch-off before the release, s.
    pub off_t_s: Option<f64>,
    /// Release: the armature left the closed stop, s.
    pub release_t_s: Option<f64>,
    /// The armature first reached the open stop after the release, s.
    pub opened_t_s: Option<f64>,
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

/// Armature velocity scale for the integrator's absolute tolerance, m/s.
const V_ATOL: f64 = 1e-12;

/// The standalone armature plant (module docs).
#[derive(Debug, Clone)]
pub struct ArmatureDrive {
    spec: ArmatureDriveSpec,
    mag: GapMagnet,
    t: f64,
    lam: f64,
    x: f64,
    v: f64,
    mode: ArmatureMode,
    topo: Topology,
    cmd_on: bool,
    energies: ArmatureEnergies,
    events: Vec<ArmatureEvent>,
    strokes: Vec<Stroke>,
    rk: Rk<6>,
    failure: Option<StepUnderflow>,
    lam_scale: f64,
    /// Supply energy at the switch-on that began the present stroke, J.
    stroke_supply_j: f64,
}

/// The right-hand side's constants for one segment.
#[derive(Debug, Clone, Copy)]
struct Seg {
    a: f64,
    b: f64,
    moving: bool,
}

impl ArmatureDrive {
    /// Builds the plant at time 0: switch off, no current, armature at rest at the open stop.
    ///
    /// # Errors
    ///
    /// Names the first bad value: the gap curve and saturation ([`GapCurve::validate`]),
    /// `mass_kg`, the gaps (`open_gap_m` within the curve, `closed_gap_m` below it), spring,
    /// damping and load values, `restitution` outside `0 ..= 1`, `rest_speed_m_s`, the fault
    /// values, `winding_ohm`, `on_path_ohm`, `supply_v`, `freewheel_vf_v`; a spring and load
    /// that do not hold the armature open (`spring_preload_n`).
    pub fn new(spec: ArmatureDriveSpec) -> Result<Self, Error> {
        let a = &spec.armature;
        let mag = a.gap.validate(a.saturation_flux_vs)?;
        in_range("mass_kg", positive("mass_kg", a.mass_kg)?, 1e-7, 1e3)?;
        let (lo, hi) = mag.gap_range_m();
        let open = in_range("open_gap_m", positive("open_gap_m", a.open_gap_m)?, lo, hi)?;
        in_range("closed_gap_m", a.closed_gap_m, lo, open)?;
        if a.closed_gap_m >= open {
            return Err(Error::OutOfRange {
                param: "closed_gap_m",
                value: a.closed_gap_m as f32,
                min: lo as f32,
                max: open as f32,
            });
        }
        for (name, v) in [
            ("spring_preload_n", a.spring_preload_n),
            ("spring_rate_n_per_m", a.spring_rate_n_per_m),
            ("damping_n_s_per_m", a.damping_n_s_per_m),
            ("load_n", a.load_n),
            ("extra_damping_n_s_per_m", a.faults.extra_damping_n_s_per_m),
            ("extra_load_n", a.faults.extra_load_n),
        ] {
            in_range(name, non_negative(name, v)?, 0.0, 1e8)?;
        }
        if a.spring_preload_n + a.load_n + a.faults.extra_load_n <= 0.0 {
            return Err(Error::NotPositive {
                param: "spring_preload_n",
            });
        }
        in_range("restitution", a.restitution, 0.0, 1.0)?;
        in_range(
            "rest_speed_m_s",
            positive("rest_speed_m_s", a.rest_speed_m_s)?,
            1e-9,
            1e3,
        )?;
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
        let l_max = mag.inductance_h(a.closed_gap_m);
        let lam_scale = (l_max * vs.max(1.0) / spec.winding_ohm)
            .min(a.saturation_flux_vs.unwrap_or(f64::INFINITY));
        let mode = if a.faults.stuck {
            ArmatureMode::Jammed
        } else {
            ArmatureMode::RestOpen
        };
        Ok(Self {
            x: open,
            v: 0.0,
            t: 0.0,
            lam: 0.0,
            mode,
            topo: Topology::Idle,
            cmd_on: false,
            energies: ArmatureEnergies::default(),
            events: Vec::with_capacity(64),
            strokes: Vec::new(),
            rk: Rk::new(
                1e-11,
                [1e-15 * lam_scale, 1e-16 * open, V_ATOL, 1e-18, 1e-18, 1e-18],
                1e-7,
            ),
            failure: None,
            lam_scale,
            stroke_supply_j: 0.0,
            mag,
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
        self.mag.current(self.lam, self.x)
    }

    /// Flux linkage, V·s.
    #[must_use]
    pub fn flux_linkage_vs(&self) -> f64 {
        self.lam
    }

    /// Air gap, m.
    #[must_use]
    pub fn gap_m(&self) -> f64 {
        self.x
    }

    /// Armature velocity (positive opening), m/s.
    #[must_use]
    pub fn velocity_m_s(&self) -> f64 {
        self.v
    }

    /// Unsaturated inductance at the present gap, H.
    #[must_use]
    pub fn inductance_h(&self) -> f64 {
        self.mag.inductance_h(self.x)
    }

    /// Where the armature is.
    #[must_use]
    pub fn mode(&self) -> ArmatureMode {
        self.mode
    }

    /// The electrical topology in force.
    #[must_use]
    pub fn topology(&self) -> Topology {
        self.topo
    }

    /// Events so far.
    #[must_use]
    pub fn events(&self) -> &[ArmatureEvent] {
        &self.events
    }

    /// Actuations so far.
    #[must_use]
    pub fn strokes(&self) -> &[Stroke] {
        &self.strokes
    }

    /// The integrator's step underflow, if one stopped the plant (the state after it is not
    /// a solution).
    #[must_use]
    pub fn failure(&self) -> Option<StepUnderflow> {
        self.failure
    }

    /// Energies booked so far.
    #[must_use]
    pub fn energies(&self) -> &ArmatureEnergies {
        &self.energies
    }

    /// The magnetic model.
    #[must_use]
    pub fn magnet(&self) -> &GapMagnet {
        &self.mag
    }

    /// Magnetic energy stored, J.
    #[must_use]
    pub fn magnetic_energy_j(&self) -> f64 {
        self.mag.stored_j(self.lam, self.x)
    }

    /// Kinetic energy of the armature, J.
    #[must_use]
    pub fn kinetic_energy_j(&self) -> f64 {
        0.5 * self.spec.armature.mass_kg * self.v * self.v
    }

    /// Work stored against the spring and the load since the open stop, J.
    #[must_use]
    pub fn potential_energy_j(&self) -> f64 {
        let a = &self.spec.armature;
        let d = a.open_gap_m - self.x;
        (a.spring_preload_n + a.load_n + a.faults.extra_load_n) * d
            + 0.5 * a.spring_rate_n_per_m * d * d
    }

    /// Spring plus load force pushing open at gap `x`, N.
    fn opening_n(&self, x: f64) -> f64 {
        let a = &self.spec.armature;
        a.spring_preload_n
            + a.spring_rate_n_per_m * (a.open_gap_m - x)
            + a.load_n
            + a.faults.extra_load_n
    }

    fn damping(&self) -> f64 {
        let a = &self.spec.armature;
        a.damping_n_s_per_m + a.faults.extra_damping_n_s_per_m
    }

    fn event(&mut self, kind: ArmatureEventKind) {
        self.events.push(ArmatureEvent { t_s: self.t, kind });
        let t = self.t;
        let supply = self.energies.supply_j;
        match kind {
            ArmatureEventKind::SwitchOn => {
                if matches!(self.mode, ArmatureMode::RestOpen | ArmatureMode::Jammed) {
                    self.stroke_supply_j = supply;
                    self.strokes.push(Stroke {
                        on_t_s: t,
                        ..Stroke::default()
                    });
                }
            }
            _ => {
                let Some(s) = self.strokes.last_mut() else {
                    return;
                };
                match kind {
                    ArmatureEventKind::SwitchOff if s.release_t_s.is_none() => {
                        s.off_t_s = Some(t);
                    }
                    ArmatureEventKind::LiftOff(EndStop::Open) if s.lift_off_t_s.is_none() => {
                        s.lift_off_t_s = Some(t);
                    }
                    ArmatureEventKind::Impact(EndStop::Closed, speed) if s.seated_t_s.is_none() => {
                        if s.first_impact_t_s.is_none() {
                            s.first_impact_t_s = Some(t);
                            s.impact_speed_m_s = Some(speed);
                        }
                        s.closed_impacts += 1;
                    }
                    ArmatureEventKind::Rest(EndStop::Closed) if s.seated_t_s.is_none() => {
                        s.seated_t_s = Some(t);
                        s.seat_energy_j = Some(supply - self.stroke_supply_j);
                    }
                    ArmatureEventKind::LiftOff(EndStop::Closed)
                        if s.seated_t_s.is_some() && s.release_t_s.is_none() =>
                    {
                        s.release_t_s = Some(t);
                    }
                    ArmatureEventKind::Impact(EndStop::Open, _)
                    | ArmatureEventKind::Rest(EndStop::Open)
                        if s.release_t_s.is_some() && s.opened_t_s.is_none() =>
                    {
                        s.opened_t_s = Some(t);
                    }
                    _ => {}
                }
            }
        }
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

    /// Makes a resting armature leave its stop when the forces no longer hold it there.
    fn settle(&mut self) {
        let i = self.current_a();
        match self.mode {
            ArmatureMode::RestOpen => {
                let open = self.spec.armature.open_gap_m;
                if self.mag.pull_n(i, open) > self.opening_n(open) {
                    self.mode = ArmatureMode::Moving;
                    self.v = 0.0;
                    self.event(ArmatureEventKind::LiftOff(EndStop::Open));
                }
            }
            ArmatureMode::RestClosed => {
                let closed = self.spec.armature.closed_gap_m;
                if self.mag.pull_n(i, closed) < self.opening_n(closed) {
                    self.mode = ArmatureMode::Moving;
                    self.v = 0.0;
                    self.event(ArmatureEventKind::LiftOff(EndStop::Closed));
                }
            }
            _ => {}
        }
    }

    fn seg(&self) -> Seg {
        let sp = &self.spec;
        let (a, b) = match self.topo {
            Topology::On => (sp.supply_v, sp.winding_ohm + sp.on_path_ohm),
            Topology::Freewheel => (-sp.freewheel_vf_v, sp.winding_ohm),
            Topology::Idle => (0.0, 0.0),
        };
        Seg {
            a,
            b,
            moving: self.mode == ArmatureMode::Moving,
        }
    }

    /// Integrates one segment for at most `span`; returns the time used and the event that
    /// fired (0: current zero, 1 and 2: the mechanical events of the mode).
    fn advance_segment(&mut self, span: f64) -> (f64, Option<usize>) {
        let seg = self.seg();
        let mag = &self.mag;
        let a = &self.spec.armature;
        let (m, c) = (a.mass_kg, self.damping());
        let (open, closed) = (a.open_gap_m, a.closed_gap_m);
        let opening = |x: f64| self.opening_n(x);
        let mode = self.mode;
        let freewheel = self.topo == Topology::Freewheel;
        let f = |y: &[f64; 6]| {
            let i = mag.current(y[0], y[1]);
            let (dx, dv) = if seg.moving {
                (y[2], (opening(y[1]) - mag.pull_n(i, y[1]) - c * y[2]) / m)
            } else {
                (0.0, 0.0)
            };
            [seg.a - seg.b * i, dx, dv, i, i * i, c * y[2] * y[2]]
        };
        let g = |y: &[f64; 6]| {
            let e0 = if freewheel { y[0] } else { 1.0 };
            let (e1, e2) = match mode {
                ArmatureMode::Moving => (y[1] - closed, open - y[1]),
                ArmatureMode::RestOpen => {
                    let i = mag.current(y[0], open);
                    (opening(open) - mag.pull_n(i, open), 1.0)
                }
                ArmatureMode::RestClosed => {
                    let i = mag.current(y[0], closed);
                    (mag.pull_n(i, closed) - opening(closed), 1.0)
                }
                ArmatureMode::Jammed => (1.0, 1.0),
            };
            [e0, e1, e2]
        };
        let tol = [1e-14 * self.lam_scale, 1e-15 * open, 1e-15 * open];
        let tol = match mode {
            ArmatureMode::RestOpen | ArmatureMode::RestClosed => [tol[0], 1e-12, 1.0],
            _ => tol,
        };
        let mut y = [self.lam, self.x, self.v, 0.0, 0.0, 0.0];
        let mut rk = self.rk;
        let stop = rk.integrate(&f, &g, &tol, &mut y, span);
        self.rk = rk;
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
        if seg.moving {
            self.x = y[1];
            self.v = y[2];
        }
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
        e.damping_j += y[5];
        (dt, ev)
    }

    /// An impact at `stop` at the present state.
    fn impact(&mut self, stop: EndStop) {
        let a = &self.spec.armature;
        let x_stop = match stop {
            EndStop::Open => a.open_gap_m,
            EndStop::Closed => a.closed_gap_m,
        };
        let (e, rest_speed, m) = (a.restitution, a.rest_speed_m_s, a.mass_kg);
        let v_in = self.v;
        // The current is continuous through the jump of x only if λ is kept and x is exact.
        self.x = x_stop;
        self.event(ArmatureEventKind::Impact(stop, v_in.abs()));
        let v_out = -e * v_in;
        self.energies.impact_j += 0.5 * m * (v_in * v_in - v_out * v_out);
        if v_out.abs() < rest_speed {
            self.energies.impact_j += 0.5 * m * v_out * v_out;
            self.v = 0.0;
            self.mode = match stop {
                EndStop::Open => ArmatureMode::RestOpen,
                EndStop::Closed => ArmatureMode::RestClosed,
            };
            self.event(ArmatureEventKind::Rest(stop));
            self.settle();
        } else {
            self.v = v_out;
        }
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
            let frozen = self.topo == Topology::Idle && self.mode != ArmatureMode::Moving;
            if frozen {
                self.t = t_s;
                break;
            }
            let (dt, ev) = self.advance_segment(span);
            self.t += dt;
            match (ev, self.mode) {
                (Some(0), _) => {
                    self.lam = 0.0;
                    self.topo = Topology::Idle;
                    self.event(ArmatureEventKind::CurrentZero);
                    self.settle();
                }
                (Some(1), ArmatureMode::Moving) => self.impact(EndStop::Closed),
                (Some(2), ArmatureMode::Moving) => self.impact(EndStop::Open),
                (Some(1), ArmatureMode::RestOpen) => {
                    self.mode = ArmatureMode::Moving;
                    self.v = 0.0;
                    self.event(ArmatureEventKind::LiftOff(EndStop::Open));
                }
                (Some(1), ArmatureMode::RestClosed) => {
                    self.mode = ArmatureMode::Moving;
                    self.v = 0.0;
                    self.event(ArmatureEventKind::LiftOff(EndStop::Closed));
                }
                _ => {}
            }
        }
        self.t = self.t.max(t_s);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::demo::armature::VALVE;

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
