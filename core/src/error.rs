//! The crate's one error type for bad input.
//!
//! Every fallible constructor and conversion returns [`Result<T>`](Result). Every variant names the
//! quantity (the argument or field) that was rejected, so that a binding can pass the message on
//! unchanged: "`attitude` must be a unit quaternion (norm 0.5, allowed 1 ± 1e-6)".
//!
//! Batch functions over slices report the index of the first bad element with [`BatchError`].
//! Nothing is written to an output slice when a batch function fails.
//!
//! With the `std` feature the error implements `std::error::Error`; without it, it still
//! implements `core::error::Error` and `Display`.

use core::fmt;

/// Bad input rejected by a rotaframe function. Every variant names the rejected quantity.
///
/// # Example
/// ```
/// use rotaframe::rotation::quaternion_from_wxyz;
/// use rotaframe::Error;
///
/// let err = quaternion_from_wxyz([0.0, 0.0, 0.0, 0.0], "attitude").unwrap_err();
/// assert_eq!(err, Error::ZeroNorm { quantity: "attitude" });
/// assert_eq!(err.to_string(), "`attitude` has zero norm");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// A component is NaN or infinite.
    #[error("`{quantity}` must be finite, got NaN or infinity")]
    NonFinite {
        /// The rejected quantity.
        quantity: &'static str,
    },
    /// A vector or quaternion that must have a direction has (nearly) zero norm.
    #[error("`{quantity}` has zero norm")]
    ZeroNorm {
        /// The rejected quantity.
        quantity: &'static str,
    },
    /// A quaternion whose norm is too far from one to be a rotation.
    #[error("`{quantity}` must be a unit quaternion (norm {}, allowed 1 ± {})", num(.norm), num(.tolerance))]
    NotUnitQuaternion {
        /// The rejected quantity.
        quantity: &'static str,
        /// Its norm.
        norm: f64,
        /// The largest accepted deviation of the norm from one.
        tolerance: f64,
    },
    /// A 3×3 matrix that is not a proper rotation (orthonormal with determinant +1).
    #[error("`{quantity}` must be a rotation matrix (largest |MᵀM − I| entry {}, determinant {})", num(.orthogonality_error), num(.determinant))]
    NotRotationMatrix {
        /// The rejected quantity.
        quantity: &'static str,
        /// Largest absolute entry of `MᵀM − I`.
        orthogonality_error: f64,
        /// Determinant of the matrix.
        determinant: f64,
    },
    /// A scalar outside its allowed closed interval.
    #[error("`{quantity}` = {} is outside [{}, {}]", num(.value), num(.min), num(.max))]
    OutOfRange {
        /// The rejected quantity.
        quantity: &'static str,
        /// The value given.
        value: f64,
        /// Smallest allowed value.
        min: f64,
        /// Largest allowed value.
        max: f64,
    },
    /// A scalar that must be strictly positive is not.
    #[error("`{quantity}` = {} must be positive", num(.value))]
    NotPositive {
        /// The rejected quantity.
        quantity: &'static str,
        /// The value given.
        value: f64,
    },
    /// A latitude so close to a pole that the local-level (north, east) axes are undefined.
    #[error(
        "`{quantity}` = {} rad is within {} rad of a pole, where north-east-down axes are singular; use an Earth-fixed formulation there",
        num(.value),
        num(.limit)
    )]
    NearPole {
        /// The rejected quantity.
        quantity: &'static str,
        /// The latitude given, in radians.
        value: f64,
        /// The exclusion distance from the pole, in radians of latitude.
        limit: f64,
    },
    /// A position so close to the Earth's centre that geodetic coordinates are not unique.
    #[error(
        "`{quantity}` is {} m from the Earth's centre, inside the {} m region where geodetic coordinates are not unique",
        num(.distance),
        num(.limit)
    )]
    NearEarthCentre {
        /// The rejected quantity.
        quantity: &'static str,
        /// Distance from the centre in metres.
        distance: f64,
        /// Radius of the excluded region in metres.
        limit: f64,
    },
    /// Two inputs whose lengths or shapes must agree do not.
    #[error("`{quantity}` has length {found}, expected {expected}")]
    LengthMismatch {
        /// The rejected quantity.
        quantity: &'static str,
        /// The length given.
        found: usize,
        /// The length required.
        expected: usize,
    },
    /// A finite value too large in magnitude for the function to give a finite, accurate
    /// result (see [`limits`](crate::limits) for the supported ranges).
    #[error("`{quantity}` magnitude {} {unit} is beyond the supported range (at most {} {unit})", num(.magnitude), num(.limit))]
    BeyondLimit {
        /// The rejected quantity.
        quantity: &'static str,
        /// Its magnitude (the norm of a vector, the absolute value of a scalar).
        magnitude: f64,
        /// The largest supported magnitude.
        limit: f64,
        /// The SI unit of the quantity, for the message.
        unit: &'static str,
    },
    /// A set of parameters that is inconsistent for a reason given in the message.
    #[error("`{quantity}` is invalid: {reason}")]
    Invalid {
        /// The rejected quantity.
        quantity: &'static str,
        /// Why it was rejected.
        reason: &'static str,
    },
    /// Data that cannot determine some of the parameters asked of them (a calibration whose
    /// positions leave parameters unobservable).
    #[error("`{quantity}` cannot determine {parameters}: {reason}")]
    Unobservable {
        /// The rejected quantity.
        quantity: &'static str,
        /// The parameters it cannot determine (or separate from others).
        parameters: crate::calibrate::ParameterSet,
        /// Why, and what would help.
        reason: &'static str,
    },
    /// Data that cannot determine a quantity asked of them (a heading from gyros that cannot
    /// see the Earth's rotation).
    #[error("`{quantity}` cannot determine {unknown}: {reason}")]
    Undetermined {
        /// The rejected quantity.
        quantity: &'static str,
        /// What it cannot determine.
        unknown: &'static str,
        /// Why, and what would help.
        reason: &'static str,
    },
}

