//! ADC model of one sense channel.
//!
//! A physical value `x` (amperes or volts) passes the sense chain (`volts_per_unit`, plus a
//! bias `bias_v`, for example the offset of a shunt amplifier that keeps zero current off the
//! rail), then the converter's errors: gain error `(1 + gain_error)`, offset error
//! `offset_error_v`, and Gaussian noise of `noise_rms_lsb` LSB. The code is
//! `floor(v · 2^bits / V_ref + noise)` saturated to `0 ..= 2^bits − 1`: a reading at a rail
//! means "at or beyond", as on a real converter. Noise comes from a ChaCha8 generator seeded
//! per run, so every run is reproducible.
//!
//! The normal deviates are drawn by the ziggurat method (`rand_distr::StandardNormal`, one
//! 64-bit draw for all but about 1 % of the deviates), not by a transform with a logarithm and
//! a cosine per deviate: the ADC noise was a quarter of the closed loop's time. The stream of
//! a given seed is fixed within a version of lenz; it changed with this method (see the
//! changelog).

use rand::Rng;
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use serde::{Deserialize, Serialize};

/// One converter channel with its sense chain.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct AdcChannel {
    /// Resolution, bits (1 ..= 16).
    pub bits: u8,
    /// Reference voltage, V.
    pub vref_v: f64,
    /// Sense chain gain: volts at the converter per unit of the measured value.
    pub volts_per_unit: f64,
    /// Sense chain bias at the converter input, V.
    pub bias_v: f64,
    /// Relative gain error of the converter and chain (0.01 = +1 %).
    pub gain_error: f64,
    /// Offset error at the converter input, V.
    pub offset_error_v: f64,
    /// Noise, RMS, LSB.
    pub noise_rms_lsb: f64,
}

impl AdcChannel {
    /// Full-scale code.
    #[must_use]
    pub fn max_code(&self) -> u16 {
        ((1u32 << self.bits.clamp(1, 16)) - 1) as u16
    }

    /// Converts `x` with the channel's errors and `extra_noise_lsb` added noise.
    pub fn convert(&self, x: f64, extra_noise_lsb: f64, rng: &mut ChaCha8Rng) -> u16 {
        let v =
            (x * self.volts_per_unit + self.bias_v) * (1.0 + self.gain_error) + self.offset_error_v;
        let scale = (1u32 << self.bits.clamp(1, 16)) as f64 / self.vref_v;
        // Without extra noise √(σ²) is |σ| exactly (a correctly rounded square root), so the
        // root is taken only when two noises add.
        let sigma = if extra_noise_lsb == 0.0 {
            self.noise_rms_lsb.abs()
        } else {
            (self.noise_rms_lsb * self.noise_rms_lsb + extra_noise_lsb * extra_noise_lsb).sqrt()
        };
        let noise = if sigma > 0.0 {
            sigma * gaussian(rng)
        } else {
            0.0
        };
        let code = (v * scale + noise).floor();
        if code.is_nan() {
            return 0;
        }
        code.clamp(0.0, self.max_code() as f64) as u16
    }

    /// Nominal value per count (what the firmware assumes), in the unit of the measured value.
    #[must_use]
    pub fn units_per_count(&self) -> f64 {
        self.vref_v / (1u32 << self.bits.clamp(1, 16)) as f64 / self.volts_per_unit
    }

    /// Nominal code at zero input.
    #[must_use]
    pub fn zero_counts(&self) -> f64 {
        self.bias_v * (1u32 << self.bits.clamp(1, 16)) as f64 / self.vref_v
    }
}

/// Standard normal deviate (ziggurat, module docs).
fn gaussian(rng: &mut ChaCha8Rng) -> f64 {
    rng.sample(StandardNormal)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;

    #[test]
    fn scale_errors_and_reproducible_noise() {
        // CHECKS C4.2 sense chain: 12 bit, 3.3 V, 10 mΩ × 20 → 4.028320312 mA per LSB.
        let ch = AdcChannel {
            bits: 12,
            vref_v: 3.3,
            volts_per_unit: 0.010 * 20.0,
            bias_v: 0.0,
            gain_error: 0.0,
            offset_error_v: 0.0,
            noise_rms_lsb: 0.0,
        };
        assert!((ch.units_per_count() - 4.028320312e-3).abs() < 1e-12);
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        // Trip code for 8 A: ceil(8 / I_LSB) = 1986 (CHECKS C4.2): 8 A reads 1985.94 -> 1985.
        assert_eq!(ch.convert(8.0, 0.0, &mut rng), 1985);
        assert_eq!(ch.convert(100.0, 0.0, &mut rng), 4095);
        assert_eq!(ch.convert(-1.0, 0.0, &mut rng), 0);
        let noisy = AdcChannel {
            noise_rms_lsb: 2.0,
            ..ch
        };
        let run = |seed| {
            let mut r = ChaCha8Rng::seed_from_u64(seed);
            (0..2000)
                .map(|_| noisy.convert(4.0, 0.0, &mut r) as f64)
                .collect::<Vec<_>>()
        };
        let a = run(7);
        assert_eq!(a, run(7), "same seed, same readings");
        let mean = a.iter().sum::<f64>() / a.len() as f64;
        let var = a.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / a.len() as f64;
        // floor() of a 2-LSB Gaussian: mean 0.5 LSB low, variance 4 + 1/12.
        assert!(
            (mean - (4.0 / ch.units_per_count() - 0.5)).abs() < 0.2,
            "{mean}"
        );
        assert!((var - 4.083).abs() < 0.4, "{var}");
    }

    #[test]
    fn noise_deviates_are_standard_normal() {
        // 200 000 seeded deviates against the standard normal: mean 0, variance 1, and the
        // two-sided tail masses P(|z| > 1) = 0.3173, P(|z| > 2) = 0.0455, P(|z| > 3) = 0.0027
        // (standard normal table; common practice, no source). Bounds are about four standard
        // errors of each estimate.
        let n = 200_000;
        let mut rng = ChaCha8Rng::seed_from_u64(11);
        let z: Vec<f64> = (0..n).map(|_| gaussian(&mut rng)).collect();
        let mean = z.iter().sum::<f64>() / n as f64;
        let var = z.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
        assert!(mean.abs() < 0.01, "{mean}");
        assert!((var - 1.0).abs() < 0.013, "{var}");
        for (k, p) in [(1.0, 0.3173), (2.0, 0.0455), (3.0, 0.0027)] {
            let tail = z.iter().filter(|x| x.abs() > k).count() as f64 / n as f64;
            let se = (p * (1.0 - p) / n as f64).sqrt();
            assert!((tail - p).abs() < 4.0 * se + 1e-4, "P(|z| > {k}) = {tail}");
        }
    }
}
