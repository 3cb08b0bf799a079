//! A brushed DC motor on an H-bridge fed from a supply with source resistance and a bus
//! capacitor: the oracle for motor firmware (in the closed loop through
//! [`crate::closed_loop::MotorBridge`]).
//!
//! # Circuit
//!
//! ```text
//!  V_s ──R_s──(supply diode when it cannot sink)──┬── bus v_b ──┬── leg A ──┐
//!                                                  C                        motor: L, R_w(T), k·ω
//!                                                  │            └── leg B ──┘
//!                                                 GND   (each switch R_sw, each with a diode V_f)
//! ```
//!
//! # Equations
//!
//! States `x = [i, ω, v_b, q]`: winding current, rotor speed, bus voltage and the charge the
//! bridge has drawn from the bus (`dq/dt = i_bus`). With the loop resistance `R` of the
//! topology, `L di/dt = u − R·i − k·ω`, `J dω/dt = k·i − b·ω − T_load(t)`,
//! `C dv_b/dt = i_s − i_bus`, where the bridge applies `u` and draws `i_bus`:
//!
//! | topology | `u` | `i_bus` | `R` | ends when |
//! |---|---|---|---|---|
//! | forward (A high, B low) | `v_b` | `i` | `R_w + 2R_sw` | command |
//! | reverse | `−v_b` | `−i` | `R_w + 2R_sw` | command |
//! | brake (both low) | 0 | 0 | `R_w + 2R_sw` | command |
//! | coast, `i > 0` (diodes) | `−(v_b + 2V_f)` | `−i` | `R_w` | `i = 0` |
//! | coast, `i < 0` (diodes) | `v_b + 2V_f` | `i` | `R_w` | `i = 0` |
//! | coast, blocked | — (`i = 0`) | 0 | — | `|k·ω| = v_b + 2V_f` |
//!
//! Supply: `i_s = (V_s − v_b)/R_s` while it conducts (with `R_s = 0` the bus is held at `V_s`);
//! a supply that cannot sink current blocks when `v_b` rises above `V_s` (with `R_s = 0`: when
//! the bridge returns current, `i_bus < 0`) and conducts again when `v_b` falls back to `V_s`.
//! The load torque follows a profile of steps; a jam locks the rotor (`ω = 0` from then on).
//! Copper heating: the winding temperature follows [`Thermal`] every millisecond from the
//! mean copper loss, and `R_w(T) = R₂₀(1 + α₂₀(T − 20))` (IEC 60028, as the coil).
//! PWM with either decay is a sequence of forward (or reverse) and brake (slow decay) or
//! coast (fast decay) intervals ([`MotorPlant::advance_pwm`]).
//!
//! # Integration
//!
//! Every topology is linear, `ẋ = A·x + c`, and is propagated exactly by the matrix
//! exponential of the augmented 5×5 matrix (module `linalg`), in steps of at most a quarter
//! over the fastest rate of the system (`R/L + b/J + k/√(L·J) + 1/(R_s·C) + 1/√(L·C)`), so no
//! event can pass unseen between two steps. Full steps repeat, and their exponentials are
//! cached; a shorter step (to a PWM edge or a sample) and every point inside a step (an event,
//! an extremum) come from one `linalg::Orbit` of the step (the exponential series on the state,
//! in a balanced basis), or, when the step is too long for it, from the matrix exponential
//! itself. Events (the current reaching zero in coast, the
//! diodes starting to conduct, the supply blocking or conducting, the current changing sign
//! while driven) are linear in the state and located by bisection on the exact solution to
//! 2⁻⁵⁰ of the step. The current's and the bus voltage's extrema inside a step are located the
//! same way on their (linear) derivatives, so the recorded peaks are exact. The copper loss
//! `∫R_w·i² dt` and the energy returned to the bus `∫v_b·max(−i_bus, 0) dt` are quadratic in
//! the state: each step integrates them by 5-point Gauss–Legendre on the exact solution (error
//! of order `(h·λ)^10`, far below 10⁻¹²); the returned charge is exact (`−Δq` while returning).
//! Accuracy against `ode_solvers` Dop853 is asserted in `host-harness/tests/plant_motor.rs`.

use std::cell::OnceCell;

use lenz::Error;
use lenz::kernel::BridgeMode;
use serde::{Deserialize, Serialize};

use super::linalg::{Mat, Orbit, expm, mul_vec};
use super::thermal::Thermal;
use super::{finite, in_range, non_negative, positive};

/// Length of the thermal update step, s.
const THERMAL_STEP_S: f64 = 1e-3;
/// Full-step exponentials kept (the drive, the off interval and a spare).
const CACHE_ENTRIES: usize = 4;
/// Augmented state size: `[i, ω, v_b, q, 1]`.
const N: usize = 5;
/// 5-point Gauss–Legendre nodes on `[0, 1]` and weights (sum 1).
const GL: [(f64, f64); 5] = [
    (0.046_910_077_030_668, 0.118_463_442_528_094_5),
    (0.230_765_344_947_158_5, 0.239_314_335_249_683_2),
    (0.5, 0.284_444_444_444_444_4),
    (0.769_234_655_052_841_5, 0.239_314_335_249_683_2),
    (0.953_089_922_969_332, 0.118_463_442_528_094_5),
];

