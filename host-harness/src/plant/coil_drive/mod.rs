//! A coil switched on the low side, with its clamp network, switch, supply and shunt.
//!
//! # Circuit
//!
//! ```text
//!  V_s ──R_src──┬────────────┐
//!               │            │
//!        coil clamp        coil: λ(i), R_w(T)
//!   (diode V_f, + zener V_z, │
//!    or + resistor R_c)      │
//!               └────────────┤ drain
//!                            ├── C (unclamped network only) ── ground
//!                  switch: R_on, breakdown V_BR (or active clamp V_cl)
//!                            │
//!                          R_sh ── ground
//! ```
//!
//! # Topologies (segments) and their equations
//!
//! Every one-state topology is `dλ/dt = a − b·i` with the switch-path (supply) current
//! `i_sw = α i + β`; the coil clamp carries `i − i_sw`. With `R_x = R_src + R_sh`:
//!
//! | topology | `a` | `b` | `α`, `β` | switch voltage | ends when |
//! |---|---|---|---|---|---|
//! | on | `V_s` | `R_src + R_w + R_on + R_sh` | 1, 0 | `R_on i` | switch edge |
//! | coil clamp conducts | `−(V_f + V_z)` | `R_w + R_c` | 0, 0 | `V_s + V_f + V_z + R_c i` | `i = 0` |
//! | switch clamps at `V_lim` | `V_s − V_lim − R_x β` | `R_w + R_x α` | below | `V_lim` | `i_sw = 0` |
//! | body diode (unclamped) | `V_s` | `R_src + R_w + R_sh` | 1, 0 | 0 | `i = 0` rising |
//!
//! `V_lim` is the lower of the active clamp voltage and the switch's breakdown voltage. The
//! switch clamps when the coil clamp alone would put more than `V_lim` across it; with a
//! resistor clamp both share the current while `V_s + V_f + R_c i > V_lim`:
//! `α = R_c/(R_c + R_x)`, `β = −(V_lim − V_s − V_f)/(R_c + R_x)` (KVL with the drain at
//! `V_lim + R_sh i_sw` and the supply terminal at `V_s − R_src i_sw`).
//!
//! Energies over a segment follow from `t`, `Q = ∫i dt` and `S = ∫i² dt`: the winding takes
//! `R_w S`, the switch path `Q_sw = αQ + βt` and `S_sw = α²S + 2αβQ + β²t`, the coil clamp
//! `Q_cl = Q − Q_sw`, `S_cl = S − 2(αS + βQ) + S_sw`; the supply delivers `V_s Q_sw`. For a
//! constant inductance `L`, with `I_∞ = a/b`, `τ = L/b`, `E = e^(−t/τ)`:
//! `i(t) = I_∞ + (i₀ − I_∞)E`, `Q = I_∞ t + (i₀ − I_∞)τ(1 − E)`,
//! `S = I_∞² t + 2I_∞(i₀ − I_∞)τ(1 − E) + (i₀ − I_∞)² (τ/2)(1 − E²)`, and an event current
//! `i_x` is reached at `t = τ ln((i₀ − I_∞)/(i_x − I_∞))` (closed forms of the first-order
//! step response). For a saturating inductance the same quantities are integrated as the states
//! `[λ, Q, S]` of the adaptive integrator.
//!
//! **Unclamped** (only the switch's parasitic capacitance `C`): the two-state segment
//! `dλ/dt = V_s − v_C − (R_src + R_w + R_sh) i`, `C dv_C/dt = i` rings until `v_C` reaches
//! `V_lim` (the switch avalanches), `v_C` falls to 0 with `i < 0` (the body diode conducts) or
//! the current crosses zero (a voltage peak, recorded). For constant `L` it is propagated by
//! the matrix exponential; `Q = C Δv_C` exactly and `S` follows from the energy balance
//! `V_s Q = R S + Δ(½Li²) + Δ(½Cv_C²)`.
//!
//! Not modelled: the switch's own switching transition (edges are instantaneous), the parasitic
//! capacitance when a clamp network is fitted, reverse polarity (bridge direction).

mod decay_cache;
mod moving;

use super::armature_motion::Motion;
use super::inductance::{InductanceCurve, Magnetisation};
use super::linalg::{Mat, expm, mul_vec};
use super::rk::{Rk, StepUnderflow, Stop};
use super::thermal::Thermal;
use super::{in_range, non_negative, positive};
use decay_cache::DecayCache;
use lenz::Error;
use serde::{Deserialize, Serialize};

/// The coil itself.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CoilSpec {
    /// Magnetisation curve.
    pub curve: InductanceCurve,
    /// Winding resistance at 20 °C, Ω.
    pub r20_ohm: f64,
    /// Temperature coefficient referred to 20 °C, 1/K (copper: 0.00393, IEC 60028).
    pub alpha20_per_k: f64,
    /// Initial winding temperature, °C.
    pub temp_c: f64,
    /// Thermal path to ambient; `None` keeps the winding at `temp_c`.
    pub thermal: Option<Thermal>,
}

impl CoilSpec {
    /// A linear copper coil of `l_h` henry and `r20_ohm` ohm at 20 °C, held at `temp_c`.
    #[must_use]
    pub fn linear(l_h: f64, r20_ohm: f64, temp_c: f64) -> Self {
        Self {
            curve: InductanceCurve::Linear { l_h },
            r20_ohm,
            alpha20_per_k: f64::from(lenz::coil::COPPER_ALPHA20_PER_K),
            temp_c,
            thermal: None,
        }
    }
}

/// The clamp network that takes the coil current when the switch opens.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Clamp {
    /// Freewheel diode across the coil.
    Freewheel {
        /// Forward drop, V.
        vf_v: f64,
    },
    /// Diode in series with a zener, across the coil.
    DiodeZener {
        /// Diode forward drop, V.
        vf_v: f64,
        /// Zener voltage, V.
        vz_v: f64,
    },
    /// Active clamp across the switch: the switch conducts at `vcl_v`.
    AcrossSwitch {
        /// Clamp voltage, V.
        vcl_v: f64,
    },
    /// Diode in series with a resistor, across the coil.
    ResistorDiode {
        /// Resistor, Ω.
        r_ohm: f64,
        /// Diode forward drop, V.
        vf_v: f64,
    },
    /// No clamp: only the parasitic capacitance across the switch.
    Unclamped {
        /// Capacitance across the switch, F.
        c_f: f64,
    },
}

