//! Status codes, their messages, and the boundary that every exported function runs inside.

use rotaframe::Error;

/// The result of every rotaframe C function. Values are fixed and never reused.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_status {
    /// Success; the outputs have been written.
    RF_STATUS_OK = 0,
    /// A required pointer argument was NULL.
    RF_STATUS_NULL_POINTER = 1,
    /// An input holds NaN or infinity.
    RF_STATUS_NON_FINITE = 2,
    /// A value is outside its allowed range (for example a latitude beyond ±π/2).
    RF_STATUS_OUT_OF_RANGE = 3,
    /// A quaternion's norm is too far from one.
    RF_STATUS_NOT_UNIT_QUATERNION = 4,
    /// A quaternion or direction vector has zero norm.
    RF_STATUS_ZERO_NORM = 5,
    /// A 3×3 matrix is not a proper rotation.
    RF_STATUS_NOT_ROTATION_MATRIX = 6,
    /// A latitude is too close to a pole for north-east-down rates.
    RF_STATUS_NEAR_POLE = 7,
    /// A position is too close to the Earth's centre for geodetic coordinates.
    RF_STATUS_NEAR_EARTH_CENTRE = 8,
    /// A value that must be strictly positive is not.
    RF_STATUS_NOT_POSITIVE = 9,
    /// Arguments are inconsistent (for example mismatched array lengths).
    RF_STATUS_INVALID_ARGUMENT = 10,
    /// An internal error was caught at the boundary (a bug in rotaframe; please report it).
    RF_STATUS_INTERNAL_ERROR = 11,
    /// An output array overlaps an input array (or the stepper) of the same call; array
    /// functions need disjoint buffers.
    RF_STATUS_OVERLAPPING_BUFFERS = 12,
    /// The data cannot determine the parameters asked of them (a calibration's positions
    /// leave some unobservable).
    RF_STATUS_UNOBSERVABLE = 13,
    /// A log has a gap between two time tags longer than the allowed one (the call's gap
    /// output, when given, names it).
    RF_STATUS_DATA_GAP = 14,
    /// Memory could not be had (a smoother's recording could not grow); nothing changed.
    RF_STATUS_OUT_OF_MEMORY = 15,
}

pub use rf_status::*;

/// Internal result type of the exported functions' bodies.
pub type Fallible<T> = Result<T, rf_status>;

impl From<Error> for rf_status {
    fn from(e: Error) -> Self {
        match e {
            Error::NonFinite { .. } => RF_STATUS_NON_FINITE,
            Error::ZeroNorm { .. } => RF_STATUS_ZERO_NORM,
            Error::NotUnitQuaternion { .. } => RF_STATUS_NOT_UNIT_QUATERNION,
            Error::NotRotationMatrix { .. } => RF_STATUS_NOT_ROTATION_MATRIX,
            Error::OutOfRange { .. } | Error::BeyondLimit { .. } => RF_STATUS_OUT_OF_RANGE,
            Error::NotPositive { .. } => RF_STATUS_NOT_POSITIVE,
            Error::NearPole { .. } => RF_STATUS_NEAR_POLE,
            Error::NearEarthCentre { .. } => RF_STATUS_NEAR_EARTH_CENTRE,
            Error::Unobservable { .. } | Error::Undetermined { .. } => RF_STATUS_UNOBSERVABLE,
            _ => RF_STATUS_INVALID_ARGUMENT,
        }
    }
}

impl From<rotaframe::BatchError> for rf_status {
    fn from(e: rotaframe::BatchError) -> Self {
        e.error.into()
    }
}

/// 1 when this process runs rotaframe's AVX2 + FMA code paths (an x86-64 CPU that has those
/// instructions), else 0. Results are the same either way; only speed differs.
#[unsafe(no_mangle)]
pub extern "C" fn rf_fast_kernels_active() -> u32 {
    u32::from(rotaframe::dispatch::fast_kernels_active())
}

/// A static, NUL-terminated English message for a status value (any value: unknown ones get
/// a message saying so). The string lives for the whole program.
#[unsafe(no_mangle)]
pub extern "C" fn rf_status_message(status: u32) -> *const core::ffi::c_char {
    let message: &'static core::ffi::CStr = match status {
        0 => c"ok",
        1 => c"a required pointer argument is NULL",
        2 => c"an input is NaN or infinite",
        3 => c"a value is outside its allowed or supported range",
        4 => c"a quaternion is not of unit norm (allowed 1 +/- 1e-6)",
        5 => c"a quaternion or direction vector has zero norm",
        6 => c"a matrix is not a rotation (orthonormal, determinant +1)",
        7 => c"latitude too close to a pole for north-east-down rates (within 1e-6 rad)",
        8 => c"position too close to the Earth's centre for geodetic coordinates",
        9 => c"a value that must be positive is not",
        10 => c"arguments are inconsistent",
        11 => c"internal error caught at the rotaframe boundary",
        12 => c"an output array overlaps an input array of the same call",
        13 => c"the data cannot determine the parameters asked of them (positions leave some unobservable)",
        14 => c"a log has a gap between two time tags longer than the allowed one",
        15 => c"not enough memory (a recording could not grow)",
        _ => c"unknown rotaframe status",
    };
    message.as_ptr()
}