/// Motor, bridge and supply parameters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MotorSpec {
    /// Winding inductance, H.
    pub inductance_h: f64,
    /// Winding resistance at 20 °C, Ω.
    pub r20_ohm: f64,
    /// Temperature coefficient referred to 20 °C, 1/K.
    pub alpha20_per_k: f64,
    /// Initial winding temperature, °C.
    pub temp_c: f64,
    /// Thermal path to ambient; `None` keeps the winding at `temp_c`.
    pub thermal: Option<Thermal>,
    /// Torque constant (= back-EMF constant), N·m/A.
    pub torque_constant_nm_per_a: f64,
    /// Inertia of rotor and load, kg·m².
    pub inertia_kg_m2: f64,
    /// Viscous friction, N·m·s/rad.
    pub friction_nm_s_per_rad: f64,
    /// On-resistance of each bridge switch (two conduct in every driven loop), Ω.
    pub switch_on_resistance_ohm: f64,
    /// Forward drop of each bridge diode (two conduct while coasting), V.
    pub diode_drop_v: f64,
    /// Open-circuit supply voltage, V.
    pub supply_v: f64,
    /// Supply source resistance, Ω.
    pub source_resistance_ohm: f64,
    /// Bus capacitance, F.
    pub bus_capacitance_f: f64,
    /// `false` when the supply cannot sink current (a series diode, a linear regulator).
    pub supply_sinks: bool,
}

impl MotorSpec {
    /// A copper-wound motor at 20 °C from a stiff 12 V supply that sinks current: ideal
    /// switches, 0.7 V diodes, 100 µF on the bus, no friction, no thermal path.
    #[must_use]
    pub fn new(inductance_h: f64, r20_ohm: f64, torque_constant: f64, inertia: f64) -> Self {
        Self {
            inductance_h,
            r20_ohm,
            alpha20_per_k: f64::from(lenz::coil::COPPER_ALPHA20_PER_K),
            temp_c: 20.0,
            thermal: None,
            torque_constant_nm_per_a: torque_constant,
            inertia_kg_m2: inertia,
            friction_nm_s_per_rad: 0.0,
            switch_on_resistance_ohm: 0.0,
            diode_drop_v: 0.7,
            supply_v: 12.0,
            source_resistance_ohm: 0.0,
            bus_capacitance_f: 100e-6,
            supply_sinks: true,
        }
    }
}

/// Load torque over time: steps at times, and a jam that locks the rotor.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct LoadProfile {
    /// `(time s, torque N·m)`: from that time on the load torque has that value.
    pub steps: Vec<(f64, f64)>,
    /// When the rotor locks (speed zero from then on); `None` for no jam.
    pub jam_at_s: Option<f64>,
}

/// The decay during the off interval of a PWM period.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Decay {
    /// Winding shorted through the low-side switches (brake).
    Slow,
    /// All switches off: the current returns to the bus through the diodes (coast).
    Fast,
}

/// What happened inside the plant, at the exact time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum MotorEventKind {
    /// The coasting current reached zero: the diodes block.
    DiodesBlock,
    /// The back-EMF exceeds the bus plus two diode drops: the diodes conduct again.
    DiodesConduct,
    /// The supply stopped conducting (it cannot sink current).
    SupplyBlocks,
    /// The supply conducts again.
    SupplyConducts,
    /// The rotor locked.
    Jammed,
    /// The load torque stepped to this value, N·m.
    LoadStep(f64),
}

/// An event and its time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct MotorEvent {
    /// Time, s.
    pub t_s: f64,
    /// What happened.
    pub kind: MotorEventKind,
}

/// The winding's conduction state while the bridge coasts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Coast {
    Positive,
    Negative,
    Blocked,
}

/// The topology in force (module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Topology {
    bridge: BridgeMode,
    coast: Coast,
    supply_on: bool,
    jammed: bool,
    /// The winding is open: no current flows in any topology.
    open: bool,
}

/// A linear event function `g = c·x`, positive while the topology holds.
#[derive(Debug, Clone, Copy)]
enum Watch {
    CoastZero,
    DiodesConduct,
    Supply,
    Sign,
}

/// The motor plant (module docs).
#[derive(Debug, Clone)]
pub struct MotorPlant {
    spec: MotorSpec,
    t: f64,
    x: [f64; N],
    temp_c: f64,
    r_w: f64,
    topo: Topology,
    load_nm: f64,
    profile: LoadProfile,
    next_step: usize,
    jam_pending: Option<f64>,
    thermal_t: f64,
    thermal_e: f64,
    copper_j: f64,
    returned_j: f64,
    returned_c: f64,
    peak_current_a: f64,
    peak_bus_v: f64,
    events: Vec<MotorEvent>,
    /// Exponentials of full steps, keyed by the matrix and the step: the few topologies a PWM
    /// alternates between stay hot (at most [`CACHE_ENTRIES`], the oldest replaced).
    cache: Vec<(Mat<N>, f64, Mat<N>, [Mat<N>; 5])>,
}

