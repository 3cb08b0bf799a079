//! The moving armature's mechanics and events, shared by the standalone armature plant
//! ([`super::armature`]) and the closed loop's coil drive ([`super::coil_drive`]): position and
//! velocity, spring with preload, damping, load, end stops with restitution, lift-off, impact,
//! rest and release, the strokes (actuations) they make up, and the armature's faults.
//!
//! # Equations
//!
//! With the pull force `F(i, x)` of the gap magnet ([`GapMagnet`]), while moving:
//!
//! ```text
//!   m·dv/dt = F_o(x) − F(i, x) − c·v,   dx/dt = v,
//!   F_o(x) = P + k·(x_open − x) + F_load          (spring with preload, constant load)
//! ```
//!
//! The electrical side (flux linkage `λ`, current `i = i(λ, x)`) belongs to the plant that
//! owns the motion; it passes `λ` in and integrates `dx/dt`, `dv/dt` and the damping loss
//! `c·v²` beside its own states ([`Motion::rhs`]), with the two event functions of
//! [`Motion::event_fns`] (positive while the mode holds):
//!
//! | mode | event 0 | event 1 |
//! |---|---|---|
//! | moving | `x − x_closed` (impact closed) | `x_open − x` (impact open) |
//! | rest open | `F_o(x_open) − F(i, x_open)` (lift-off) | — |
//! | rest closed | `F(i, x_closed) − F_o(x_closed)` (release) | — |
//! | jammed | — | — |
//!
//! An impact reverses the velocity with the coefficient of restitution, `v ← −e·v`; a rebound
//! slower than `rest_speed_m_s` ends the bounce (the armature rests at that stop).
//!
//! A coil shorted by a fault no longer pulls ([`Motion::decouple`]): the armature then moves
//! under its spring and load alone.

use super::gap_magnet::{GapCurve, GapMagnet};
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

/// Armature velocity scale for the integrators' absolute tolerance, m/s.
pub(crate) const V_ATOL: f64 = 1e-12;

/// The armature's mechanical state, events and strokes (module docs).
#[derive(Debug, Clone)]
pub struct Motion {
    spec: ArmatureSpec,
    mag: GapMagnet,
    x: f64,
    v: f64,
    mode: ArmatureMode,
    coupled: bool,
    record_switching: bool,
    events: Vec<ArmatureEvent>,
    strokes: Vec<Stroke>,
    stroke_supply_j: f64,
    damping_j: f64,
    impact_j: f64,
}