/// Runs an exported function's body: maps its result to a status, and (with `std`) turns any
/// panic into `RF_STATUS_INTERNAL_ERROR` instead of unwinding into C. The bodies are written so
/// that no panic can occur (no indexing without checks, no unwrap); this is the guard anyway.
/// Without `std` the firmware profile aborts on panic, which also never crosses into C.
#[inline]
pub fn boundary(body: impl FnOnce() -> Fallible<()>) -> rf_status {
    #[cfg(feature = "std")]
    {
        match std::panic::catch_unwind(std::panic::AssertUnwindSafe(body)) {
            Ok(Ok(())) => RF_STATUS_OK,
            Ok(Err(status)) => status,
            Err(_) => RF_STATUS_INTERNAL_ERROR,
        }
    }
    #[cfg(not(feature = "std"))]
    {
        match body() {
            Ok(()) => RF_STATUS_OK,
            Err(status) => status,
        }
    }
}

/// Reads an input through a pointer.
///
/// # Safety
/// `p` is NULL or points to a valid, initialised `T`.
#[inline(always)]
pub unsafe fn read<T: Copy>(p: *const T) -> Fallible<T> {
    // SAFETY: the caller guarantees validity when non-NULL.
    unsafe { p.as_ref() }.copied().ok_or(RF_STATUS_NULL_POINTER)
}

/// An output pointer, checked for NULL. Nothing is written through it until the result is
/// complete.
///
/// # Safety
/// `p` is NULL or points to writable memory for a `T`.
#[inline(always)]
pub unsafe fn out<'a, T>(p: *mut T) -> Fallible<&'a mut T> {
    // SAFETY: the caller guarantees validity when non-NULL.
    unsafe { p.as_mut() }.ok_or(RF_STATUS_NULL_POINTER)
}

/// An input array of `n` elements (NULL allowed when `n` is 0).
///
/// # Safety
/// When `n > 0`, `p` points to `n` valid, initialised `T`.
#[inline(always)]
pub unsafe fn slice<'a, T>(p: *const T, n: usize) -> Fallible<&'a [T]> {
    if n == 0 {
        return Ok(&[]);
    }
    if p.is_null() {
        return Err(RF_STATUS_NULL_POINTER);
    }
    // SAFETY: non-NULL, and the caller guarantees `n` valid elements.
    Ok(unsafe { core::slice::from_raw_parts(p, n) })
}

/// An output array of `n` elements (NULL allowed when `n` is 0).
///
/// # Safety
/// When `n > 0`, `p` points to writable memory for `n` `T`, not overlapping any input.
#[inline(always)]
pub unsafe fn slice_mut<'a, T>(p: *mut T, n: usize) -> Fallible<&'a mut [T]> {
    if n == 0 {
        return Ok(&mut []);
    }
    if p.is_null() {
        return Err(RF_STATUS_NULL_POINTER);
    }
    // SAFETY: non-NULL, and the caller guarantees `n` writable elements.
    Ok(unsafe { core::slice::from_raw_parts_mut(p, n) })
}

/// The bytes an array of `n` `T` at `p` occupies, as an address range.
#[inline(always)]
pub fn region<T>(p: *const T, n: usize) -> (usize, usize) {
    let start = p as usize;
    (start, start.saturating_add(n.saturating_mul(core::mem::size_of::<T>())))
}

/// `RF_STATUS_OVERLAPPING_BUFFERS` if any two output regions share a byte: checked on the
/// addresses before the outputs' references are formed (two mutable references to one byte
/// would be undefined behaviour, whatever the values written).
#[inline]
pub fn distinct_outputs(outputs: &[(usize, usize)]) -> Fallible<()> {
    for (k, &o) in outputs.iter().enumerate() {
        disjoint(o, &outputs[k + 1..])?;
    }
    Ok(())
}

/// `RF_STATUS_OVERLAPPING_BUFFERS` if the output region overlaps any input region (empty
/// regions overlap nothing). Call before forming the output slice: array functions never
/// work in place, and a Rust slice may not alias another.
#[inline]
pub fn disjoint(output: (usize, usize), inputs: &[(usize, usize)]) -> Fallible<()> {
    let (o0, o1) = output;
    if o0 == o1 {
        return Ok(());
    }
    if inputs.iter().any(|&(i0, i1)| i0 < i1 && i0 < o1 && o0 < i1) {
        Err(rf_status::RF_STATUS_OVERLAPPING_BUFFERS)
    } else {
        Ok(())
    }
}
