//! The sense chains of a description as ADC channels: the *actual* chain of a run (gain and
//! offset errors, noise, the run's gain spread) for the plant side, and the *nominal* chain the
//! firmware assumes (the scaling between ADC counts and amperes or volts).

use crate::closed_loop::{AdcChannel, Sensors};
use crate::scenario::File;
use crate::scenario::run::{Params, tolerance_half_width};

/// The channels with the chain's errors and the run's gain draw `p.sense_gain`.
#[must_use]
pub fn actual(file: &File, p: &Params) -> Sensors {
    let s = &file.system.sense;
    channels(
        file,
        s.gain_error.get(),
        s.offset.get(),
        s.noise.get(),
        p.sense_gain,
    )
}

/// The nominal channels: what the firmware's scaling is computed from.
#[must_use]
pub fn nominal(file: &File) -> Sensors {
    channels(file, 0.0, 0.0, 0.0, 1.0)
}

fn channels(file: &File, gain_error: f64, offset: f64, noise: f64, k: f64) -> Sensors {
    let s = &file.system.sense;
    let ch = |volts_per_unit: f64, bias_v: f64| AdcChannel {
        bits: s.adc_bits as u8,
        vref_v: s.adc_reference.get(),
        volts_per_unit,
        bias_v,
        gain_error,
        offset_error_v: offset,
        noise_rms_lsb: noise,
    };
    Sensors {
        current: ch(s.shunt.get() * s.gain.get() * k, s.bias.get()),
        supply: ch(s.supply_divider.get(), 0.0),
        output: ch(s.output_divider.get(), 0.0),
    }
}

/// The worst-case errors of the firmware's readings against its nominal scaling, as
/// magnitudes: the chains' gain error (`[system.sense] gain_error`), the current chain's gain
/// spread (`[tolerances] sense_gain`, its half-width) and the ADC offset
/// (`[system.sense] offset`) through each scale.
pub(crate) struct ReadingBounds {
    /// Gain error of both chains (relative).
    pub gain_error: f64,
    /// Gain spread of the current chain (relative).
    pub current_gain_spread: f64,
    /// Offset of a current reading, A.
    pub current_offset_a: f64,
    /// Offset of a supply reading, V.
    pub supply_offset_v: f64,
}

/// The [`ReadingBounds`] of `file`.
pub(crate) fn reading_bounds(file: &File) -> ReadingBounds {
    let s = &file.system.sense;
    let n = nominal(file);
    let offset = s.offset.get().abs();
    ReadingBounds {
        gain_error: s.gain_error.get().abs(),
        current_gain_spread: file.tolerances.sense_gain.map_or(0.0, tolerance_half_width),
        current_offset_a: offset / n.current.volts_per_unit,
        supply_offset_v: offset / n.supply.volts_per_unit,
    }
}