impl MotorPlant {
    /// The motor at rest (no current, no speed), bridge coasting, bus charged to the supply.
    ///
    /// # Errors
    ///
    /// Names the first bad value: inductance, resistance, torque constant, inertia and bus
    /// capacitance must be positive; friction, switch resistance, diode drop and source
    /// resistance non-negative; supply `0 ..= 10 kV`; temperature `−200 ..= 400 °C`.
    pub fn new(spec: MotorSpec) -> Result<Self, Error> {
        in_range(
            "inductance_h",
            positive("inductance_h", spec.inductance_h)?,
            1e-9,
            1e3,
        )?;
        in_range("r20_ohm", positive("r20_ohm", spec.r20_ohm)?, 1e-6, 1e6)?;
        in_range("alpha20_per_k", spec.alpha20_per_k, 0.0, 0.01)?;
        in_range("temp_c", spec.temp_c, -200.0, 400.0)?;
        if let Some(th) = &spec.thermal {
            th.validate()?;
        }
        in_range(
            "torque_constant_nm_per_a",
            positive("torque_constant_nm_per_a", spec.torque_constant_nm_per_a)?,
            1e-6,
            1e2,
        )?;
        in_range(
            "inertia_kg_m2",
            positive("inertia_kg_m2", spec.inertia_kg_m2)?,
            1e-12,
            1e3,
        )?;
        in_range(
            "friction_nm_s_per_rad",
            non_negative("friction_nm_s_per_rad", spec.friction_nm_s_per_rad)?,
            0.0,
            1e4,
        )?;
        in_range(
            "switch_on_resistance_ohm",
            non_negative("switch_on_resistance_ohm", spec.switch_on_resistance_ohm)?,
            0.0,
            1e6,
        )?;
        in_range(
            "diode_drop_v",
            non_negative("diode_drop_v", spec.diode_drop_v)?,
            0.0,
            1e3,
        )?;
        in_range("supply_v", spec.supply_v, 0.0, 1e4)?;
        in_range(
            "source_resistance_ohm",
            non_negative("source_resistance_ohm", spec.source_resistance_ohm)?,
            0.0,
            1e6,
        )?;
        in_range(
            "bus_capacitance_f",
            positive("bus_capacitance_f", spec.bus_capacitance_f)?,
            1e-12,
            10.0,
        )?;
        let mut p = Self {
            t: 0.0,
            x: [0.0, 0.0, spec.supply_v, 0.0, 1.0],
            temp_c: spec.temp_c,
            r_w: 0.0,
            topo: Topology {
                bridge: BridgeMode::Coast,
                coast: Coast::Blocked,
                supply_on: true,
                jammed: false,
                open: false,
            },
            load_nm: 0.0,
            profile: LoadProfile::default(),
            next_step: 0,
            jam_pending: None,
            thermal_t: 0.0,
            thermal_e: 0.0,
            copper_j: 0.0,
            returned_j: 0.0,
            returned_c: 0.0,
            peak_current_a: 0.0,
            peak_bus_v: spec.supply_v,
            events: Vec::new(),
            cache: Vec::new(),
            spec,
        };
        p.update_resistance();
        Ok(p)
    }

    fn update_resistance(&mut self) {
        let s = &self.spec;
        self.r_w = s.r20_ohm * (1.0 + s.alpha20_per_k * (self.temp_c - 20.0));
    }

    /// Time, s.
    #[must_use]
    pub fn time_s(&self) -> f64 {
        self.t
    }

    /// Winding current, A (positive forward).
    #[must_use]
    pub fn current_a(&self) -> f64 {
        self.x[0]
    }

    /// Rotor speed, rad/s (positive forward).
    #[must_use]
    pub fn speed_rad_s(&self) -> f64 {
        self.x[1]
    }

    /// Bus voltage, V.
    #[must_use]
    pub fn bus_v(&self) -> f64 {
        self.x[2]
    }

    /// Winding temperature, °C.
    #[must_use]
    pub fn winding_temp_c(&self) -> f64 {
        self.temp_c
    }

    /// Winding resistance now, Ω.
    #[must_use]
    pub fn winding_resistance_ohm(&self) -> f64 {
        self.r_w
    }

    /// The bridge mode in force.
    #[must_use]
    pub fn bridge(&self) -> BridgeMode {
        self.topo.bridge
    }

    /// `true` once the rotor is locked.
    #[must_use]
    pub fn jammed(&self) -> bool {
        self.topo.jammed
    }

    /// Load torque in force, N·m.
    #[must_use]
    pub fn load_torque_nm(&self) -> f64 {
        self.load_nm
    }

    /// Highest current magnitude so far (located exactly inside steps), A.
    #[must_use]
    pub fn peak_current_a(&self) -> f64 {
        self.peak_current_a
    }

    /// Highest bus voltage so far (located exactly inside steps), V.
    #[must_use]
    pub fn peak_bus_v(&self) -> f64 {
        self.peak_bus_v
    }

    /// Copper loss of the winding so far, `∫R_w·i² dt`, J.
    #[must_use]
    pub fn copper_loss_j(&self) -> f64 {
        self.copper_j
    }

    /// Energy the bridge returned to the bus so far, `∫v_b·max(−i_bus, 0) dt`, J.
    #[must_use]
    pub fn returned_energy_j(&self) -> f64 {
        self.returned_j
    }

    /// Charge the bridge returned to the bus so far, C.
    #[must_use]
    pub fn returned_charge_c(&self) -> f64 {
        self.returned_c
    }

    /// Net charge the bridge drew from the bus so far, C.
    #[must_use]
    pub fn bus_charge_c(&self) -> f64 {
        self.x[3]
    }

    /// The events so far.
    #[must_use]
    pub fn events(&self) -> &[MotorEvent] {
        &self.events
    }

    /// Clears the recorded peaks (the current and bus voltage now become the peaks).
    pub fn reset_peaks(&mut self) {
        self.peak_current_a = self.x[0].abs();
        self.peak_bus_v = self.x[2];
    }

    /// Loop resistance of the driven topologies (winding plus two switches), Ω.
    fn r_driven(&self) -> f64 {
        self.r_w + 2.0 * self.spec.switch_on_resistance_ohm
    }

