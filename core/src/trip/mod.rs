//! Overcurrent protection plans: instantaneous threshold, blanking, sense-chain scaling,
//! inverse-time curves and thermal overload.
//!
//! A shorted coil or a saturating inductor lets the current rise at `V/L`, and with a shorted
//! coil `L` is only the wiring's. The firmware samples at a finite rate and the switch opens
//! only after a delay, so the instantaneous threshold must sit low enough that the current
//! when the switch actually opens is still within what the switch survives, yet high enough
//! that inrush and normal peaks never trip it ([`ThresholdParams`], [`ShortedLoad`],
//! [`blanking_check`]). The threshold becomes ADC counts through the sense chain with its
//! tolerances ([`SenseChain`]). Slow overloads trip by an inverse-time curve
//! ([`InverseTime`]) or a thermal image of the winding ([`Thermal`]).
//!
//! The integer trip detector that runs these decisions per sample is
//! [`crate::kernel::TripConfig`].
//!
//! Each submodule derives its formulas in its docs:
//! - [`threshold`]: detection delay, worst-case rise, highest safe threshold, blanking;
//! - [`sense`]: sense-chain scaling and tolerance stack-up;
//! - [`curve`]: IEC 60255-151 / IEEE C37.112 inverse-time curves and the integral form;
//! - [`thermal`]: IEC 60255-149 thermal overload.

pub mod curve;
pub mod sense;
pub mod thermal;
pub mod threshold;

pub use curve::{Curve, CurveConstants, InverseTime, Segment};
pub use sense::{SenseChain, SenseCorner, SenseParams, TripCode};
pub use thermal::Thermal;
pub use threshold::{
    BlankingCheck, DetectionDelay, LimitedBy, Remedy, ShortedLoad, ThresholdParams, ThresholdPlan,
    blanking_check, min_on_time_s,
};