impl Clamp {
    /// `(V_f + V_z, R_c)` of a clamp across the coil, or `None`.
    fn coil_clamp(&self) -> Option<(f64, f64, f64, f64)> {
        match *self {
            Clamp::Freewheel { vf_v } => Some((vf_v, 0.0, 0.0, vf_v)),
            Clamp::DiodeZener { vf_v, vz_v } => Some((vf_v, vz_v, 0.0, vf_v + vz_v)),
            Clamp::ResistorDiode { r_ohm, vf_v } => Some((vf_v, 0.0, r_ohm, vf_v)),
            _ => None,
        }
    }

    fn validate(&self) -> Result<Self, Error> {
        match *self {
            Clamp::Freewheel { vf_v } => {
                non_negative("vf_v", vf_v)?;
            }
            Clamp::DiodeZener { vf_v, vz_v } => {
                non_negative("vf_v", vf_v)?;
                positive("vz_v", vz_v)?;
            }
            Clamp::AcrossSwitch { vcl_v } => {
                positive("vcl_v", vcl_v)?;
            }
            Clamp::ResistorDiode { r_ohm, vf_v } => {
                positive("r_ohm", r_ohm)?;
                non_negative("vf_v", vf_v)?;
            }
            Clamp::Unclamped { c_f } => {
                in_range("c_f", positive("c_f", c_f)?, 1e-15, 1.0)?;
            }
        }
        Ok(*self)
    }
}

/// The switch.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SwitchSpec {
    /// On-resistance, Ω.
    pub on_resistance_ohm: f64,
    /// Breakdown voltage: above it the switch avalanches and clamps, V.
    pub breakdown_v: f64,
}

/// The whole coil drive.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CoilDriveSpec {
    /// The coil.
    pub coil: CoilSpec,
    /// The clamp network.
    pub clamp: Clamp,
    /// The switch.
    pub switch: SwitchSpec,
    /// Open-circuit supply voltage, V.
    pub supply_v: f64,
    /// Supply source resistance, Ω.
    pub source_resistance_ohm: f64,
    /// Shunt resistance in the switch path, Ω (0: none).
    pub shunt_ohm: f64,
}

/// Energies per element since the start, J.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Energies {
    /// Winding copper loss.
    pub winding_j: f64,
    /// Clamp diode.
    pub diode_j: f64,
    /// Clamp zener.
    pub zener_j: f64,
    /// Clamp resistor.
    pub clamp_resistor_j: f64,
    /// Switch conduction loss (on-resistance) and capacitor discharge at turn-on.
    pub switch_conduction_j: f64,
    /// Switch working as an active clamp.
    pub switch_clamp_j: f64,
    /// Switch in avalanche (clamping at its breakdown voltage).
    pub avalanche_j: f64,
    /// Shunt.
    pub shunt_j: f64,
    /// Supply source resistance.
    pub source_j: f64,
    /// Delivered by the (ideal) supply.
    pub supply_j: f64,
    /// Stored in the coil when it went open (lost in the break).
    pub lost_at_open_j: f64,
}

impl Energies {
    /// Energy into the clamp network across the coil (diode, zener, resistor), J.
    #[must_use]
    pub fn coil_clamp_j(&self) -> f64 {
        self.diode_j + self.zener_j + self.clamp_resistor_j
    }

    /// Energy into the switch while clamping (active clamp or avalanche), J.
    #[must_use]
    pub fn switch_off_j(&self) -> f64 {
        self.switch_clamp_j + self.avalanche_j
    }

    fn minus(&self, o: &Energies) -> Energies {
        Energies {
            winding_j: self.winding_j - o.winding_j,
            diode_j: self.diode_j - o.diode_j,
            zener_j: self.zener_j - o.zener_j,
            clamp_resistor_j: self.clamp_resistor_j - o.clamp_resistor_j,
            switch_conduction_j: self.switch_conduction_j - o.switch_conduction_j,
            switch_clamp_j: self.switch_clamp_j - o.switch_clamp_j,
            avalanche_j: self.avalanche_j - o.avalanche_j,
            shunt_j: self.shunt_j - o.shunt_j,
            source_j: self.source_j - o.source_j,
            supply_j: self.supply_j - o.supply_j,
            lost_at_open_j: self.lost_at_open_j - o.lost_at_open_j,
        }
    }
}

/// One switch-off (an on-to-off edge with current flowing) and what it cost.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SwitchOff {
    /// Time of the edge, s.
    pub t_s: f64,
    /// Coil current at the edge, A.
    pub current_a: f64,
    /// Highest switch voltage until the next switch-on, V.
    pub peak_switch_v: f64,
    /// Energy into the coil clamp, J.
    pub clamp_j: f64,
    /// Energy into the switch while clamping or avalanching, J.
    pub switch_j: f64,
    /// Of which in avalanche, J.
    pub avalanche_j: f64,
    /// Time from the edge until the current first reached zero, s (`None`: it did not before
    /// the next switch-on).
    pub decay_s: Option<f64>,
}

/// What happened in the plant.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum PlantEventKind {
    /// The switch closed.
    SwitchOn,
    /// The switch opened.
    SwitchOff,
    /// The coil clamp started conducting.
    ClampStart,
    /// The switch started clamping (active clamp) or avalanching.
    SwitchClampStart,
    /// The switch stopped clamping.
    SwitchClampEnd,
    /// The current reached zero and a diode blocks.
    CurrentZero,
    /// The body diode started conducting (unclamped ringing).
    BodyDiode,
    /// A voltage peak of the unclamped ringing.
    RingPeak,
    /// A fault changed the plant.
    Fault,
}

/// A plant event with its time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PlantEvent {
    /// Time, s.
    pub t_s: f64,
    /// What happened.
    pub kind: PlantEventKind,
}

/// The topology in force.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum CoilState {
    /// Switch off, no current.
    Idle,
    /// Switch on.
    On,
    /// Switch off, coil clamp conducting.
    CoilClamp,
    /// Switch off, switch clamping at its limit (possibly sharing with a resistor clamp).
    SwitchClamp,
    /// Switch off, unclamped: coil rings with the switch capacitance.
    Ringing,
    /// Switch off, unclamped, body diode conducting.
    BodyDiode,
    /// The coil is open.
    Open,
}