    /// Sets the state: current, speed and bus voltage (the supply's conduction state follows
    /// from them). Non-finite values are refused (`false`).
    pub fn set_state(&mut self, current_a: f64, speed_rad_s: f64, bus_v: f64) -> bool {
        if !(current_a.is_finite() && speed_rad_s.is_finite() && bus_v.is_finite()) {
            return false;
        }
        self.x[0] = current_a;
        self.x[1] = if self.topo.jammed { 0.0 } else { speed_rad_s };
        self.x[2] = if self.spec.source_resistance_ohm == 0.0 && self.spec.supply_sinks {
            self.spec.supply_v
        } else {
            bus_v
        };
        self.topo.supply_on = self.spec.supply_sinks || self.x[2] <= self.spec.supply_v;
        self.enter_bridge(self.topo.bridge);
        self.reset_peaks();
        true
    }

    /// Puts the motor in its steady forward run at full supply with the load torque in force
    /// (source resistance included): `i = (b·V + k·T)/(k² + (R + R_s)·b)`.
    pub fn settle_forward(&mut self) {
        let s = &self.spec;
        let r = self.r_driven() + s.source_resistance_ohm;
        let (k, b, t) = (
            s.torque_constant_nm_per_a,
            s.friction_nm_s_per_rad,
            self.load_nm,
        );
        let den = k * k + r * b;
        let i = (b * s.supply_v + k * t) / den;
        let w = (k * s.supply_v - r * t) / den;
        let v = s.supply_v - s.source_resistance_ohm * i;
        self.topo.bridge = BridgeMode::Forward;
        self.set_state(i, w, v);
    }

    /// Sets the load profile (steps at or before the present time take effect at once).
    pub fn set_load_profile(&mut self, profile: LoadProfile) {
        let mut steps: Vec<(f64, f64)> = profile
            .steps
            .iter()
            .copied()
            .filter(|(t, v)| t.is_finite() && v.is_finite())
            .collect();
        steps.sort_by(|a, b| a.0.total_cmp(&b.0));
        self.jam_pending = profile.jam_at_s.filter(|t| t.is_finite());
        self.profile = LoadProfile {
            steps,
            jam_at_s: self.jam_pending,
        };
        self.next_step = 0;
        self.apply_schedule();
    }

    /// Sets the load torque now, N·m. Non-finite values are refused (`false`).
    pub fn set_load_torque_nm(&mut self, torque_nm: f64) -> bool {
        if torque_nm.is_finite() {
            self.load_nm = torque_nm;
            true
        } else {
            false
        }
    }

    /// Locks the rotor now.
    pub fn jam(&mut self) {
        if !self.topo.jammed {
            self.topo.jammed = true;
            self.x[1] = 0.0;
            self.events.push(MotorEvent {
                t_s: self.t,
                kind: MotorEventKind::Jammed,
            });
            // A coasting winding may now see a different back-EMF.
            self.enter_bridge(self.topo.bridge);
        }
    }

    /// Opens the winding now (a broken lead or brush): the current drops to zero at once (the
    /// energy of the winding's inductance is not tracked) and no current flows from then on.
    pub fn open_winding(&mut self) {
        if !self.topo.open {
            self.topo.open = true;
            self.x[0] = 0.0;
            self.topo.coast = Coast::Blocked;
        }
    }

    /// `true` once the winding is open.
    #[must_use]
    pub fn winding_open(&self) -> bool {
        self.topo.open
    }

    /// Shorts part of the winding now: its inductance and resistance (at 20 °C) are scaled by
    /// `inductance_factor` and `resistance_factor` (each in `(0, 1]`); the current is kept.
    /// Refused (`false`) for factors outside that range.
    pub fn scale_winding(&mut self, inductance_factor: f64, resistance_factor: f64) -> bool {
        let ok = |f: f64| f > 0.0 && f <= 1.0;
        if !(ok(inductance_factor) && ok(resistance_factor)) {
            return false;
        }
        self.spec.inductance_h *= inductance_factor;
        self.spec.r20_ohm *= resistance_factor;
        self.update_resistance();
        true
    }

    /// The motor, bridge and supply as they are now (faults and supply changes included).
    #[must_use]
    pub fn spec(&self) -> &MotorSpec {
        &self.spec
    }

    /// Sets the open-circuit supply voltage (sag, surge), V; negative or non-finite values are
    /// refused (`false`).
    pub fn set_supply_v(&mut self, v: f64) -> bool {
        if v.is_finite() && v >= 0.0 {
            self.spec.supply_v = v;
            if self.spec.source_resistance_ohm == 0.0 && self.topo.supply_on {
                self.x[2] = v;
            }
            if !self.spec.supply_sinks && self.x[2] > v {
                self.topo.supply_on = false;
            }
            true
        } else {
            false
        }
    }

    /// Makes the supply able (`true`) or unable to sink current.
    pub fn set_supply_sinks(&mut self, sinks: bool) {
        self.spec.supply_sinks = sinks;
        if sinks && !self.topo.supply_on {
            self.topo.supply_on = true;
            if self.spec.source_resistance_ohm == 0.0 {
                self.x[2] = self.spec.supply_v;
            }
        }
    }

    /// Sets the bridge mode at the present time.
    pub fn set_bridge(&mut self, mode: BridgeMode) {
        if mode != self.topo.bridge {
            self.enter_bridge(mode);
        }
    }

