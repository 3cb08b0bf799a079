//! The motor plant ([`MotorPlant`]) behind the closed loop's [`Plant`] interface.

use lenz::kernel::BridgeMode;

use super::motor::MotorProbe;
use super::{Actuation, Direction, Drive, Plant, Probe};
use crate::faults::Fault;
use crate::plant::{Decay, MotorPlant};

/// A [`MotorPlant`] switched by the closed loop.
///
/// # The bridge for an actuation
///
/// At each tick the loop hands over the actuation ([`Plant::set_actuation`]); at each switch
/// edge it sets the switch. The bridge mode follows:
///
/// | drive | switch on, by [`Direction`] | switch off |
/// |---|---|---|
/// | `Off` | — | `Coast` (all switches off) |
/// | `On` | `Forward`, `Reverse`, or `Brake` (both low sides) | — |
/// | `Pwm` | as `On` | the decay: `Brake` (slow) or `Coast` (fast) |
///
/// This is the bridge of [`lenz::drive::MotorDriver`] with slow decay (its PWM enable off
/// with both direction pins low is coast, full with both low is brake, a duty in a direction
/// drives for the duty and shorts the winding for the rest).
///
/// # What the loop sees
///
/// [`Probe`]: `current_a` the winding current, signed (positive forward); `supply_v`,
/// `output_v` and `switch_v` the bus voltage (the rail the supply channel reads; an off switch
/// of a leg blocks at most the bus). [`Plant::peak_current_a`] is the largest current
/// magnitude, [`Plant::peak_switch_v`] the highest bus voltage, both exact over the whole run.
///
/// Faults: `Jam` locks the rotor, `LoadTorque` sets the load torque, a supply sag or surge
/// sets the open-circuit supply, `SupplyCannotSink` makes the supply unable to take current
/// back, `OpenWinding` opens the winding, `ShortedWinding` scales its inductance and resistance; the sensor faults act on the readings. The coil faults, the
/// stuck switch and a boost load step do not apply.
#[derive(Debug, Clone)]
pub struct MotorBridge {
    plant: MotorPlant,
    decay: Decay,
    direction: Direction,
    pwm: bool,
    peak_current_a: f64,
    peak_bus_v: f64,
}

impl MotorBridge {
    /// The motor behind a bridge whose PWM off intervals decay as `decay`.
    #[must_use]
    pub fn new(plant: MotorPlant, decay: Decay) -> MotorBridge {
        MotorBridge {
            peak_current_a: plant.peak_current_a(),
            peak_bus_v: plant.peak_bus_v(),
            plant,
            decay,
            direction: Direction::Forward,
            pwm: false,
        }
    }

    /// The motor plant.
    #[must_use]
    pub fn plant(&self) -> &MotorPlant {
        &self.plant
    }

    /// The motor plant, to set it up (load profile, state) before a run.
    pub fn plant_mut(&mut self) -> &mut MotorPlant {
        &mut self.plant
    }

    /// The decay of the PWM off intervals.
    #[must_use]
    pub fn decay(&self) -> Decay {
        self.decay
    }
}

impl Plant for MotorBridge {
    fn advance_to(&mut self, t_s: f64) {
        self.plant.advance_to(t_s);
    }

    fn set_actuation(&mut self, act: &Actuation) {
        self.direction = act.direction;
        self.pwm = matches!(act.drive, Drive::Pwm { .. });
    }

    fn set_switch(&mut self, on: bool) {
        let mode = if on {
            match self.direction {
                Direction::Forward => BridgeMode::Forward,
                Direction::Reverse => BridgeMode::Reverse,
                Direction::Brake => BridgeMode::Brake,
            }
        } else if self.pwm && self.decay == Decay::Slow {
            BridgeMode::Brake
        } else {
            BridgeMode::Coast
        };
        self.plant.set_bridge(mode);
    }

    fn probe(&self) -> Probe {
        let v = self.plant.bus_v();
        Probe {
            current_a: self.plant.current_a(),
            supply_v: v,
            output_v: v,
            switch_v: v,
        }
    }

    fn inject(&mut self, fault: &Fault) -> bool {
        match *fault {
            Fault::Jam => {
                self.plant.jam();
                true
            }
            Fault::LoadTorque { torque_nm } => self.plant.set_load_torque_nm(torque_nm),
            Fault::OpenWinding => {
                self.plant.open_winding();
                true
            }
            Fault::SupplyCannotSink => {
                self.plant.set_supply_sinks(false);
                true
            }
            Fault::ShortedWinding {
                inductance_factor,
                resistance_factor,
            } => self
                .plant
                .scale_winding(inductance_factor, resistance_factor),
            Fault::SupplySag { supply_v, .. } | Fault::SupplySurge { supply_v, .. } => {
                self.plant.set_supply_v(supply_v)
            }
            Fault::SensorStuck { .. } | Fault::SensorNoisy { .. } => true,
            Fault::ShortedCoil { .. }
            | Fault::ShortedTurns { .. }
            | Fault::OpenCoil
            | Fault::SwitchStuckOn
            | Fault::LoadStep { .. }
            | Fault::StuckArmature
            | Fault::SluggishArmature { .. }
            | Fault::ExcessLoad { .. } => false,
        }
    }

    fn supply_v(&self) -> f64 {
        self.plant.spec().supply_v
    }

    fn set_supply_v(&mut self, v: f64) -> bool {
        self.plant.set_supply_v(v)
    }

    fn peak_switch_v(&self) -> f64 {
        self.peak_bus_v.max(self.plant.peak_bus_v())
    }

    fn peak_current_a(&self) -> f64 {
        self.peak_current_a.max(self.plant.peak_current_a())
    }

    fn winding_temp_c(&self) -> Option<f64> {
        Some(self.plant.winding_temp_c())
    }

    fn winding_loss_j(&self) -> Option<f64> {
        Some(self.plant.copper_loss_j())
    }

    fn motor(&self) -> Option<MotorProbe> {
        Some(MotorProbe {
            speed_rad_s: self.plant.speed_rad_s(),
            bus_v: self.plant.bus_v(),
            peak_bus_v: self.peak_switch_v(),
            peak_current_since_mark_a: self.plant.peak_current_a(),
            winding_temp_c: self.plant.winding_temp_c(),
        })
    }

    fn motor_mark(&mut self) {
        self.peak_current_a = self.peak_current_a.max(self.plant.peak_current_a());
        self.peak_bus_v = self.peak_bus_v.max(self.plant.peak_bus_v());
        self.plant.reset_peaks();
    }
}
