//! Output writers: new numpy arrays from values, the one row-major matrix writer, and the
//! one degrees-to-radians factor.

use numpy::{PyArrayDyn, PyArrayMethods};
use pyo3::prelude::*;
use rotaframe::nalgebra::{Dim, Matrix, RawStorage};

use crate::plumbing::broadcast::out_slice;

/// Radians per degree when `degrees` is set (`π/180`), else 1: an angle argument times this is
/// in radians.
#[inline]
pub fn angle_scale(degrees: bool) -> f64 {
    if degrees { core::f64::consts::PI / 180.0 } else { 1.0 }
}

/// Degrees per radian when `degrees` is set (`180/π`), else 1: an angle in radians times
/// this is in the caller's unit.
#[inline]
pub fn degrees_scale(degrees: bool) -> f64 {
    if degrees { 180.0 / core::f64::consts::PI } else { 1.0 }
}

/// Writes a matrix row-major (C order, numpy's `m[..., row, column]`) to `o`.
#[inline]
pub fn put_row_major<R: Dim, C: Dim, S: RawStorage<f64, R, C>>(o: &mut [f64], m: &Matrix<f64, R, C, S>) {
    let columns = m.ncols();
    for i in 0..m.nrows() {
        for j in 0..columns {
            o[i * columns + j] = m[(i, j)];
        }
    }
}

/// A new C-contiguous float64 array of shape `dims` filled from `values`.
pub fn array_from<'py>(py: Python<'py>, dims: Vec<usize>, values: &[f64]) -> Bound<'py, PyArrayDyn<f64>> {
    // As large as `values`, which is already in memory.
    let out = PyArrayDyn::zeros(py, dims, false);
    {
        let mut w = out.readwrite();
        out_slice(&mut w).copy_from_slice(values);
    }
    out
}

/// A row-major `(rows, columns)` numpy array of a matrix.
pub fn matrix_out<'py, R: Dim, C: Dim, S: RawStorage<f64, R, C>>(
    py: Python<'py>,
    m: &Matrix<f64, R, C, S>,
) -> Bound<'py, PyArrayDyn<f64>> {
    // As large as `m`, which is already in memory.
    let out = PyArrayDyn::<f64>::zeros(py, vec![m.nrows(), m.ncols()], false);
    {
        let mut w = out.readwrite();
        put_row_major(out_slice(&mut w), m);
    }
    out
}