    fn enter_bridge(&mut self, mode: BridgeMode) {
        self.topo.bridge = mode;
        self.topo.coast = if self.x[0] > 0.0 {
            Coast::Positive
        } else if self.x[0] < 0.0 {
            Coast::Negative
        } else {
            Coast::Blocked
        };
        if mode == BridgeMode::Coast && self.topo.coast == Coast::Blocked {
            self.check_conduction();
        }
        // With a stiff supply that cannot sink, a returning current lifts the bus at once.
        if !self.spec.supply_sinks
            && self.spec.source_resistance_ohm == 0.0
            && self.topo.supply_on
            && self.bus_current(&self.x) < 0.0
        {
            self.topo.supply_on = false;
            self.events.push(MotorEvent {
                t_s: self.t,
                kind: MotorEventKind::SupplyBlocks,
            });
        }
    }

    /// From blocked coast: the diodes conduct when the back-EMF exceeds the bus plus two drops.
    fn check_conduction(&mut self) {
        let e = self.spec.torque_constant_nm_per_a * self.x[1];
        let lim = self.x[2] + 2.0 * self.spec.diode_drop_v;
        self.topo.coast = if e > lim {
            Coast::Negative
        } else if -e > lim {
            Coast::Positive
        } else {
            Coast::Blocked
        };
    }

    /// `(s_u, c_u, s_b, R)`: `u = s_u·v_b + c_u`, `i_bus = s_b·i`, loop resistance.
    fn drive_terms(&self) -> (f64, f64, f64, f64) {
        let vd2 = 2.0 * self.spec.diode_drop_v;
        if self.topo.open {
            return (0.0, 0.0, 0.0, self.r_w);
        }
        match (self.topo.bridge, self.topo.coast) {
            (BridgeMode::Forward, _) => (1.0, 0.0, 1.0, self.r_driven()),
            (BridgeMode::Reverse, _) => (-1.0, 0.0, -1.0, self.r_driven()),
            (BridgeMode::Brake, _) => (0.0, 0.0, 0.0, self.r_driven()),
            (BridgeMode::Coast, Coast::Positive) => (-1.0, -vd2, -1.0, self.r_w),
            (BridgeMode::Coast, Coast::Negative) => (1.0, vd2, 1.0, self.r_w),
            (BridgeMode::Coast, Coast::Blocked) => (0.0, 0.0, 0.0, self.r_w),
        }
    }

    fn bus_current(&self, x: &[f64; N]) -> f64 {
        self.drive_terms().2 * x[0]
    }

    fn blocked(&self) -> bool {
        self.topo.open
            || (self.topo.bridge == BridgeMode::Coast && self.topo.coast == Coast::Blocked)
    }

    /// The augmented matrix of the topology in force.
    fn matrix(&self) -> Mat<N> {
        let s = &self.spec;
        let (su, cu, sb, r) = self.drive_terms();
        let (l, k, j, b) = (
            s.inductance_h,
            s.torque_constant_nm_per_a,
            s.inertia_kg_m2,
            s.friction_nm_s_per_rad,
        );
        let mut m = [[0.0; N]; N];
        if !self.blocked() {
            m[0] = [-r / l, -k / l, su / l, 0.0, cu / l];
        }
        if !self.topo.jammed {
            m[1] = [k / j, -b / j, 0.0, 0.0, -self.load_nm / j];
        }
        let c = s.bus_capacitance_f;
        let rs = s.source_resistance_ohm;
        if self.topo.supply_on {
            if rs > 0.0 {
                m[2] = [-sb / c, 0.0, -1.0 / (rs * c), 0.0, s.supply_v / (rs * c)];
            }
        } else {
            m[2] = [-sb / c, 0.0, 0.0, 0.0, 0.0];
        }
        m[3] = [sb, 0.0, 0.0, 0.0, 0.0];
        m
    }

    /// The fastest rate of the system, 1/s (module docs).
    fn rate(&self) -> f64 {
        let s = &self.spec;
        let (l, k, j, b, c) = (
            s.inductance_h,
            s.torque_constant_nm_per_a,
            s.inertia_kg_m2,
            s.friction_nm_s_per_rad,
            s.bus_capacitance_f,
        );
        let mut rate = self.r_driven().max(self.r_w) / l + b / j + k / (l * j).sqrt();
        if s.source_resistance_ohm > 0.0 {
            rate += 1.0 / (s.source_resistance_ohm * c);
        }
        if s.source_resistance_ohm > 0.0 || !s.supply_sinks {
            rate += 1.0 / (l * c).sqrt();
        }
        rate
    }

    /// The event functions watched in the topology in force, as coefficient rows.
    fn watches(&self) -> Vec<(Watch, [f64; N])> {
        let s = &self.spec;
        let mut w = Vec::new();
        let (_, _, sb, _) = self.drive_terms();
        match (self.topo.bridge, self.topo.coast) {
            _ if self.topo.open => {}
            (BridgeMode::Coast, Coast::Positive) => {
                w.push((Watch::CoastZero, [1.0, 0.0, 0.0, 0.0, 0.0]))
            }
            (BridgeMode::Coast, Coast::Negative) => {
                w.push((Watch::CoastZero, [-1.0, 0.0, 0.0, 0.0, 0.0]))
            }
            (BridgeMode::Coast, Coast::Blocked) if !self.topo.jammed => {
                let k = s.torque_constant_nm_per_a;
                let sign = if self.x[1] >= 0.0 { 1.0 } else { -1.0 };
                w.push((
                    Watch::DiodesConduct,
                    [0.0, -sign * k, 1.0, 0.0, 2.0 * s.diode_drop_v],
                ));
            }
            (BridgeMode::Forward | BridgeMode::Reverse, _) if self.x[0] != 0.0 => {
                let sign = if self.x[0] > 0.0 { 1.0 } else { -1.0 };
                w.push((Watch::Sign, [sign, 0.0, 0.0, 0.0, 0.0]));
            }
            _ => {}
        }
        if !s.supply_sinks {
            let row = if self.topo.supply_on {
                if s.source_resistance_ohm > 0.0 {
                    [0.0, 0.0, -1.0, 0.0, s.supply_v]
                } else {
                    [sb, 0.0, 0.0, 0.0, 0.0]
                }
            } else {
                [0.0, 0.0, 1.0, 0.0, -s.supply_v]
            };
            w.push((Watch::Supply, row));
        }
        w
    }

