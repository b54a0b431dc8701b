//! The states of a `Strapdown.run` and what `predict_covariance` needs to replay it.

use numpy::PyArrayDyn;
use pyo3::prelude::*;
use rotaframe::nav::Strapdown;

/// The state after every step of `Strapdown.run`: arrays `lat`, `lon` (radians, or degrees if
/// the stepper was made with `degrees=True`), `h`, `v_ned` `(N, 3)`, `attitude` `(N, 4)` and
/// `t`, the time since the initial state.
#[pyclass(frozen, name = "StrapdownHistory", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyStrapdownHistory {
    #[pyo3(get)]
    pub(super) lat: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    pub(super) lon: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    pub(super) h: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    pub(super) v_ned: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    pub(super) attitude: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    pub(super) t: Py<PyArrayDyn<f64>>,
    pub(super) len: usize,
    /// What `predict_covariance` needs to retrace the run: the stepper before and after it and
    /// the run's arguments (references to the caller's arrays, not copies).
    pub(crate) replay: Option<Replay>,
}

/// A run's start, end and arguments.
#[derive(Debug)]
pub(crate) struct Replay {
    pub start: Strapdown,
    pub end: Strapdown,
    pub dtheta: Py<PyAny>,
    pub dv: Py<PyAny>,
    pub dt: Py<PyAny>,
    pub height_reference: Option<Py<PyAny>>,
}

impl PyStrapdownHistory {
    pub(crate) fn replay(&self) -> Option<&Replay> {
        self.replay.as_ref()
    }
}

#[pymethods]
impl PyStrapdownHistory {
    fn __len__(&self) -> usize {
        self.len
    }

    fn __repr__(&self) -> String {
        format!("StrapdownHistory({} steps; fields lat, lon, h, v_ned, attitude, t)", self.len)
    }
}