impl Error {
    /// The name of the rejected quantity.
    ///
    /// ```
    /// # use rotaframe::Error;
    /// assert_eq!(Error::NonFinite { quantity: "velocity" }.quantity(), "velocity");
    /// ```
    #[must_use]
    pub fn quantity(&self) -> &'static str {
        match *self {
            Error::NonFinite { quantity }
            | Error::ZeroNorm { quantity }
            | Error::NotUnitQuaternion { quantity, .. }
            | Error::NotRotationMatrix { quantity, .. }
            | Error::OutOfRange { quantity, .. }
            | Error::NotPositive { quantity, .. }
            | Error::NearPole { quantity, .. }
            | Error::NearEarthCentre { quantity, .. }
            | Error::LengthMismatch { quantity, .. }
            | Error::BeyondLimit { quantity, .. }
            | Error::Invalid { quantity, .. }
            | Error::Unobservable { quantity, .. }
            | Error::Undetermined { quantity, .. } => quantity,
        }
    }
}

impl Error {
    /// The same error naming a different quantity, for callers whose argument names differ
    /// from the core's (a binding's `xyz` for the core's `ecef`).
    ///
    /// ```
    /// # use rotaframe::Error;
    /// let e = Error::NonFinite { quantity: "ecef" }.with_quantity("xyz");
    /// assert_eq!(e.to_string(), "`xyz` must be finite, got NaN or infinity");
    /// ```
    #[must_use]
    pub fn with_quantity(self, quantity: &'static str) -> Self {
        match self {
            Error::NonFinite { .. } => Error::NonFinite { quantity },
            Error::ZeroNorm { .. } => Error::ZeroNorm { quantity },
            Error::NotUnitQuaternion { norm, tolerance, .. } => Error::NotUnitQuaternion { quantity, norm, tolerance },
            Error::NotRotationMatrix { orthogonality_error, determinant, .. } => {
                Error::NotRotationMatrix { quantity, orthogonality_error, determinant }
            }
            Error::OutOfRange { value, min, max, .. } => Error::OutOfRange { quantity, value, min, max },
            Error::NotPositive { value, .. } => Error::NotPositive { quantity, value },
            Error::NearPole { value, limit, .. } => Error::NearPole { quantity, value, limit },
            Error::NearEarthCentre { distance, limit, .. } => Error::NearEarthCentre { quantity, distance, limit },
            Error::LengthMismatch { found, expected, .. } => Error::LengthMismatch { quantity, found, expected },
            Error::BeyondLimit { magnitude, limit, unit, .. } => Error::BeyondLimit { quantity, magnitude, limit, unit },
            Error::Invalid { reason, .. } => Error::Invalid { quantity, reason },
            Error::Unobservable { parameters, reason, .. } => Error::Unobservable { quantity, parameters, reason },
            Error::Undetermined { unknown, reason, .. } => Error::Undetermined { quantity, unknown, reason },
        }
    }
}

