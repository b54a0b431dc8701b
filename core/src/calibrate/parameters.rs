//! The twelve parameters of a triad calibration, their order and sets of them.
//!
//! The order is `b_x, b_y, b_z, s_x, s_y, s_z, M_xy, M_xz, M_yx, M_yz, M_zx, M_zy` (bias, scale
//! factors, misalignments off the diagonal of `M`, row by row) in every parameter vector and
//! covariance of [`calibrate`](crate::calibrate); [`misalignment_index`] maps `M[row][column]`
//! into it:
//!
//! ```text
//! index(M[r][c]) = 6 + 2 r + (c − 1 if c > r else c)
//! ```
//!
//! This file depends on nothing else in the crate, so that [`Error`](crate::Error) can name the
//! parameters a calibration cannot determine without depending on the calibrations.

use core::fmt;

/// The names of the twelve parameters of a triad, in the order of every parameter vector and
/// covariance.
pub const PARAMETER_NAMES: [&str; 12] = [
    "bias_x",
    "bias_y",
    "bias_z",
    "scale_factor_x",
    "scale_factor_y",
    "scale_factor_z",
    "misalignment_xy",
    "misalignment_xz",
    "misalignment_yx",
    "misalignment_yz",
    "misalignment_zx",
    "misalignment_zy",
];

/// The index of misalignment `M[row][column]` (row ≠ column) in the parameter order.
#[must_use]
pub const fn misalignment_index(row: usize, column: usize) -> usize {
    6 + 2 * row + if column > row { column - 1 } else { column }
}

/// A set of a triad's parameters (bit `j`: [`PARAMETER_NAMES`]`[j]`); displayed as their
/// names.
///
/// ```
/// use rotaframe::calibrate::ParameterSet;
/// assert_eq!(ParameterSet(0b1001).to_string(), "bias_x, scale_factor_x");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ParameterSet(pub u16);

impl ParameterSet {
    /// Every parameter.
    pub const ALL: Self = Self(0x0fff);

    /// Whether parameter `index` is in the set.
    #[must_use]
    pub const fn contains(self, index: usize) -> bool {
        index < 12 && self.0 & (1 << index) != 0
    }

    /// The parameters in the set, in order.
    pub fn iter(self) -> impl Iterator<Item = usize> {
        (0..12).filter(move |&i| self.contains(i))
    }
}

impl fmt::Display for ParameterSet {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (n, i) in self.iter().enumerate() {
            if n > 0 {
                f.write_str(", ")?;
            }
            f.write_str(PARAMETER_NAMES[i])?;
        }
        Ok(())
    }
}