    fn exps(&mut self, h: f64) -> (Mat<N>, [Mat<N>; 5]) {
        let a = self.matrix();
        if let Some((_, _, e, nodes)) = self.cache.iter().find(|(m, hh, _, _)| *m == a && *hh == h)
        {
            return (*e, *nodes);
        }
        let e = expm(&a, h);
        let nodes = GL.map(|(c, _)| expm(&a, c * h));
        if self.cache.len() >= CACHE_ENTRIES {
            self.cache.remove(0);
        }
        self.cache.push((a, h, e, nodes));
        (e, nodes)
    }

    /// Applies load steps and the jam scheduled at or before now.
    fn apply_schedule(&mut self) {
        while let Some(&(ts, tq)) = self.profile.steps.get(self.next_step) {
            if ts > self.t {
                break;
            }
            self.load_nm = tq;
            self.next_step += 1;
            self.events.push(MotorEvent {
                t_s: self.t,
                kind: MotorEventKind::LoadStep(tq),
            });
        }
        if let Some(tj) = self.jam_pending
            && tj <= self.t
        {
            self.jam_pending = None;
            self.jam();
        }
    }

    /// The next scheduled time after now (load step, jam, thermal step).
    fn next_boundary(&self, t_end: f64) -> f64 {
        let mut b = t_end;
        if let Some(&(ts, _)) = self.profile.steps.get(self.next_step) {
            b = b.min(ts);
        }
        if let Some(tj) = self.jam_pending {
            b = b.min(tj);
        }
        if self.spec.thermal.is_some() {
            b = b.min(self.thermal_t + THERMAL_STEP_S);
        }
        b
    }

    /// Advances to `t_s` with the bridge as commanded. A time not after the present one, or
    /// not finite, leaves the plant unchanged.
    pub fn advance_to(&mut self, t_s: f64) {
        if finite("t_s", t_s).is_err() {
            return;
        }
        let mut guard = 0u64;
        while self.t < t_s && guard < 50_000_000 {
            guard += 1;
            self.apply_schedule();
            let boundary = self.next_boundary(t_s);
            let h_max = 0.25 / self.rate();
            let span = (boundary - self.t).max(0.0);
            let h = if span > h_max {
                // Whole multiples of h_max keep the cache hot.
                h_max
            } else {
                span
            };
            if h <= 0.0 {
                // A boundary at the present time: the schedule above applied it.
                self.maybe_thermal();
                if self.next_boundary(t_s) <= self.t {
                    break;
                }
                continue;
            }
            self.step(h, span > h_max);
            self.maybe_thermal();
        }
        if self.t < t_s && guard >= 50_000_000 {
            self.t = t_s;
        }
    }

    /// One step of at most `h`: to its end or to the first event inside it.
    fn step(&mut self, h: f64, full: bool) {
        let a = self.matrix();
        let x0 = self.x;
        let path = Path {
            a: &a,
            x0,
            h,
            orbit: OnceCell::new(),
        };
        // Full steps repeat: their exponentials are cached. A shorter step (to a boundary)
        // is seldom seen twice, and its points come from the orbit.
        let (x1, nodes) = if full {
            let (e, n) = self.exps(h);
            (mul_vec(&e, &x0), Some(n.map(|m| mul_vec(&m, &x0))))
        } else {
            (path.at(h), None)
        };
        // The earliest event inside the step.
        let mut first: Option<(f64, Watch)> = None;
        for (kind, c) in self.watches() {
            let g0 = dot(&c, &x0);
            let g1 = dot(&c, &x1);
            if g0 >= 0.0 && g1 < 0.0 {
                let tau = root(&path, h, |x| dot(&c, x));
                if first.is_none_or(|(t, _)| tau < t) {
                    first = Some((tau, kind));
                }
            }
        }
        let dt = first.map_or(h, |(t, _)| t);
        let x_end = if first.is_some() { path.at(dt) } else { x1 };
        let nodes = nodes.filter(|_| first.is_none());
        self.integrate(&path, nodes, &x_end, dt);
        self.t += dt;
        self.x = x_end;
        self.x[4] = 1.0;
        if let Some((_, kind)) = first {
            self.fire(kind);
        }
    }