#[derive(Debug, Clone, Copy)]
struct Seg1 {
    a: f64,
    b: f64,
    alpha: f64,
    beta: f64,
    /// Event current and direction (+1: falls to it, −1: rises to it); `None`: no event.
    event: Option<(f64, f64)>,
}

/// Length of the thermal update step, s.
const THERMAL_STEP_S: f64 = 1e-3;

/// The coil-drive plant (module docs).
#[derive(Debug, Clone)]
pub struct CoilDrive {
    spec: CoilDriveSpec,
    mag: Magnetisation,
    r_scale: f64,
    r_override: Option<f64>,
    temp_c: f64,
    r_w: f64,
    t: f64,
    lam: f64,
    v_c: f64,
    state: CoilState,
    cmd_on: bool,
    stuck_on: bool,
    supply_v: f64,
    energies: Energies,
    charge_c: f64,
    peak_switch_v: f64,
    peak_current_a: f64,
    /// Lowest and highest switch voltage since [`CoilDrive::take_switch_v_window`] last ran.
    window_v: (f64, f64),
    offs: Vec<SwitchOff>,
    open_off: Option<(usize, Energies)>,
    /// Keep every switch-off in `offs` (else only the latest; the others' energies are in
    /// `worst_off_j`).
    keep_offs: bool,
    /// Largest clamp and switch energy of the switch-offs no longer in `offs`, J.
    worst_off_j: (f64, f64),
    events: Vec<PlantEvent>,
    record_events: bool,
    rk1: Rk<3>,
    rk2: Rk<4>,
    thermal_t: f64,
    thermal_e: f64,
    cache: Option<(f64, f64, f64, Mat<3>)>,
    decay: DecayCache,
    failure: Option<StepUnderflow>,
    /// While [`CoilDrive::advance_until_below`] runs: the current level it watches for, A.
    watch: Option<f64>,
    /// The moving armature, if the coil has one (module `moving`).
    arm: Option<Motion>,
    /// The integrators of the one-state and the ringing segments with an armature.
    rk_arm: Rk<6>,
    rk_arm_ring: Rk<7>,
}

/// What ended a one-state step.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Ended {
    /// The span.
    Span,
    /// The topology's own event.
    Topology,
    /// The watched current level.
    Watch,
    /// Event `j` of the armature ([`Motion::event_fns`]).
    Armature(usize),
}

impl CoilDrive {
    /// Builds the plant at time 0, switch off, no current.
    ///
    /// # Errors
    ///
    /// Names the first bad value: curve, resistances (`r20_ohm`, `source_resistance_ohm`,
    /// `shunt_ohm`, `on_resistance_ohm`), `alpha20_per_k`, `temp_c`, clamp values,
    /// `breakdown_v` (must exceed the supply) or `supply_v`.
    pub fn new(spec: CoilDriveSpec) -> Result<Self, Error> {
        let mag = spec.coil.curve.validate()?;
        in_range(
            "r20_ohm",
            positive("r20_ohm", spec.coil.r20_ohm)?,
            1e-6,
            1e6,
        )?;
        in_range("alpha20_per_k", spec.coil.alpha20_per_k, 0.0, 0.01)?;
        in_range("temp_c", spec.coil.temp_c, -200.0, 400.0)?;
        if let Some(th) = &spec.coil.thermal {
            th.validate()?;
        }
        spec.clamp.validate()?;
        non_negative("on_resistance_ohm", spec.switch.on_resistance_ohm)?;
        let vs = in_range("supply_v", spec.supply_v, 0.0, 1e4)?;
        in_range(
            "breakdown_v",
            positive("breakdown_v", spec.switch.breakdown_v)?,
            vs,
            1e6,
        )?;
        non_negative("source_resistance_ohm", spec.source_resistance_ohm)?;
        non_negative("shunt_ohm", spec.shunt_ohm)?;
        let temp = spec.coil.temp_c;
        let mut p = Self {
            r_w: 0.0,
            mag,
            r_scale: 1.0,
            r_override: None,
            temp_c: temp,
            t: 0.0,
            lam: 0.0,
            v_c: 0.0,
            state: CoilState::Idle,
            cmd_on: false,
            stuck_on: false,
            supply_v: vs,
            energies: Energies::default(),
            charge_c: 0.0,
            peak_switch_v: 0.0,
            peak_current_a: 0.0,
            window_v: (f64::INFINITY, f64::NEG_INFINITY),
            offs: Vec::new(),
            open_off: None,
            keep_offs: true,
            worst_off_j: (0.0, 0.0),
            events: Vec::with_capacity(256),
            record_events: true,
            rk1: Rk::new(1e-12, [1e-15, 1e-18, 1e-18], 1e-7),
            rk2: Rk::new(1e-12, [1e-15, 1e-9, 1e-18, 1e-18], 1e-9),
            thermal_t: 0.0,
            thermal_e: 0.0,
            cache: None,
            decay: DecayCache::default(),
            failure: None,
            watch: None,
            arm: None,
            rk_arm: Rk::new(1e-11, [1e-15; 6], 1e-7),
            rk_arm_ring: Rk::new(1e-11, [1e-15; 7], 1e-9),
            spec,
        };
        p.update_resistance();
        if let Clamp::Unclamped { .. } = p.spec.clamp {
            p.state = CoilState::Ringing;
            p.v_c = vs;
        }
        Ok(p)
    }

    fn update_resistance(&mut self) {
        let c = &self.spec.coil;
        self.r_w = self
            .r_override
            .unwrap_or(c.r20_ohm * (1.0 + c.alpha20_per_k * (self.temp_c - 20.0)) * self.r_scale);
        self.cache = None;
    }

    /// Stops recording plant events (long runs, benches).
    pub fn set_record_events(&mut self, on: bool) {
        self.record_events = on;
    }

    /// Keeps only the latest switch-off in [`CoilDrive::switch_offs`] (`false`), so memory
    /// does not grow with the number of PWM periods; the largest energies of all of them stay
    /// in [`CoilDrive::worst_switch_off_j`]. Default: keep every one.
    pub fn set_keep_switch_offs(&mut self, keep: bool) {
        self.keep_offs = keep;
    }

