//! Memory for outputs, with allocation failure as `MemoryError` rather than a panic or an
//! abort: large numpy arrays through numpy's own constructors, Rust buffers through
//! `try_reserve`. Imports nothing else of the binding.

use numpy::PyArrayDyn;
use pyo3::prelude::*;

/// Arrays at least this large (64 MiB) are made through numpy's Python API, which turns an
/// allocation the system refuses into `MemoryError`; rust-numpy's direct constructors, used
/// below it for speed, would panic instead.
const LARGE_ARRAY_BYTES: usize = 1 << 26;

/// A new C-contiguous float64 array of shape `dims`: zero-filled, or with `zeroed = false`
/// uninitialised (write every element before Python sees it).
///
/// # Errors
/// `MemoryError` when the system cannot hold it (or its size passes 2⁶⁴ bytes).
pub fn new_array<'py>(py: Python<'py>, dims: Vec<usize>, zeroed: bool) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
    let bytes = dims.iter().try_fold(core::mem::size_of::<f64>(), |a, &d| a.checked_mul(d));
    match bytes {
        Some(b) if b < LARGE_ARRAY_BYTES => Ok(if zeroed {
            PyArrayDyn::zeros(py, dims, false)
        } else {
            // SAFETY: the caller writes every element before the array reaches Python.
            unsafe { PyArrayDyn::new(py, dims, false) }
        }),
        Some(_) => {
            let make = py.import("numpy")?.getattr(if zeroed { "zeros" } else { "empty" })?;
            Ok(make.call1((pyo3::types::PyTuple::new(py, &dims)?,))?.cast_into::<PyArrayDyn<f64>>()?)
        }
        None => {
            Err(pyo3::exceptions::PyMemoryError::new_err(format!("an output of shape {dims:?} would hold more than 2^64 bytes")))
        }
    }
}

/// A `Vec` with room for `n` values, or `MemoryError` when the system refuses it (a plain
/// `with_capacity` aborts the process).
pub fn try_vec<T>(n: usize) -> PyResult<Vec<T>> {
    let mut v = Vec::new();
    v.try_reserve_exact(n).map_err(|_| {
        pyo3::exceptions::PyMemoryError::new_err(format!("cannot hold {n} values of {} bytes", core::mem::size_of::<T>()))
    })?;
    Ok(v)
}