    /// Integrals and exact peaks over a step of length `dt` along `path` to `x1`; `nodes` are
    /// the states at the Gauss–Legendre nodes when known.
    fn integrate(&mut self, path: &Path<'_>, nodes: Option<[[f64; N]; 5]>, x1: &[f64; N], dt: f64) {
        let (a, x0) = (path.a, &path.x0);
        let nodes = nodes.unwrap_or_else(|| GL.map(|(c, _)| path.at(c * dt)));
        let sb = self.drive_terms().2;
        let returning = sb * (x0[0] + x1[0]) < 0.0;
        let mut copper = 0.0;
        let mut ret = 0.0;
        for ((_, w), x) in GL.iter().zip(&nodes) {
            copper += w * self.r_w * x[0] * x[0];
            if returning {
                ret += w * x[2] * (-sb * x[0]);
            }
        }
        self.copper_j += copper * dt;
        if returning {
            self.returned_j += ret * dt;
            self.returned_c += -(x1[3] - x0[3]);
        }
        // Exact extrema of |i| and v_b inside the step, from their linear derivatives.
        let mut peak_i = x1[0].abs();
        let mut peak_v = x1[2];
        for (row, is_current) in [(a[0], true), (a[2], false)] {
            let d0 = dot(&row, x0);
            let d1 = dot(&row, x1);
            if (d0 > 0.0 && d1 < 0.0) || (d0 < 0.0 && d1 > 0.0) {
                let s = if d0 > 0.0 { 1.0 } else { -1.0 };
                let tau = root(path, dt, |x| s * dot(&row, x));
                let xm = path.at(tau);
                if is_current {
                    peak_i = peak_i.max(xm[0].abs());
                } else {
                    peak_v = peak_v.max(xm[2]);
                }
            }
        }
        self.peak_current_a = self.peak_current_a.max(peak_i);
        self.peak_bus_v = self.peak_bus_v.max(peak_v);
    }

    fn fire(&mut self, kind: Watch) {
        let t_s = self.t;
        match kind {
            Watch::CoastZero => {
                self.x[0] = 0.0;
                self.topo.coast = Coast::Blocked;
                self.events.push(MotorEvent {
                    t_s,
                    kind: MotorEventKind::DiodesBlock,
                });
                self.check_conduction();
            }
            Watch::DiodesConduct => {
                self.check_conduction();
                if self.topo.coast == Coast::Blocked {
                    // Reached the threshold exactly: conduct in the direction the back-EMF drives.
                    self.topo.coast = if self.x[1] > 0.0 {
                        Coast::Negative
                    } else {
                        Coast::Positive
                    };
                }
                self.events.push(MotorEvent {
                    t_s,
                    kind: MotorEventKind::DiodesConduct,
                });
            }
            Watch::Supply => {
                self.topo.supply_on = !self.topo.supply_on;
                if self.topo.supply_on && self.spec.source_resistance_ohm == 0.0 {
                    self.x[2] = self.spec.supply_v;
                }
                self.events.push(MotorEvent {
                    t_s,
                    kind: if self.topo.supply_on {
                        MotorEventKind::SupplyConducts
                    } else {
                        MotorEventKind::SupplyBlocks
                    },
                });
            }
            Watch::Sign => {
                // Only a split: the returned-energy integrand changes sign here.
                self.x[0] = 0.0;
                if !self.spec.supply_sinks
                    && self.spec.source_resistance_ohm == 0.0
                    && self.topo.supply_on
                {
                    // From here the bridge returns current: a stiff supply that cannot sink
                    // blocks at once.
                    let a = self.matrix();
                    if self.drive_terms().2 * dot(&a[0], &self.x) < 0.0 {
                        self.topo.supply_on = false;
                        self.events.push(MotorEvent {
                            t_s,
                            kind: MotorEventKind::SupplyBlocks,
                        });
                    }
                }
            }
        }
    }

    fn maybe_thermal(&mut self) {
        let Some(th) = self.spec.thermal else {
            return;
        };
        if self.t >= self.thermal_t + THERMAL_STEP_S {
            let dt = self.t - self.thermal_t;
            let p = (self.copper_j - self.thermal_e) / dt;
            self.temp_c = th.step(self.temp_c, p, dt);
            self.thermal_t = self.t;
            self.thermal_e = self.copper_j;
            self.update_resistance();
        }
    }

    /// PWM from now to `until_s`: periods of `period_s` starting with `direction` (forward or
    /// reverse) on for `duty·period_s`, then brake (slow decay) or coast (fast decay) for the
    /// rest. Leaves the bridge in the mode of the last interval.
    ///
    /// # Errors
    ///
    /// `direction` not `Forward` or `Reverse` (named `direction`), `duty` outside `0 ..= 1`,
    /// `period_s` not positive; nothing is advanced then.
    pub fn advance_pwm(
        &mut self,
        direction: BridgeMode,
        duty: f64,
        period_s: f64,
        decay: Decay,
        until_s: f64,
    ) -> Result<(), Error> {
        if !matches!(direction, BridgeMode::Forward | BridgeMode::Reverse) {
            return Err(Error::OutOfRange {
                param: "direction",
                value: 0.0,
                min: 1.0,
                max: 2.0,
            });
        }
        let d = in_range("duty", duty, 0.0, 1.0)?;
        let period = positive("period_s", period_s)?;
        finite("until_s", until_s)?;
        let off = match decay {
            Decay::Slow => BridgeMode::Brake,
            Decay::Fast => BridgeMode::Coast,
        };
        let mut k = 0u64;
        let t0 = self.t;
        while self.t < until_s && k < 100_000_000 {
            let start = t0 + k as f64 * period;
            let on_end = (start + d * period).min(until_s);
            let end = (start + period).min(until_s);
            if on_end > self.t {
                self.set_bridge(direction);
                self.advance_to(on_end);
            }
            if end > self.t {
                self.set_bridge(off);
                self.advance_to(end);
            }
            k += 1;
        }
        Ok(())
    }
}

fn dot(c: &[f64; N], x: &[f64; N]) -> f64 {
    c.iter().zip(x).map(|(a, b)| a * b).sum()
}