    /// Largest clamp energy and largest switch energy of any single switch-off so far, J.
    #[must_use]
    pub fn worst_switch_off_j(&self) -> (f64, f64) {
        self.offs.iter().fold(self.worst_off_j, |(c, s), o| {
            (c.max(o.clamp_j), s.max(o.switch_j))
        })
    }

    fn event(&mut self, kind: PlantEventKind) {
        if self.record_events {
            self.events.push(PlantEvent { t_s: self.t, kind });
        }
    }

    /// Time, s.
    #[must_use]
    pub fn time_s(&self) -> f64 {
        self.t
    }

    /// Coil current, A.
    #[must_use]
    pub fn current_a(&self) -> f64 {
        match &self.arm {
            Some(m) if m.coupled() => m.current(self.lam, m.gap_m()),
            _ => self.mag.current(self.lam),
        }
    }

    /// Flux linkage at current `i` (at the present gap with an armature), V·s.
    fn flux_of(&self, i: f64) -> f64 {
        match &self.arm {
            Some(m) if m.coupled() => m.flux(i),
            _ => self.mag.flux(i),
        }
    }

    /// The topology in force.
    #[must_use]
    pub fn state(&self) -> CoilState {
        self.state
    }

    /// Winding temperature, °C.
    #[must_use]
    pub fn winding_temp_c(&self) -> f64 {
        self.temp_c
    }

    /// Winding resistance in force, Ω.
    #[must_use]
    pub fn winding_resistance_ohm(&self) -> f64 {
        self.r_w
    }

    /// Open-circuit supply voltage in force, V.
    #[must_use]
    pub fn supply_v(&self) -> f64 {
        self.supply_v
    }

    /// Energies per element since the start.
    #[must_use]
    pub fn energies(&self) -> &Energies {
        &self.energies
    }

    /// Charge through the coil since the start, `∫ i dt`, C.
    #[must_use]
    pub fn charge_c(&self) -> f64 {
        self.charge_c
    }

    /// Magnetic energy stored in the coil, J (`∫ i dλ`; `½ L i²` for a linear coil).
    #[must_use]
    pub fn stored_energy_j(&self) -> f64 {
        if let Some(m) = &self.arm
            && m.coupled()
        {
            return m.magnetic_energy_j(self.lam);
        }
        match self.mag.linear_h() {
            Some(l) => {
                let i = self.current_a();
                0.5 * l * i * i
            }
            None => {
                // ∫₀^λ i(λ') dλ' by composite Gauss–Legendre (smooth integrand).
                let n = 64;
                let h = self.lam / n as f64;
                let g = 0.5 / 3f64.sqrt();
                (0..n)
                    .map(|k| {
                        let m = (k as f64 + 0.5) * h;
                        0.5 * h * (self.mag.current(m - g * h) + self.mag.current(m + g * h))
                    })
                    .sum()
            }
        }
    }

    /// Energy stored in the switch capacitance (unclamped network), J.
    #[must_use]
    pub fn capacitor_energy_j(&self) -> f64 {
        match self.spec.clamp {
            Clamp::Unclamped { c_f } => 0.5 * c_f * self.v_c * self.v_c,
            _ => 0.0,
        }
    }

    /// Highest switch voltage so far, V.
    #[must_use]
    pub fn peak_switch_v(&self) -> f64 {
        self.peak_switch_v
    }

    /// Lowest and highest switch voltage the plant met since the last call (at the end of every
    /// integration segment and at every located extreme of a ring), V; `None` when it has not
    /// advanced since. Starts a new window.
    pub fn take_switch_v_window(&mut self) -> Option<(f64, f64)> {
        let w = std::mem::replace(&mut self.window_v, (f64::INFINITY, f64::NEG_INFINITY));
        (w.0 <= w.1).then_some(w)
    }

    /// Highest current magnitude so far, A.
    #[must_use]
    pub fn peak_current_a(&self) -> f64 {
        self.peak_current_a
    }

    /// The integrator's step underflow, if one stopped the plant (the state after it is not
    /// a solution; a closed-loop run reports it as an error).
    #[must_use]
    pub fn failure(&self) -> Option<StepUnderflow> {
        self.failure
    }

    /// Every switch-off so far.
    #[must_use]
    pub fn switch_offs(&self) -> &[SwitchOff] {
        &self.offs
    }

    /// Plant events so far.
    #[must_use]
    pub fn events(&self) -> &[PlantEvent] {
        &self.events
    }

    /// The limit at which the switch clamps: the active clamp or the breakdown voltage, and
    /// whether that is avalanche.
    fn v_lim(&self) -> (f64, bool) {
        let bv = self.spec.switch.breakdown_v;
        match self.spec.clamp {
            Clamp::AcrossSwitch { vcl_v } if vcl_v < bv => (vcl_v, false),
            _ => (bv, true),
        }
    }

    /// Switch (drain-source) voltage, V.
    #[must_use]
    pub fn switch_voltage_v(&self) -> f64 {
        let i = self.current_a();
        match self.state {
            CoilState::On => self.spec.switch.on_resistance_ohm * i,
            CoilState::Idle => self.supply_v,
            CoilState::CoilClamp => {
                let (_, _, rc, vc) = self.spec.clamp.coil_clamp().unwrap_or_default();
                self.supply_v + vc + rc * i
            }
            CoilState::SwitchClamp => self.v_lim().0,
            CoilState::Ringing => self.v_c,
            CoilState::BodyDiode | CoilState::Open => 0.0,
        }
    }

    /// Supply terminal voltage (after the source resistance), V.
    #[must_use]
    pub fn supply_terminal_v(&self) -> f64 {
        let i = self.current_a();
        let i_sw = match self.state {
            CoilState::On | CoilState::BodyDiode | CoilState::Ringing => i,
            CoilState::SwitchClamp => {
                let s = self.seg1();
                s.alpha * i + s.beta
            }
            _ => 0.0,
        };
        self.supply_v - self.spec.source_resistance_ohm * i_sw
    }