impl Motion {
    /// The armature at rest at the open stop (jammed there with the stuck fault).
    ///
    /// `record_switching`: also record every switch edge as an event (a PWM drive would make
    /// that list grow with time; strokes keep their own switch times either way).
    ///
    /// # Errors
    ///
    /// Names the first bad value: the gap curve and saturation ([`GapCurve::validate`]),
    /// `mass_kg`, the gaps (`open_gap_m` within the curve, `closed_gap_m` below it), spring,
    /// damping and load values, `restitution` outside `0 ..= 1`, `rest_speed_m_s`, the fault
    /// values; a spring and load that do not hold the armature open (`spring_preload_n`).
    pub fn new(spec: ArmatureSpec, record_switching: bool) -> Result<Self, Error> {
        let a = &spec;
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
        ] {
            in_range(name, non_negative(name, v)?, 0.0, 1e8)?;
        }
        check_faults(&a.faults)?;
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
        let mode = if a.faults.stuck {
            ArmatureMode::Jammed
        } else {
            ArmatureMode::RestOpen
        };
        Ok(Self {
            x: open,
            v: 0.0,
            mode,
            coupled: true,
            record_switching,
            events: Vec::with_capacity(64),
            strokes: Vec::new(),
            stroke_supply_j: 0.0,
            damping_j: 0.0,
            impact_j: 0.0,
            mag,
            spec,
        })
    }

    /// The armature's parameters (with the faults in force).
    #[must_use]
    pub fn spec(&self) -> &ArmatureSpec {
        &self.spec
    }

    /// The magnetic model.
    #[must_use]
    pub fn magnet(&self) -> &GapMagnet {
        &self.mag
    }

    /// Whether the coil still pulls on the armature (not shorted).
    #[must_use]
    pub fn coupled(&self) -> bool {
        self.coupled
    }

    /// Air gap, m.
    #[must_use]
    pub fn gap_m(&self) -> f64 {
        self.x
    }

    /// Velocity (positive opening), m/s.
    #[must_use]
    pub fn velocity_m_s(&self) -> f64 {
        self.v
    }

    /// Where the armature is.
    #[must_use]
    pub fn mode(&self) -> ArmatureMode {
        self.mode
    }

    /// Whether it is moving (its position must be integrated).
    #[must_use]
    pub fn moving(&self) -> bool {
        self.mode == ArmatureMode::Moving
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

    /// Viscous damping loss so far, J.
    #[must_use]
    pub fn damping_j(&self) -> f64 {
        self.damping_j
    }

    /// Kinetic energy lost in impacts so far, J.
    #[must_use]
    pub fn impact_j(&self) -> f64 {
        self.impact_j
    }

    /// Kinetic energy, J.
    #[must_use]
    pub fn kinetic_energy_j(&self) -> f64 {
        0.5 * self.spec.mass_kg * self.v * self.v
    }

    /// Work stored against the spring and the load since the open stop, J.
    #[must_use]
    pub fn potential_energy_j(&self) -> f64 {
        let a = &self.spec;
        let d = a.open_gap_m - self.x;
        (a.spring_preload_n + a.load_n + a.faults.extra_load_n) * d
            + 0.5 * a.spring_rate_n_per_m * d * d
    }

    /// Coil current at flux linkage `lam` and gap `x`, A.
    #[must_use]
    pub fn current(&self, lam: f64, x: f64) -> f64 {
        self.mag.current(lam, x)
    }

    /// Flux linkage at current `i` at the present gap, V·s.
    #[must_use]
    pub fn flux(&self, i: f64) -> f64 {
        self.mag.flux(i, self.x)
    }

    /// Magnetic energy stored at flux linkage `lam` at the present gap, J.
    #[must_use]
    pub fn magnetic_energy_j(&self, lam: f64) -> f64 {
        self.mag.stored_j(lam, self.x)
    }

    /// Flux-linkage scale for tolerances: the steady flux at the closed gap with `steady_a`.
    #[must_use]
    pub fn flux_scale(&self, steady_a: f64) -> f64 {
        (self.mag.inductance_h(self.spec.closed_gap_m) * steady_a)
            .min(self.spec.saturation_flux_vs.unwrap_or(f64::INFINITY))
    }

    /// Absolute tolerances of the position and velocity states.
    #[must_use]
    pub fn state_atol(&self) -> [f64; 2] {
        [1e-16 * self.spec.open_gap_m, V_ATOL]
    }

    /// Pull (closing) force at current `i` and gap `x`, N (zero once decoupled).
    #[must_use]
    pub fn pull_n(&self, i: f64, x: f64) -> f64 {
        if self.coupled {
            self.mag.pull_n(i, x)
        } else {
            0.0
        }
    }

    /// Spring plus load force pushing open at gap `x`, N.
    #[must_use]
    pub fn opening_n(&self, x: f64) -> f64 {
        let a = &self.spec;
        a.spring_preload_n
            + a.spring_rate_n_per_m * (a.open_gap_m - x)
            + a.load_n
            + a.faults.extra_load_n
    }

    fn damping(&self) -> f64 {
        self.spec.damping_n_s_per_m + self.spec.faults.extra_damping_n_s_per_m
    }

    /// `[dx/dt, dv/dt, c·v²]` at current `i`, gap `x`, velocity `v` (zero unless moving).
    #[must_use]
    pub fn rhs(&self, i: f64, x: f64, v: f64) -> [f64; 3] {
        if self.moving() {
            let c = self.damping();
            [
                v,
                (self.opening_n(x) - self.pull_n(i, x) - c * v) / self.spec.mass_kg,
                c * v * v,
            ]
        } else {
            [0.0; 3]
        }
    }

    /// The two event functions of the mode at current `i` and gap `x` (module docs).
    #[must_use]
    pub fn event_fns(&self, i: f64, x: f64) -> [f64; 2] {
        let (open, closed) = (self.spec.open_gap_m, self.spec.closed_gap_m);
        match self.mode {
            ArmatureMode::Moving => [x - closed, open - x],
            ArmatureMode::RestOpen => [self.opening_n(open) - self.pull_n(i, open), 1.0],
            ArmatureMode::RestClosed => [self.pull_n(i, closed) - self.opening_n(closed), 1.0],
            ArmatureMode::Jammed => [1.0, 1.0],
        }
    }

    /// Absolute tolerances of the two event functions.
    #[must_use]
    pub fn event_tol(&self) -> [f64; 2] {
        match self.mode {
            ArmatureMode::RestOpen | ArmatureMode::RestClosed => [1e-12, 1.0],
            _ => [1e-15 * self.spec.open_gap_m; 2],
        }
    }

    /// Takes the integrated states of a segment: position, velocity and the damping loss.
    pub fn take_segment(&mut self, x: f64, v: f64, damping_j: f64) {
        if self.moving() {
            self.x = x;
            self.v = v;
        }
        self.damping_j += damping_j;
    }

    /// Records an event at `t` (with the supply energy delivered so far, for the strokes).
    pub fn record(&mut self, t: f64, kind: ArmatureEventKind, supply_j: f64) {
        let switching = matches!(
            kind,
            ArmatureEventKind::SwitchOn | ArmatureEventKind::SwitchOff
        );
        if self.record_switching || !switching {
            self.events.push(ArmatureEvent { t_s: t, kind });
        }
        match kind {
            ArmatureEventKind::SwitchOn => {
                if matches!(self.mode, ArmatureMode::RestOpen | ArmatureMode::Jammed) {
                    self.stroke_supply_j = supply_j;
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
                        s.seat_energy_j = Some(supply_j - self.stroke_supply_j);
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

    fn lift_off(&mut self, t: f64, stop: EndStop, supply_j: f64) {
        self.mode = ArmatureMode::Moving;
        self.v = 0.0;
        self.record(t, ArmatureEventKind::LiftOff(stop), supply_j);
    }

    /// Makes a resting armature leave its stop when the forces at flux linkage `lam` no longer
    /// hold it there (after a switch edge, a current zero, a fault).
    pub fn settle(&mut self, t: f64, lam: f64, supply_j: f64) {
        match self.mode {
            ArmatureMode::RestOpen => {
                let open = self.spec.open_gap_m;
                let i = self.mag.current(lam, open);
                if self.pull_n(i, open) > self.opening_n(open) {
                    self.lift_off(t, EndStop::Open, supply_j);
                }
            }
            ArmatureMode::RestClosed => {
                let closed = self.spec.closed_gap_m;
                let i = self.mag.current(lam, closed);
                if self.pull_n(i, closed) < self.opening_n(closed) {
                    self.lift_off(t, EndStop::Closed, supply_j);
                }
            }
            _ => {}
        }
    }

    /// An impact at `stop` at the present state.
    fn impact(&mut self, t: f64, stop: EndStop, lam: f64, supply_j: f64) {
        let a = &self.spec;
        let x_stop = match stop {
            EndStop::Open => a.open_gap_m,
            EndStop::Closed => a.closed_gap_m,
        };
        let (e, rest_speed, m) = (a.restitution, a.rest_speed_m_s, a.mass_kg);
        let v_in = self.v;
        // The current is continuous through the jump of x only if λ is kept and x is exact.
        self.x = x_stop;
        self.record(t, ArmatureEventKind::Impact(stop, v_in.abs()), supply_j);
        let v_out = -e * v_in;
        self.impact_j += 0.5 * m * (v_in * v_in - v_out * v_out);
        if v_out.abs() < rest_speed {
            self.impact_j += 0.5 * m * v_out * v_out;
            self.v = 0.0;
            self.mode = match stop {
                EndStop::Open => ArmatureMode::RestOpen,
                EndStop::Closed => ArmatureMode::RestClosed,
            };
            self.record(t, ArmatureEventKind::Rest(stop), supply_j);
            self.settle(t, lam, supply_j);
        } else {
            self.v = v_out;
        }
    }

    /// Event `j` of [`Motion::event_fns`] fired at `t` with flux linkage `lam`.
    pub fn on_event(&mut self, t: f64, j: usize, lam: f64, supply_j: f64) {
        match (j, self.mode) {
            (0, ArmatureMode::Moving) => self.impact(t, EndStop::Closed, lam, supply_j),
            (1, ArmatureMode::Moving) => self.impact(t, EndStop::Open, lam, supply_j),
            (0, ArmatureMode::RestOpen) => self.lift_off(t, EndStop::Open, supply_j),
            (0, ArmatureMode::RestClosed) => self.lift_off(t, EndStop::Closed, supply_j),
            _ => {}
        }
    }

    /// The coil no longer pulls (shorted): the armature answers to its spring and load alone.
    pub fn decouple(&mut self, t: f64, supply_j: f64) {
        self.coupled = false;
        self.settle(t, 0.0, supply_j);
    }

    /// Scales the gap curve's inductances by `factor` (shorted turns), keeping the gaps.
    pub fn scale_inductance(&mut self, factor: f64) {
        self.mag = self.mag.scaled(factor);
    }

    /// Sets the armature's faults from `t` on: a stuck armature stops where it is; one no
    /// longer stuck rests at the stop it is at (or moves); the forces are checked at once.
    /// `false` (nothing changed) for fault values out of range.
    pub fn set_faults(&mut self, t: f64, faults: ArmatureFaults, lam: f64, supply_j: f64) -> bool {
        if check_faults(&faults).is_err() {
            return false;
        }
        self.spec.faults = faults;
        if faults.stuck {
            self.mode = ArmatureMode::Jammed;
            self.v = 0.0;
        } else if self.mode == ArmatureMode::Jammed {
            self.mode = if self.x >= self.spec.open_gap_m {
                ArmatureMode::RestOpen
            } else if self.x <= self.spec.closed_gap_m {
                ArmatureMode::RestClosed
            } else {
                ArmatureMode::Moving
            };
        }
        self.settle(t, lam, supply_j);
        true
    }
}

fn check_faults(f: &ArmatureFaults) -> Result<(), Error> {
    for (name, v) in [
        ("extra_damping_n_s_per_m", f.extra_damping_n_s_per_m),
        ("extra_load_n", f.extra_load_n),
    ] {
        in_range(name, non_negative(name, v)?, 0.0, 1e8)?;
    }
    Ok(())
}
