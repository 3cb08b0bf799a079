//! The plant: f64 models of the coil drive and the boost stage that the firmware under test
//! switches, integrated accurately enough to serve as the oracle of the closed-loop checks.
//!
//! # Parts
//!
//! - [`inductance`]: saturating inductance in flux-linkage form (linear, knee or table curve).
//! - [`thermal`]: first-order thermal model of the winding, feeding back into its resistance.
//! - [`coil_drive`]: a low-side switched coil with every clamp network, a switch with
//!   on-resistance and breakdown (avalanche energy recorded), supply source resistance and shunt.
//! - [`armature_motion`]: the moving armature's mechanics (spring, damping, load, end stops
//!   with bounce, lift-off and release, faults) and its events and strokes, shared by:
//! - [`armature`]: a coil whose armature moves (position and velocity coupled to the flux
//!   linkage through the gap inductance of [`gap_magnet`]), driven through a switch with a
//!   freewheel diode (standalone);
//! - [`coil_drive`] with an armature (`CoilDrive::with_armature`): the same coupling inside the
//!   closed loop's coil drive, with every clamp network, PWM, supply, shunt and heating.
//! - [`boost`]: a boost stage with a saturating inductor and DCR, switch, diode that blocks
//!   reverse current (DCM), output capacitor with ESR and a resistive load.
//! - [`motor`]: a brushed DC motor on an H-bridge (drive both ways, brake, coast through the
//!   diodes, PWM with either decay), load torque profile with a jam, copper heating, supply
//!   with source resistance and bus capacitor that may be unable to sink current; in the
//!   closed loop behind [`crate::closed_loop::MotorBridge`].
//!
//! # Integration
//!
//! Time is split into segments at every switch edge the harness commands (exact tick and PWM
//! times) and at every event of the circuit itself (a diode stops conducting at zero current,
//! a clamp starts or stops, the switch starts or stops avalanching). Inside a segment the
//! topology is fixed:
//!
//! - **linear segments** (constant inductance) are propagated exactly: one-state segments by the
//!   closed form of the first-order step response, including the exact integrals `∫i dt` and
//!   `∫i² dt` from which every element's energy follows; two-state segments (the ringing of an
//!   unclamped switch, the boost stage) by the matrix exponential of the augmented state matrix
//!   (module `linalg`), with events located by Newton's method on the exact solution;
//! - **nonlinear segments** (saturating inductance) by the project's own embedded
//!   Dormand–Prince 5(4) integrator with error control and event location (module `rk`), with the
//!   energy integrals carried as extra states.
//!
//! Accuracy (asserted in `host-harness/tests/plant_closed_forms.rs` and `plant_reference.rs`):
//! on linear cases decay times, energies per element and waveforms agree with the closed forms
//! of docs/references.md section 2 (C2.1 to C2.6) and section 1 (C1.1, C1.3) to 1e-7 relative, peak
//! voltages to 1e-9; the energy balance closes to 1e-10. Nonlinear segments run at relative
//! tolerance 1e-12 (coil) and 1e-10 (boost) and agree with an outside general-purpose solver (`ode_solvers` Dop853) to
//! 1e-8 relative on a saturating coil and to 1e-6 of the peak on a boost start-up. The
//! armature plant runs at relative tolerance 1e-11 and agrees with Dop853 on the same coupled
//! equations and events (`host-harness/tests/plant_armature.rs`) to 1e-10 of the peak current
//! and 1 ps in every event time as asserted (below 1e-13 and 1e-15 s as measured); the coil
//! drive with an armature agrees with Dop853 with zener, active and resistor clamps
//! (`host-harness/tests/plant_coil_armature.rs`) to 1e-9 of the peak current, 1e-9 of the
//! open gap and 10 ps in every event time as asserted (below 4e-14 of the peak, 1e-16 m and
//! 3e-15 s as measured).

pub mod armature;
pub mod armature_motion;
pub mod boost;
pub mod coil_drive;
pub mod gap_magnet;
pub mod inductance;
pub(crate) mod linalg;
pub mod motor;
pub(crate) mod rk;
pub mod thermal;

pub use armature::{
    ArmatureDrive, ArmatureDriveSpec, ArmatureEnergies, ArmatureEvent, ArmatureEventKind,
    ArmatureFaults, ArmatureMode, ArmatureSpec, EndStop, Stroke, Topology,
};
pub use armature_motion::Motion;
pub use boost::{Boost, BoostMode, BoostSpec};
pub use coil_drive::{
    Clamp, CoilDrive, CoilDriveSpec, CoilSpec, CoilState, Energies, PlantEvent, PlantEventKind,
    SwitchOff, SwitchSpec,
};
pub use gap_magnet::{GapCurve, GapMagnet};
pub use inductance::{InductanceCurve, Magnetisation};
pub use motor::{Decay, LoadProfile, MotorEvent, MotorEventKind, MotorPlant, MotorSpec};
pub use rk::StepUnderflow;
pub use thermal::Thermal;

use lenz::Error;

pub(crate) fn finite(param: &'static str, v: f64) -> Result<f64, Error> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(Error::NotFinite { param })
    }
}

pub(crate) fn positive(param: &'static str, v: f64) -> Result<f64, Error> {
    if finite(param, v)? > 0.0 {
        Ok(v)
    } else {
        Err(Error::NotPositive { param })
    }
}

pub(crate) fn non_negative(param: &'static str, v: f64) -> Result<f64, Error> {
    if finite(param, v)? >= 0.0 {
        Ok(v)
    } else {
        Err(Error::Negative { param })
    }
}

pub(crate) fn in_range(param: &'static str, v: f64, min: f64, max: f64) -> Result<f64, Error> {
    if finite(param, v)? >= min && v <= max {
        Ok(v)
    } else {
        Err(Error::OutOfRange {
            param,
            value: v as f32,
            min: min as f32,
            max: max as f32,
        })
    }
}