    /// Sets the switch command at the present time. A switch stuck on ignores `false`.
    pub fn set_switch(&mut self, on: bool) {
        let on = on || self.stuck_on;
        if on == self.cmd_on {
            return;
        }
        self.cmd_on = on;
        if self.state == CoilState::Open {
            return;
        }
        if on {
            if matches!(self.state, CoilState::Ringing | CoilState::SwitchClamp) {
                // Closing onto the charged switch capacitance dumps its energy into the switch
                // (also when it closes while avalanching: the capacitance is at the limit).
                self.energies.switch_conduction_j += self.capacitor_energy_j();
                self.v_c = 0.0;
            }
            self.close_off_record();
            self.state = CoilState::On;
            self.event(PlantEventKind::SwitchOn);
            self.arm_switched(true);
        } else {
            let i = self.current_a();
            self.event(PlantEventKind::SwitchOff);
            if i > 0.0 {
                if !self.keep_offs {
                    // The previous record is closed (at the switch-on): fold it into the worst.
                    self.worst_off_j = self.worst_switch_off_j();
                    self.offs.clear();
                }
                let idx = self.offs.len();
                self.offs.push(SwitchOff {
                    t_s: self.t,
                    current_a: i,
                    peak_switch_v: 0.0,
                    clamp_j: 0.0,
                    switch_j: 0.0,
                    avalanche_j: 0.0,
                    decay_s: None,
                });
                self.open_off = Some((idx, self.energies));
            }
            self.state = self.off_topology(i);
            if self.state == CoilState::Ringing {
                self.v_c = self.spec.switch.on_resistance_ohm * i;
            }
            self.after_transition();
            self.arm_switched(false);
        }
    }

    fn close_off_record(&mut self) {
        if let Some((idx, snap)) = self.open_off.take() {
            let d = self.energies.minus(&snap);
            if let Some(r) = self.offs.get_mut(idx) {
                r.clamp_j = d.coil_clamp_j();
                r.switch_j = d.switch_off_j();
                r.avalanche_j = d.avalanche_j;
            }
        }
    }

    fn update_off_record(&mut self, v: f64) {
        if let Some((idx, snap)) = &self.open_off {
            let d = self.energies.minus(snap);
            let zero = matches!(self.state, CoilState::Idle) || self.current_a() <= 0.0;
            if let Some(r) = self.offs.get_mut(*idx) {
                r.peak_switch_v = r.peak_switch_v.max(v);
                r.clamp_j = d.coil_clamp_j();
                r.switch_j = d.switch_off_j();
                r.avalanche_j = d.avalanche_j;
                if zero && r.decay_s.is_none() {
                    r.decay_s = Some(self.t - r.t_s);
                }
            }
        }
    }

    /// Topology right after the switch opens with current `i`.
    fn off_topology(&self, i: f64) -> CoilState {
        if let Clamp::Unclamped { .. } = self.spec.clamp {
            return CoilState::Ringing;
        }
        if i <= 0.0 {
            return CoilState::Idle;
        }
        let (v_lim, _) = self.v_lim();
        match self.spec.clamp.coil_clamp() {
            Some((_, _, rc, vc)) if self.supply_v + vc + rc * i <= v_lim => CoilState::CoilClamp,
            _ => CoilState::SwitchClamp,
        }
    }

    fn after_transition(&mut self) {
        let kind = match self.state {
            CoilState::CoilClamp => Some(PlantEventKind::ClampStart),
            CoilState::SwitchClamp => Some(PlantEventKind::SwitchClampStart),
            CoilState::BodyDiode => Some(PlantEventKind::BodyDiode),
            _ => None,
        };
        if let Some(k) = kind {
            self.event(k);
        }
        let v = self.switch_voltage_v();
        self.note_peaks(v);
    }

    fn note_peaks(&mut self, v: f64) {
        self.peak_switch_v = self.peak_switch_v.max(v);
        self.window_v = (self.window_v.0.min(v), self.window_v.1.max(v));
        self.peak_current_a = self.peak_current_a.max(self.current_a().abs());
        self.update_off_record(v);
    }

    /// One-state segment coefficients of the topology in force.
    fn seg1(&self) -> Seg1 {
        let sp = &self.spec;
        let (rsrc, rsh, ron) = (
            sp.source_resistance_ohm,
            sp.shunt_ohm,
            sp.switch.on_resistance_ohm,
        );
        let vs = self.supply_v;
        match self.state {
            CoilState::On => Seg1 {
                a: vs,
                b: rsrc + self.r_w + ron + rsh,
                alpha: 1.0,
                beta: 0.0,
                event: None,
            },
            CoilState::CoilClamp => {
                let (_, _, rc, vc) = sp.clamp.coil_clamp().unwrap_or_default();
                Seg1 {
                    a: -vc,
                    b: self.r_w + rc,
                    alpha: 0.0,
                    beta: 0.0,
                    event: Some((0.0, 1.0)),
                }
            }
            CoilState::SwitchClamp => {
                let (v_lim, _) = self.v_lim();
                let rx = rsrc + rsh;
                match sp.clamp.coil_clamp() {
                    Some((_, _, rc, vc)) if rc > 0.0 && vs + vc < v_lim => {
                        let alpha = rc / (rc + rx);
                        let beta = -(v_lim - vs - vc) / (rc + rx);
                        Seg1 {
                            a: vs - v_lim - rx * beta,
                            b: self.r_w + rx * alpha,
                            alpha,
                            beta,
                            event: Some((-beta / alpha, 1.0)),
                        }
                    }
                    _ => Seg1 {
                        a: vs - v_lim,
                        b: self.r_w + rx,
                        alpha: 1.0,
                        beta: 0.0,
                        event: Some((0.0, 1.0)),
                    },
                }
            }
            CoilState::BodyDiode => Seg1 {
                a: vs,
                b: rsrc + self.r_w + rsh,
                alpha: 1.0,
                beta: 0.0,
                event: Some((0.0, -1.0)),
            },
            _ => Seg1 {
                a: 0.0,
                b: 1.0,
                alpha: 0.0,
                beta: 0.0,
                event: None,
            },
        }
    }

