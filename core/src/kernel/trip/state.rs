//! Per-channel state of the trip detector.

#[cfg(doc)]
use super::config::TripConfig;

/// `1.0` of the thermal state in Q24.
pub const THETA_ONE_Q24: u32 = 1 << 24;
/// Largest `k` of a block of `K = 2^k` samples: the block's sum of 16-bit readings then fits
/// 21 bits ([*Blocks*](TripConfig#blocks)).
pub const BLOCK_LOG2_MAX: u8 = 5;

/// Per-channel trip detector state: 32 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripState {
    pub(super) tick: u32,
    pub(super) history: u32,
    /// Bits 0..=20: the sum of the block's readings; bit 21: switch on at the previous sample;
    /// bits 22..=23: phase (running, waiting, latched, blanking)
    /// at the previous sample; bits 24..=31: retries used. One word for the fast path.
    pub(super) sum_ctl: u32,
    /// Sum of `r² >> 5` over the block.
    pub(super) sum_sq: u32,
    pub(super) inverse_q32: u32,
    pub(super) theta_q24: u32,
    /// The last reading (bits 0..=15) and the low 16 bits of the tick at which the current
    /// run of equal readings with the switch on began (bits 16..=31): the stuck count is
    /// `tick − start` (mod 2¹⁶, held at 65535 once there), so a repeated reading stores
    /// nothing.
    pub(super) sense: u32,
    /// Blanking samples left while blanking, retry delay left while waiting.
    pub(super) timer: u16,
    /// θ below one Q24 LSB, Q16 of an LSB (error feedback).
    pub(super) theta_frac: u16,
}

pub(super) const SUM_MASK: u32 = (1 << 21) - 1;
pub(super) const PHASE_MASK: u32 = 0b11 << 22;
pub(super) const RUNNING: u32 = 0;
pub(super) const WAITING: u32 = 1 << 22;
pub(super) const LATCHED: u32 = 2 << 22;
pub(super) const BLANKING: u32 = 3 << 22;
pub(super) const PREV_ON: u32 = 1 << 21;
pub(super) const RETRY_SHIFT: u32 = 24;

impl Default for TripState {
    fn default() -> Self {
        Self::new()
    }
}

impl TripState {
    /// A cold, untripped channel.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            tick: 0,
            history: 0,
            sum_ctl: 0,
            sum_sq: 0,
            inverse_q32: 0,
            theta_q24: 0,
            // Last reading 0, run started at tick −1: a first reading of 0 counts one.
            sense: 0xFFFF_0000,
            timer: 0,
            theta_frac: 0,
        }
    }

    /// A channel whose winding starts at thermal state `theta_q24` (Q24, see
    /// [`theta_q24_from_f32`]), for example after a prior load.
    #[must_use]
    pub const fn with_theta_q24(theta_q24: u32) -> Self {
        let mut s = Self::new();
        s.theta_q24 = theta_q24;
        s
    }

    /// Thermal state, Q24 (`THETA_ONE_Q24` trips); updated at the end of each block.
    #[must_use]
    pub const fn theta_q24(&self) -> u32 {
        self.theta_q24
    }

    /// Inverse-time accumulator, Q32 fraction of one (trips when it would reach `2³²`);
    /// updated at the end of each block.
    #[must_use]
    pub const fn inverse_q32(&self) -> u32 {
        self.inverse_q32
    }

    /// Samples seen (wraps).
    #[must_use]
    pub const fn tick(&self) -> u32 {
        self.tick
    }

    /// Retries used since the last reset.
    #[must_use]
    pub const fn retries(&self) -> u8 {
        (self.sum_ctl >> RETRY_SHIFT) as u8
    }

    /// Latched off until reset.
    #[must_use]
    pub const fn is_latched(&self) -> bool {
        self.sum_ctl & PHASE_MASK == LATCHED
    }

    /// Off and waiting for a retry.
    #[must_use]
    pub const fn is_waiting(&self) -> bool {
        self.sum_ctl & PHASE_MASK == WAITING
    }

    /// Clears a latch or a pending retry and the retry count; the thermal state, the tick
    /// and the block sums are kept (the winding does not cool by a reset). For a cold channel
    /// start from [`TripState::new`].
    pub fn reset(&mut self) {
        let phase = self.sum_ctl & PHASE_MASK;
        if phase == WAITING || phase == LATCHED {
            // A pending retry ends; blanking in progress goes on.
            self.timer = 0;
            self.sum_ctl &= SUM_MASK | PREV_ON;
        } else {
            self.sum_ctl &= SUM_MASK | PREV_ON | PHASE_MASK;
        }
        self.history = 0;
        self.inverse_q32 = 0;
        // The stuck count restarts: the run begins at the last sample.
        self.sense = (self.sense & 0xFFFF) | (self.tick.wrapping_sub(1) << 16);
    }
}

/// Plan side: a thermal state to Q24 (rounded, saturating; NaN and negatives give 0).
#[must_use]
pub fn theta_q24_from_f32(theta: f32) -> u32 {
    libm::round(theta as f64 * f64::from(THETA_ONE_Q24)) as u32
}