/// The state along one step of length `h`: `e^(A·τ)·x₀`, from the step's [`Orbit`] (made on
/// first use), or from a matrix exponential per point when the step is too long for it.
struct Path<'a> {
    a: &'a Mat<N>,
    x0: [f64; N],
    h: f64,
    orbit: OnceCell<Option<Orbit<N>>>,
}

impl Path<'_> {
    fn at(&self, tau: f64) -> [f64; N] {
        match self
            .orbit
            .get_or_init(|| Orbit::new(self.a, &self.x0, self.h))
        {
            Some(o) => o.at(tau),
            None => mul_vec(&expm(self.a, tau), &self.x0),
        }
    }
}

/// Bisection for the first zero of `g(e^(Aτ)x0)` in `(0, h]`, with `g > 0` at 0 and `< 0` at
/// `h` (an event function or a derivative, linear in the state); returns the upper end of the
/// final bracket (where `g ≤ 0`).
fn root(path: &Path<'_>, h: f64, g: impl Fn(&[f64; N]) -> f64) -> f64 {
    let (mut lo, mut hi) = (0.0, h);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if g(&path.at(mid)) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    hi
}

#[cfg(test)]
mod tests {
    use super::*;

    fn vent() -> MotorPlant {
        // Vent motor of the reference sheet (CHECKS C5.1, invented demo values).
        let mut spec = MotorSpec::new(2e-3, 1.5, 0.03, 2e-5);
        spec.friction_nm_s_per_rad = 1e-6;
        MotorPlant::new(spec).unwrap()
    }

    #[test]
    fn settled_run_is_steady() {
        let mut p = vent();
        p.set_load_torque_nm(0.02);
        p.settle_forward();
        let (i, w) = (p.current_a(), p.speed_rad_s());
        p.advance_to(0.05);
        assert!((p.current_a() - i).abs() < 1e-9 && (p.speed_rad_s() - w).abs() < 1e-7);
        // CHECKS C5.1: 366.057 rad/s, 0.678869 A.
        assert!((w - 366.057).abs() < 1e-3 && (i - 0.678869).abs() < 1e-6);
    }

    #[test]
    fn jam_locks_the_rotor_and_the_current_rises_to_stall() {
        let mut p = vent();
        p.set_load_profile(LoadProfile {
            steps: vec![(0.0, 0.02)],
            jam_at_s: Some(0.1),
        });
        p.set_bridge(BridgeMode::Forward);
        p.advance_to(0.2);
        assert!(p.jammed() && p.speed_rad_s() == 0.0);
        // 100 ms after the jam the current is at V/R = 8 A (τ_e = 1.33 ms).
        assert!((p.current_a() - 8.0).abs() < 1e-9, "{}", p.current_a());
        assert!(
            p.events()
                .iter()
                .any(|e| e.kind == MotorEventKind::Jammed && e.t_s == 0.1)
        );
    }

    #[test]
    fn an_open_winding_carries_no_current_and_the_rotor_coasts_down() {
        let mut p = vent();
        p.set_load_torque_nm(0.02);
        p.settle_forward();
        let w0 = p.speed_rad_s();
        p.open_winding();
        assert!(p.winding_open() && p.current_a() == 0.0);
        p.set_bridge(BridgeMode::Forward);
        p.advance_to(0.01);
        assert_eq!(p.current_a(), 0.0);
        // No torque from the winding: J dω/dt = −b·ω − T, so after 10 ms the speed is
        // (w0 + T/b)·e^(−b·t/J) − T/b (first-order ODE, closed form).
        let (b, t, j) = (1e-6, 0.02, 2e-5);
        let want = (w0 + t / b) * (-b * 0.01 / j).exp() - t / b;
        assert!(
            (p.speed_rad_s() - want).abs() < 1e-9 * w0,
            "{} {want}",
            p.speed_rad_s()
        );
    }

    #[test]
    fn shorted_turns_lower_the_winding_and_raise_the_stall_current() {
        let mut p = vent();
        assert!(!p.scale_winding(1.5, 0.5) && !p.scale_winding(0.5, 0.0));
        assert!(p.scale_winding(0.5, 0.5));
        assert!(
            (p.spec().r20_ohm - 0.75).abs() < 1e-15 && (p.spec().inductance_h - 1e-3).abs() < 1e-15
        );
        p.jam();
        p.set_bridge(BridgeMode::Forward);
        p.advance_to(0.1);
        // Locked rotor: V/R with the remaining resistance (τ_e unchanged: L and R halved).
        assert!(
            (p.current_a() - 12.0 / 0.75).abs() < 1e-9,
            "{}",
            p.current_a()
        );
    }

    #[test]
    fn refuses_bad_values() {
        let mut s = MotorSpec::new(2e-3, 1.5, 0.03, 2e-5);
        s.bus_capacitance_f = 0.0;
        assert_eq!(MotorPlant::new(s).unwrap_err().param(), "bus_capacitance_f");
        let s = MotorSpec::new(2e-3, f64::NAN, 0.03, 2e-5);
        assert_eq!(MotorPlant::new(s).unwrap_err().param(), "r20_ohm");
        let mut p = vent();
        assert!(
            p.advance_pwm(BridgeMode::Brake, 0.5, 1e-4, Decay::Fast, 1e-3)
                .is_err()
        );
        assert!(
            p.advance_pwm(BridgeMode::Forward, 1.5, 1e-4, Decay::Fast, 1e-3)
                .is_err()
        );
        assert!(!p.set_state(f64::NAN, 0.0, 12.0));
    }
}