    fn book1(&mut self, s: &Seg1, dt: f64, q: f64, sq: f64) {
        let sp = &self.spec;
        let (a, b) = (s.alpha, s.beta);
        let q_sw = a * q + b * dt;
        let s_sw = a * a * sq + 2.0 * a * b * q + b * b * dt;
        let q_cl = q - q_sw;
        let s_cl = sq - 2.0 * (a * sq + b * q) + s_sw;
        self.charge_c += q;
        let e = &mut self.energies;
        e.winding_j += self.r_w * sq;
        e.shunt_j += sp.shunt_ohm * s_sw;
        e.source_j += sp.source_resistance_ohm * s_sw;
        e.supply_j += self.supply_v * q_sw;
        match self.state {
            CoilState::On => e.switch_conduction_j += sp.switch.on_resistance_ohm * s_sw,
            CoilState::SwitchClamp => {
                let bv = sp.switch.breakdown_v;
                let (v_lim, aval) = match sp.clamp {
                    Clamp::AcrossSwitch { vcl_v } if vcl_v < bv => (vcl_v, false),
                    _ => (bv, true),
                };
                if aval {
                    e.avalanche_j += v_lim * q_sw;
                } else {
                    e.switch_clamp_j += v_lim * q_sw;
                }
            }
            _ => {}
        }
        if let Some((vf, vz, rc, _)) = sp.clamp.coil_clamp() {
            e.diode_j += vf * q_cl;
            e.zener_j += vz * q_cl;
            e.clamp_resistor_j += rc * s_cl;
        }
    }

    /// Advances a one-state segment by at most `span`; returns the time used and what ended
    /// the step.
    fn advance1(&mut self, span: f64) -> (f64, Ended) {
        if self.arm.is_some() {
            return self.advance1_arm(span);
        }
        let s = self.seg1();
        let i0 = self.current_a();
        if let Some(l) = self.mag.linear_h() {
            let (i_inf, tau, mut em1) = self.decay.get(s.a, s.b, l, span);
            let d = i0 - i_inf;
            let mut dt = span;
            let mut ended = Ended::Span;
            // Where the current would be at the span's end; an event inside the span needs its
            // time (a logarithm) only when that end value has reached the event's level.
            let i_end = i_inf + d * (1.0 - em1);
            // Time to reach `ix` from `i0` heading in direction `dir` (closed form of the
            // first-order step response), if the current heads there and reaches it within the
            // span (`from_at`: also when it starts exactly at `ix`).
            let reach = |ix: f64, dir: f64, from_at: bool| {
                let ahead = (i0 - ix) * dir;
                let heading =
                    (i_inf - ix) * dir < 0.0 && (ahead > 0.0 || (from_at && ahead == 0.0));
                (heading && (i_end - ix) * dir <= 0.0)
                    .then(|| (tau * ((i0 - ix) / (ix - i_inf)).ln_1p()).min(span))
            };
            let mut i1 = None;
            if let Some((ix, dir)) = s.event
                && let Some(t_ev) = reach(ix, dir, false)
                && t_ev <= dt
            {
                dt = t_ev;
                ended = Ended::Topology;
                i1 = Some(ix);
            }
            if let Some(w) = self.watch
                && let Some(t_w) = reach(w, 1.0, true)
                && t_w < dt
            {
                dt = t_w;
                ended = Ended::Watch;
                i1 = Some(w);
            }
            if ended != Ended::Span {
                em1 = -(-dt / tau).exp_m1();
            }
            let i1 = i1.unwrap_or(i_end);
            let q = i_inf * dt + d * tau * em1;
            // 1 − e^(−2x) = (1 − e^(−x))(1 + e^(−x)), without a second exponential.
            let sq = i_inf * i_inf * dt
                + 2.0 * i_inf * d * tau * em1
                + d * d * 0.5 * tau * (em1 * (2.0 - em1));
            self.lam = l * i1;
            self.book1(&s, dt, q, sq);
            (dt, ended)
        } else {
            let mag = &self.mag;
            let f = |y: &[f64; 3]| {
                let i = mag.current(y[0]);
                [s.a - s.b * i, i, i * i]
            };
            let (ix, dir) = s.event.unwrap_or((0.0, 0.0));
            let watch = self.watch;
            let g = |y: &[f64; 3]| {
                let i = mag.current(y[0]);
                let e = if dir == 0.0 { 1.0 } else { dir * (i - ix) };
                [e, watch.map_or(1.0, |w| i - w)]
            };
            let mut y = [self.lam, 0.0, 0.0];
            let tol = [1e-12 * self.peak_current_a.max(1e-3); 2];
            let stop = self.rk1.integrate(&f, &g, &tol, &mut y, span);
            let (dt, ended, i1) = match stop {
                Stop::End => (span, Ended::Span, None),
                Stop::Event { index: 1, dt } => (dt, Ended::Watch, watch),
                Stop::Event { dt, .. } => (dt, Ended::Topology, Some(ix)),
                Stop::Stalled { dt, h } => {
                    self.failure.get_or_insert(StepUnderflow {
                        t_s: self.t + dt,
                        step_s: h,
                    });
                    (span, Ended::Span, None)
                }
            };
            self.lam = i1.map_or(y[0], |i| mag.flux(i));
            self.book1(&s, dt, y[1], y[2]);
            (dt, ended)
        }
    }