/// A number as messages print it: the shortest digits that read back to the same f64, in
/// positional or exponent form, whichever is shorter (`0.1`, `6378137`, `1e15`,
/// `2.2250738585072014e-308`), never a long run of zeros.
///
/// ```
/// use rotaframe::error::num;
/// assert_eq!(num(&2.2250738585072014e-308).to_string(), "2.2250738585072014e-308");
/// assert_eq!(num(&1e15).to_string(), "1e15");
/// assert_eq!(num(&6378137.0).to_string(), "6378137");
/// assert_eq!(num(&-0.25).to_string(), "-0.25");
/// ```
#[must_use]
pub fn num(value: &f64) -> Num {
    Num(*value)
}

/// See [`num`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Num(pub f64);

impl fmt::Display for Num {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        /// Counts the bytes a formatting would write, without storing them.
        struct Count(usize);
        impl fmt::Write for Count {
            fn write_str(&mut self, s: &str) -> fmt::Result {
                self.0 += s.len();
                Ok(())
            }
        }
        let x = self.0;
        if !x.is_finite() {
            return write!(f, "{x}");
        }
        let (mut positional, mut exponent) = (Count(0), Count(0));
        fmt::write(&mut positional, format_args!("{x}"))?;
        fmt::write(&mut exponent, format_args!("{x:e}"))?;
        if exponent.0 < positional.0 { write!(f, "{x:e}") } else { write!(f, "{x}") }
    }
}

/// Shorthand for `core::result::Result<T, rotaframe::Error>`.
pub type Result<T> = core::result::Result<T, Error>;

/// The first bad element of a batch: its index in the input slices and what was wrong with it.
///
/// ```
/// # use rotaframe::{BatchError, Error};
/// let e = BatchError { index: 7, error: Error::NonFinite { quantity: "position" } };
/// assert_eq!(e.to_string(), "element 7: `position` must be finite, got NaN or infinity");
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BatchError {
    /// Index of the first rejected element.
    pub index: usize,
    /// Why it was rejected.
    pub error: Error,
}

impl fmt::Display for BatchError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "element {}: {}", self.index, self.error)
    }
}

impl core::error::Error for BatchError {
    fn source(&self) -> Option<&(dyn core::error::Error + 'static)> {
        Some(&self.error)
    }
}

/// Checks that every component of a value is finite.
///
/// # Errors
/// [`Error::NonFinite`] naming `quantity`.
///
/// ```
/// use rotaframe::error::ensure_finite;
/// assert!(ensure_finite(&[1.0, 2.0], "x").is_ok());
/// assert_eq!(ensure_finite(&[1.0, f64::NAN], "x").unwrap_err().quantity(), "x");
/// ```
#[inline]
pub fn ensure_finite(values: &[f64], quantity: &'static str) -> Result<()> {
    // NaN and infinity are the values whose exponent bits are all ones; an integer OR over
    // the slice has no early exit and vectorises (the matrices checked here have hundreds of
    // entries and are almost always finite).
    const EXPONENT: u64 = 0x7ff0_0000_0000_0000;
    let bad = values.iter().fold(0u64, |acc, v| acc | u64::from(v.to_bits() & EXPONENT == EXPONENT));
    if bad == 0 { Ok(()) } else { Err(Error::NonFinite { quantity }) }
}

/// Checks that a 3-vector is finite.
#[inline]
pub(crate) fn ensure_finite3(v: &nalgebra::Vector3<f64>, quantity: &'static str) -> Result<()> {
    ensure_finite(v.as_slice(), quantity)
}

/// Checks that a scalar is finite.
#[inline]
pub(crate) fn ensure_finite1(v: f64, quantity: &'static str) -> Result<()> {
    if v.is_finite() { Ok(()) } else { Err(Error::NonFinite { quantity }) }
}

/// A data file (an IERS table) that could not be read: the line (1-based; 0 for the file as
/// a whole) and why.
///
/// ```
/// use rotaframe::error::ParseError;
/// let e = ParseError { line: 3, reason: "MJDs must increase" };
/// assert_eq!(e.to_string(), "line 3: MJDs must increase");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ParseError {
    /// The line (1-based; 0 for the file as a whole).
    pub line: usize,
    /// Why it could not be read.
    pub reason: &'static str,
}

impl fmt::Display for ParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line == 0 { write!(f, "{}", self.reason) } else { write!(f, "line {}: {}", self.line, self.reason) }
    }
}

impl core::error::Error for ParseError {}
