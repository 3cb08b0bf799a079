//! A fixed-capacity log of the last trips.

use heapless::HistoryBuf;

use super::verdict::TripEvent;

/// Fixed-capacity log of the last `N` trips (oldest overwritten first), for diagnostics.
///
/// Size: `8·N` bytes of events plus the ring's write index and full flag.
///
/// # Examples
///
/// ```
/// use lenz::kernel::{Cause, TripEvent, TripLog};
/// let mut log = TripLog::<4>::new();
/// for tick in 0..6 {
///     log.record(TripEvent { tick, reading_counts: 4095, retry: 0, cause: Cause::Instantaneous });
/// }
/// assert_eq!(log.len(), 4);
/// assert_eq!(log.latest().map(|e| e.tick), Some(5));
/// assert_eq!(log.iter().next().map(|e| e.tick), Some(2));
/// ```
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripLog<const N: usize> {
    events: HistoryBuf<TripEvent, N>,
}

impl<const N: usize> Eq for TripLog<N> {}

impl<const N: usize> Default for TripLog<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> TripLog<N> {
    /// An empty log (`N > 0`, checked at compile time).
    #[must_use]
    pub const fn new() -> Self {
        Self {
            events: HistoryBuf::new(),
        }
    }

    /// Appends `event`, dropping the oldest when full.
    pub fn record(&mut self, event: TripEvent) {
        self.events.write(event);
    }

    /// The most recent trip.
    #[must_use]
    pub fn latest(&self) -> Option<&TripEvent> {
        self.events.recent()
    }

    /// The trips, oldest first.
    pub fn iter(&self) -> impl Iterator<Item = &TripEvent> {
        self.events.oldest_ordered()
    }

    /// Number of trips held.
    #[must_use]
    pub fn len(&self) -> usize {
        self.events.len()
    }

    /// No trip held.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.events.is_empty()
    }

    /// Forgets every trip.
    pub fn clear(&mut self) {
        self.events.clear();
    }
}

#[cfg(feature = "defmt")]
impl<const N: usize> defmt::Format for TripLog<N> {
    fn format(&self, f: defmt::Formatter) {
        defmt::write!(f, "TripLog {{ len: {}, events: [", self.len());
        for e in self.iter() {
            defmt::write!(f, "{}, ", e);
        }
        defmt::write!(f, "] }}");
    }
}