    /// Advances the unclamped ringing segment by at most `span`; returns the time used and the
    /// event that fired (0: switch limit, 1: body diode, 2: current zero, 3: the watched
    /// current level).
    fn advance_ring(&mut self, span: f64) -> (f64, Option<usize>) {
        let Clamp::Unclamped { c_f } = self.spec.clamp else {
            return (span, None);
        };
        if self.arm.is_some() {
            return self.advance_ring_arm(span, c_f);
        }
        let (rsrc, rsh) = (self.spec.source_resistance_ohm, self.spec.shunt_ohm);
        let rl = rsrc + self.r_w + rsh;
        let vs = self.supply_v;
        let (v_lim, _) = self.v_lim();
        let i0 = self.current_a();
        let v0 = self.v_c;
        let watch = self.watch;
        // Sign of the current (or of its first change when zero) for the zero-crossing event.
        let sgn = if i0 != 0.0 {
            i0.signum()
        } else {
            (vs - v0).signum()
        };
        let (dt, ev, i1, v1, q, sq) = if let Some(l) = self.mag.linear_h() {
            // x = [i, v_C, 1].
            let a: Mat<3> = [
                [-rl / l, -1.0 / l, vs / l],
                [1.0 / c_f, 0.0, 0.0],
                [0.0, 0.0, 0.0],
            ];
            let events = |x: &[f64; 3]| -> [f64; 4] {
                [
                    v_lim - x[1],
                    if x[0] < 0.0 { x[1] } else { 1.0 },
                    sgn * x[0],
                    watch.map_or(1.0, |w| x[0] - w),
                ]
            };
            let period = 2.0 * std::f64::consts::PI * (l * c_f).sqrt();
            let h = (period / 16.0).min(0.25 * l / rl.max(1e-12));
            let (dt, ev, x) = self.lin_events(&a, [i0, v0, 1.0], span, h, &events);
            let i1 = x[0];
            let v1 = x[1];
            let q = c_f * (v1 - v0);
            let sq =
                (vs * q - 0.5 * l * (i1 * i1 - i0 * i0) - 0.5 * c_f * (v1 * v1 - v0 * v0)) / rl;
            (dt, ev, i1, v1, q, sq)
        } else {
            let mag = &self.mag;
            let f = |y: &[f64; 4]| {
                let i = mag.current(y[0]);
                [vs - y[1] - rl * i, i / c_f, i, i * i]
            };
            let g = |y: &[f64; 4]| {
                let i = mag.current(y[0]);
                [
                    v_lim - y[1],
                    if i < 0.0 { y[1] } else { 1.0 },
                    sgn * i,
                    watch.map_or(1.0, |w| i - w),
                ]
            };
            let mut y = [self.lam, v0, 0.0, 0.0];
            let i_tol = 1e-12 * self.peak_current_a.max(1e-3);
            let tol = [1e-9, 1e-12 * v_lim, i_tol, i_tol];
            let stop = self.rk2.integrate(&f, &g, &tol, &mut y, span);
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
            (dt, ev, mag.current(y[0]), y[1], y[2], y[3])
        };
        self.lam = match (ev, watch) {
            (Some(2), _) => 0.0,
            (Some(3), Some(w)) => self.mag.flux(w),
            _ => self.mag.flux(i1),
        };
        self.v_c = match ev {
            Some(0) => v_lim,
            Some(1) => 0.0,
            _ => v1,
        };
        self.charge_c += q;
        let e = &mut self.energies;
        e.winding_j += self.r_w * sq;
        e.shunt_j += rsh * sq;
        e.source_j += rsrc * sq;
        e.supply_j += vs * q;
        (dt, ev)
    }

    /// Exact propagation of `ẋ = A x` (augmented) for at most `span`, sampling every `h` for
    /// sign changes of the event functions and refining the first one by Newton's method on the
    /// exact solution.
    fn lin_events<const M: usize, E: Fn(&[f64; 3]) -> [f64; M]>(
        &mut self,
        a: &Mat<3>,
        x0: [f64; 3],
        span: f64,
        h: f64,
        events: &E,
    ) -> (f64, Option<usize>, [f64; 3]) {
        let eh = match self.cache {
            Some((k0, k1, kh, m)) if k0 == a[0][0] && k1 == a[0][2] && kh == h => m,
            _ => {
                let m = expm(a, h);
                self.cache = Some((a[0][0], a[0][2], h, m));
                m
            }
        };
        let mut x = x0;
        let mut done = 0.0;
        let g_start = events(&x0);
        while done < span {
            let step = h.min(span - done);
            let x1 = if step == h {
                mul_vec(&eh, &x)
            } else {
                mul_vec(&expm(a, step), &x)
            };
            let g1 = events(&x1);
            let fired = (0..M)
                .filter(|&j| g_start[j] >= 0.0 && g1[j] < 0.0)
                .min_by(|&p, &q| {
                    let tp = root_time(a, &x, step, p, events);
                    let tq = root_time(a, &x, step, q, events);
                    tp.total_cmp(&tq)
                });
            if let Some(j) = fired {
                let tr = root_time(a, &x, step, j, events);
                let xr = mul_vec(&expm(a, tr), &x);
                return (done + tr, Some(j), xr);
            }
            x = x1;
            done += step;
        }
        (span, None, x)
    }

    /// Advances the plant to `t_s` with the switch as commanded. A time not after the present
    /// one, or not finite, leaves the plant unchanged. After a [`StepUnderflow`] the plant
    /// stops (its time moves on, its state does not): see [`CoilDrive::failure`].
    pub fn advance_to(&mut self, t_s: f64) {
        self.watch = None;
        self.advance(t_s);
    }

    /// Advances the plant towards `t_s` like [`CoilDrive::advance_to`], but stops at the first
    /// instant the coil current is below `level_a` and returns that instant: the present time
    /// when the current is already below, else the exact crossing, located inside the segment
    /// (closed form of the first-order response on a linear coil, the integrators' event
    /// location otherwise). `None`: the current stayed at or above `level_a` up to `t_s` (the
    /// plant is then at `t_s`). A `level_a` that is not finite never stops the plant.
    pub fn advance_until_below(&mut self, t_s: f64, level_a: f64) -> Option<f64> {
        self.watch = level_a.is_finite().then_some(level_a);
        let hit = self.advance(t_s);
        self.watch = None;
        hit
    }

    /// The stepping loop of [`CoilDrive::advance_to`]; stops early (returning the time) when
    /// the watched level is crossed.
    fn advance(&mut self, t_s: f64) -> Option<f64> {
        if let Some(w) = self.watch
            && self.current_a() < w
        {
            return Some(self.t);
        }
        if !t_s.is_finite() {
            return None;
        }
        let mut guard = 0u32;
        while self.t < t_s {
            if self.failure.is_some() {
                break;
            }
            guard += 1;
            let mut span = t_s - self.t;
            if self.spec.coil.thermal.is_some() {
                // Segments end at the thermal steps, so the winding resistance follows the
                // temperature however long the caller's interval is.
                let next = self.thermal_t + THERMAL_STEP_S;
                if next > self.t && next < t_s {
                    span = next - self.t;
                }
            }
            let mut watched = false;
            match self.state {
                CoilState::Idle | CoilState::Open if !self.arm_moving() => {
                    self.t += span;
                }
                CoilState::Ringing => {
                    let (dt, ev) = self.advance_ring(span);
                    self.t += dt;
                    match ev {
                        Some(0) => {
                            self.state = CoilState::SwitchClamp;
                            self.after_transition();
                        }
                        Some(1) => {
                            self.state = CoilState::BodyDiode;
                            self.after_transition();
                        }
                        Some(2) => {
                            self.event(PlantEventKind::RingPeak);
                            let v = self.v_c;
                            self.note_peaks(v);
                            if self.current_a() == 0.0 {
                                self.update_off_record(v);
                            }
                        }
                        Some(3) => watched = true,
                        Some(j) => self.arm_event(j - 4),
                        None => {}
                    }
                    self.note_peaks(self.v_c);
                }
                _ => {
                    let (dt, ended) = self.advance1(span);
                    self.t += dt;
                    match ended {
                        Ended::Topology => self.on_event1(),
                        Ended::Watch => watched = true,
                        Ended::Armature(j) => self.arm_event(j),
                        Ended::Span => {}
                    }
                    let v = self.switch_voltage_v();
                    self.note_peaks(v);
                }
            }
            self.maybe_thermal();
            if watched {
                return Some(self.t);
            }
            if let Some(w) = self.watch
                && self.current_a() < w
            {
                // A jump below the level at a topology change (the current set to zero).
                return Some(self.t);
            }
            if guard > 10_000_000 {
                break;
            }
        }
        self.t = self.t.max(t_s);
        None
    }

