//! The status every function returns.

/// What a call did: `LENZ_STATUS_OK`, or why it did nothing.
#[repr(i32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzStatus {
    /// Done; the out values are written.
    Ok = 0,
    /// A pointer argument was null; nothing was read or written.
    NullPointer = 1,
    /// A pointer argument was not aligned for its type; nothing was read or written.
    Misaligned = 2,
}

impl LenzStatus {
    /// The status of a call whose body returned `r`.
    pub(crate) fn of(r: Result<(), LenzStatus>) -> LenzStatus {
        match r {
            Ok(()) => LenzStatus::Ok,
            Err(e) => e,
        }
    }
}
