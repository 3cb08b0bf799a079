//! Checked access to the caller's pointers, and the opaque storage of configurations and
//! states.
//!
//! Every pointer is checked for null and alignment before any is used, so a call with a bad
//! argument returns its status without reading or writing anything. The opaque C structs
//! (`LenzXxxConfig`, `LenzXxxState`) are arrays of `uint32_t` exactly as large as the Rust
//! value they hold and at least as aligned (checked at compile time by [`opaque!`]); the Rust
//! value is read and written in place through a cast pointer.

use core::marker::PhantomData;

use crate::LenzStatus;

/// Null and alignment check of one pointer.
fn check<T>(p: *const T) -> Result<(), LenzStatus> {
    if p.is_null() {
        Err(LenzStatus::NullPointer)
    } else if !p.is_aligned() {
        Err(LenzStatus::Misaligned)
    } else {
        Ok(())
    }
}

/// A C struct that holds a Rust value of type `Inner` in opaque storage of the same size.
///
/// # Safety
///
/// `Self` is `#[repr(C)]`, of exactly `size_of::<Inner>()` bytes rounded up to whole words,
/// and at least as aligned as `Inner` (the [`opaque!`] macro asserts both).
pub(crate) unsafe trait Opaque {
    /// The Rust value held.
    type Inner;
}

/// Implements [`Opaque`] for a storage struct and asserts its size and alignment.
macro_rules! opaque {
    ($storage:ty, $inner:ty, $words:expr) => {
        const _: () = assert!(
            ::core::mem::size_of::<$inner>().div_ceil(4) == $words
                && ::core::mem::size_of::<$storage>() == 4 * $words
                && ::core::mem::align_of::<$inner>() <= ::core::mem::align_of::<$storage>(),
            "opaque storage does not fit the Rust value: update its size constant"
        );
        // SAFETY: `$storage` is `#[repr(C)]` with `$words` words, size and alignment asserted
        // above.
        unsafe impl $crate::opaque::Opaque for $storage {
            type Inner = $inner;
        }
    };
}
pub(crate) use opaque;

/// A shared reference to the value a caller's pointer points to.
///
/// # Safety
///
/// A non-null, aligned `p` points to a valid, initialised `T` that nothing writes during the
/// call.
pub(crate) unsafe fn get<'a, T>(p: *const T) -> Result<&'a T, LenzStatus> {
    check(p)?;
    // SAFETY: non-null and aligned (checked above); valid and not written meanwhile by the
    // caller's contract.
    Ok(unsafe { &*p })
}

/// The Rust value held by an initialised opaque struct.
///
/// # Safety
///
/// A non-null, aligned `p` points to storage initialised by its `init` function, which nothing
/// writes during the call.
pub(crate) unsafe fn inner<'a, S: Opaque>(p: *const S) -> Result<&'a S::Inner, LenzStatus> {
    check(p)?;
    // SAFETY: the storage is as large and as aligned as `Inner` (trait contract) and holds an
    // `Inner` written by `init` (caller's contract); not written meanwhile.
    Ok(unsafe { &*p.cast::<S::Inner>() })
}

/// The Rust value held by an initialised opaque struct, for update.
///
/// # Safety
///
/// As [`inner`], and nothing else reads or writes the storage during the call.
pub(crate) unsafe fn inner_mut<'a, S: Opaque>(p: *mut S) -> Result<&'a mut S::Inner, LenzStatus> {
    check(p)?;
    // SAFETY: as in `inner`; exclusive for the call by the caller's contract.
    Ok(unsafe { &mut *p.cast::<S::Inner>() })
}

/// A checked out pointer: writes a `T` without reading the old contents (which may be
/// uninitialised).
pub(crate) struct Out<'a, T> {
    p: *mut T,
    _life: PhantomData<&'a mut T>,
}

impl<T> Out<'_, T> {
    /// Checks `p`.
    ///
    /// # Safety
    ///
    /// A non-null, aligned `p` is valid for writes of a `T` and nothing else reads or writes
    /// it during the call.
    pub(crate) unsafe fn new(p: *mut T) -> Result<Self, LenzStatus> {
        check(p)?;
        Ok(Self {
            p,
            _life: PhantomData,
        })
    }

    /// Writes the value.
    pub(crate) fn set(self, v: T) {
        // SAFETY: checked non-null and aligned in `new`, valid for writes by its contract.
        unsafe { self.p.write(v) }
    }
}

impl<S: Opaque> Out<'_, S> {
    /// Writes the Rust value into opaque storage.
    pub(crate) fn set_inner(self, v: S::Inner) {
        // SAFETY: checked in `new`; the storage is as large and as aligned as `Inner` (trait
        // contract). The write initialises it without reading it.
        unsafe { self.p.cast::<S::Inner>().write(v) }
    }
}