    fn on_event1(&mut self) {
        match self.state {
            CoilState::CoilClamp => {
                self.lam = 0.0;
                self.state = CoilState::Idle;
                self.event(PlantEventKind::CurrentZero);
            }
            CoilState::SwitchClamp => {
                self.event(PlantEventKind::SwitchClampEnd);
                if self.current_a() > 0.0 {
                    // The resistor clamp takes the whole current from here on.
                    self.state = CoilState::CoilClamp;
                    self.after_transition();
                } else {
                    self.lam = 0.0;
                    if let Clamp::Unclamped { .. } = self.spec.clamp {
                        self.v_c = self.v_lim().0;
                        self.state = CoilState::Ringing;
                    } else {
                        self.state = CoilState::Idle;
                    }
                    self.event(PlantEventKind::CurrentZero);
                }
            }
            CoilState::BodyDiode => {
                self.lam = 0.0;
                self.v_c = 0.0;
                self.state = CoilState::Ringing;
            }
            _ => {}
        }
        self.arm_settle();
    }

    fn maybe_thermal(&mut self) {
        let Some(th) = self.spec.coil.thermal else {
            return;
        };
        // The same expression as the segment limit in `advance_to`, so a segment that ends at
        // the step always triggers it.
        if self.t >= self.thermal_t + THERMAL_STEP_S {
            let dt = self.t - self.thermal_t;
            let p = (self.energies.winding_j - self.thermal_e) / dt;
            self.temp_c = th.step(self.temp_c, p, dt);
            self.thermal_t = self.t;
            self.thermal_e = self.energies.winding_j;
            self.update_resistance();
        }
    }

    /// Sets the open-circuit supply voltage (sag, surge), V. Negative or non-finite values are
    /// ignored and reported as `false`. (The closed loop records the fault event.)
    pub fn set_supply_v(&mut self, v: f64) -> bool {
        if v.is_finite() && v >= 0.0 {
            self.supply_v = v;
            self.cache = None;
            true
        } else {
            false
        }
    }

    /// Changes the coil: inductances scaled by `l_factor` and the winding resistance by
    /// `r_factor` (shorted turns), keeping the current continuous.
    pub fn set_coil_scale(&mut self, l_factor: f64, r_factor: f64) -> bool {
        if !(l_factor > 0.0 && r_factor > 0.0 && l_factor.is_finite() && r_factor.is_finite()) {
            return false;
        }
        let i = self.current_a();
        self.mag = self.mag.scaled(l_factor);
        if let Some(m) = &mut self.arm {
            m.scale_inductance(l_factor);
        }
        self.lam = self.flux_of(i);
        self.r_scale *= r_factor;
        self.update_resistance();
        self.event(PlantEventKind::Fault);
        true
    }

    /// Shorts the coil: a linear residual inductance and resistance (wiring) replace it,
    /// keeping the current continuous.
    pub fn short_coil(&mut self, residual_l_h: f64, residual_r_ohm: f64) -> bool {
        let Ok(mag) = (InductanceCurve::Linear { l_h: residual_l_h }).validate() else {
            return false;
        };
        if !(residual_r_ohm > 0.0 && residual_r_ohm.is_finite()) {
            return false;
        }
        let i = self.current_a();
        self.mag = mag;
        let (t, supply) = (self.t, self.energies.supply_j);
        if let Some(m) = &mut self.arm {
            m.decouple(t, supply);
        }
        self.lam = self.mag.flux(i);
        self.r_override = Some(residual_r_ohm);
        self.update_resistance();
        self.event(PlantEventKind::Fault);
        true
    }

    /// Opens the coil: the current stops at once (its stored energy is lost in the break).
    pub fn open_coil(&mut self) {
        self.energies.lost_at_open_j += self.stored_energy_j();
        self.lam = 0.0;
        self.state = CoilState::Open;
        self.event(PlantEventKind::Fault);
        self.arm_settle();
    }

    /// Sticks the switch on (it ignores off commands from now on).
    pub fn stick_switch_on(&mut self) {
        self.stuck_on = true;
        self.set_switch(true);
        self.event(PlantEventKind::Fault);
    }
}

/// Time within `(0, step]` where event `j` crosses zero, by Newton's method with bisection
/// safeguard on the exact solution `x(t) = exp(A t) x`.
fn root_time<const M: usize, E: Fn(&[f64; 3]) -> [f64; M]>(
    a: &Mat<3>,
    x: &[f64; 3],
    step: f64,
    j: usize,
    events: &E,
) -> f64 {
    let (mut lo, mut hi) = (0.0, step);
    let mut t = 0.5 * step;
    for _ in 0..100 {
        let xt = mul_vec(&expm(a, t), x);
        let g = events(&xt)[j];
        if g > 0.0 {
            lo = t;
        } else {
            hi = t;
        }
        // Derivative by a small secant along the exact solution.
        let dtp = 1e-7 * step;
        let gp = events(&mul_vec(&expm(a, t + dtp), x))[j];
        let slope = (gp - g) / dtp;
        let mut next = if slope != 0.0 {
            t - g / slope
        } else {
            f64::NAN
        };
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        if (hi - lo) <= 1e-15 * step.max(1e-300) || (next - t).abs() <= 1e-16 * step {
            return hi.min(next.max(lo));
        }
        t = next;
    }
    hi
}
