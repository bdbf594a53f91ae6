//! The only unsafe code of deltakin: C pointers to references.
//!
//! Every entry point checks each pointer for null here before it touches
//! it. What cannot be checked is the caller's side of the contract, stated
//! once in the header and here: a non-null pointer points to a live,
//! properly aligned object of the declared C type that nothing else
//! accesses during the call (no other thread, no interrupt handler using
//! the same object).

use core::ptr;

use crate::status::DeltakinStatus;
use crate::storage::Slot;

/// A shared reference to `*p`, or `NullPointer`.
///
/// # Safety
/// `p` is null or points to a live, aligned `T` not written during the
/// call.
pub(crate) unsafe fn input<'a, T>(p: *const T) -> Result<&'a T, DeltakinStatus> {
    // SAFETY: non-null, and the caller guarantees a live aligned T with no
    // writer during the call.
    unsafe { p.as_ref() }.ok_or(DeltakinStatus::NullPointer)
}

/// An exclusive reference to `*p`, or `NullPointer`.
///
/// # Safety
/// `p` is null or points to a live, aligned `T` nothing else accesses
/// during the call.
pub(crate) unsafe fn output<'a, T>(p: *mut T) -> Result<&'a mut T, DeltakinStatus> {
    // SAFETY: non-null, and the caller guarantees a live aligned T with no
    // other access during the call. Output structs are plain integers and
    // floats, valid for any bit pattern, so a fresh C buffer is a valid T.
    unsafe { p.as_mut() }.ok_or(DeltakinStatus::NullPointer)
}

/// The value held in storage `s`, or `NullPointer` / `NotInitialised`.
///
/// # Safety
/// `s` is null or points to a live, aligned storage struct not written
/// during the call.
pub(crate) unsafe fn held<'a, S: Slot>(s: *const S) -> Result<&'a S::Value, DeltakinStatus> {
    // SAFETY: as `input`.
    let storage = unsafe { input(s) }?;
    if tag_of(storage) != S::TAG {
        return Err(DeltakinStatus::NotInitialised);
    }
    // SAFETY: the tag is only written by `store`, after writing a valid
    // `S::Value` at the body, whose size and alignment suffice (const
    // asserts in `storage.rs`); the value lives as long as the storage.
    Ok(unsafe { &*body(s).cast::<S::Value>() })
}

/// The value held in storage `s`, mutable.
///
/// # Safety
/// `s` is null or points to a live, aligned storage struct nothing else
/// accesses during the call.
pub(crate) unsafe fn held_mut<'a, S: Slot>(s: *mut S) -> Result<&'a mut S::Value, DeltakinStatus> {
    // SAFETY: as `input`.
    let storage = unsafe { input(s.cast_const()) }?;
    if tag_of(storage) != S::TAG {
        return Err(DeltakinStatus::NotInitialised);
    }
    // SAFETY: as in `held`, and the caller guarantees exclusive access.
    Ok(unsafe { &mut *body(s.cast_const()).cast_mut().cast::<S::Value>() })
}

/// Writes `value` into storage `s` and tags it valid. On failure the
/// caller clears the tag with [`clear`] first, so storage that failed to
/// initialise is refused afterwards.
///
/// # Safety
/// `s` points (non-null, checked by the caller) to a live, aligned storage
/// struct nothing else accesses during the call.
pub(crate) unsafe fn store<S: Slot>(s: *mut S, value: S::Value) {
    // SAFETY: the body has room and alignment for `S::Value` (const
    // asserts in `storage.rs`); `ptr::write` does not read or drop the old
    // contents (core values are `Copy` or plain data without `Drop`).
    unsafe {
        ptr::write(body(s.cast_const()).cast_mut().cast::<S::Value>(), value);
        ptr::write(s.cast::<u32>(), S::TAG);
    }
}

/// Clears the tag of storage `s`.
///
/// # Safety
/// As [`store`].
pub(crate) unsafe fn clear<S: Slot>(s: *mut S) {
    // SAFETY: every storage struct is `repr(C)` with the `u32` tag first.
    unsafe { ptr::write(s.cast::<u32>(), 0) };
}

/// The tag word: the first `u32` of every storage struct.
fn tag_of<S: Slot>(s: &S) -> u32 {
    // SAFETY: every storage struct is `repr(C)` with the `u32` tag first.
    unsafe { ptr::read(ptr::from_ref(s).cast::<u32>()) }
}

/// The body: 8 bytes into every storage struct.
fn body<S: Slot>(s: *const S) -> *const u8 {
    s.cast::<u8>().wrapping_add(8)
}
