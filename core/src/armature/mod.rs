//! The moving armature of a solenoid valve, lock or relay: inductance versus air gap, the
//! magnetic force from co-energy, and the currents that pull the armature in and hold it.
//!
//! # Parts
//!
//! - [`GapInductance`]: `L(x)` of the coil at air gap `x`, in the reluctance form
//!   `L(x) = L₀/(1 + x/x₀)` or from a measured [`GapTable`].
//! - [`MagneticCircuit`]: flux linkage, co-energy and pull force versus current and gap, with
//!   optional saturation of the flux linkage; `F = ½·i²·|dL/dx|` unsaturated.
//! - [`Mechanics`]: travel between the stops, return spring with preload, constant load.
//! - [`Armature`]: magnet plus mechanics: the **minimum pull-in current** from the open stop
//!   and the **must-hold current** at the closed stop ([`PullIn`]).
//! - [`ArmatureSpread`]: both as worst-case bounds over the tolerances of inductance, stroke,
//!   spring and load ([`ArmatureCorner`]).
//!
//! # Sources
//!
//! The magnetic-circuit form of `L(x)` and the force from co-energy at constant current,
//! `f = ∂W′(i, x)/∂x`, are those of A. E. Fitzgerald, C. Kingsley, S. D. Umans, *Electric
//! Machinery*, ch. 1 (magnetic circuits) and ch. 3 (electromechanical energy conversion),
//! cited from memory. The saturation form is our own modelling choice (see
//! [`MagneticCircuit`]). Checks against a numerical derivative of the co-energy and against
//! the values of the project's reference sheet are in `tests/armature_reference.rs`.
//!
//! Units are SI: metre, newton, henry, ampere, volt-second for flux linkage. The gap `x` is
//! the air gap, largest at the open stop.

mod circuit;
mod currents;
mod gap;
mod mechanics;
mod spread;

pub use circuit::{FORCE_MAX_N, MagneticCircuit, SATURATION_MAX_VS, SATURATION_MIN_VS};
pub use currents::{Armature, PullIn};
pub use gap::{GAP_MAX_M, GAP_TABLE_MAX_POINTS, GapInductance, GapTable, HALVING_GAP_MIN_M};
pub use mechanics::{Mechanics, SPRING_RATE_MAX_N_PER_M};
pub use spread::{ArmatureCorner, ArmatureSpread};
