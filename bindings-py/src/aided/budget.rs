//! The error budget of a run (`AidedResult.budget`): the run redone from its start with the
//! core's smoother log, split by the core's `aided::budget`. Conversion and batching only.

use numpy::{PyArray1, PyArrayMethods, PyReadonlyArray2};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::aided::SmootherLog;
use rotaframe::aided::budget::{BudgetSink, BudgetSource};

use super::AidedInputs;
use super::PyAidedNavigator;
use crate::plumbing::errors::{ShapeError, to_py};
use crate::plumbing::memory::try_vec;

/// The error budget of an aided run by source (`AidedResult.budget`): for each requested
/// state, its variance at every IMU time split into the contributions of the initial
/// uncertainty of each state group, each IMU noise term (velocity and angle random walk, the
/// drives of the Gauss–Markov biases) and each measurement set, with the gains of the run.
/// The contributions add up to the total (to rounding). Variances are in the error-state units
/// squared (rad² for latitude and longitude).
#[pyclass(frozen, name = "ErrorBudget", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyErrorBudget {
    /// IMU times (s), `(N + 1,)`.
    #[pyo3(get)]
    t: Py<PyAny>,
    /// The states split (indices in the error-state order), a tuple of `m` ints.
    #[pyo3(get)]
    states: Py<PyAny>,
    /// The sources' names, a tuple of `S` strings, in the order of the parts.
    #[pyo3(get)]
    sources: Py<PyAny>,
    /// The filtered variance of each state by source, `(N + 1, S, m)`.
    #[pyo3(get)]
    filtered: Py<PyAny>,
    /// The filter's own variance of each state (its `sigma` squared), `(N + 1, m)`.
    #[pyo3(get)]
    filtered_total: Py<PyAny>,
    /// The smoothed variance by source, `(N + 1, S, m)`, or None for a run without smoothing.
    #[pyo3(get)]
    smoothed: Py<PyAny>,
    /// The smoothed total `(I − P Λ) P (I − P Λ)ᵀ + P Ḡ P` of each state, `(N + 1, m)`, or
    /// None. It equals the smoothed solution's `sigma` squared to the filter's second-order
    /// covariance step (a few parts in 10⁶ at 100 Hz).
    #[pyo3(get)]
    smoothed_total: Py<PyAny>,
}

#[pymethods]
impl PyErrorBudget {
    #[new]
    #[pyo3(signature = (t, states, sources, filtered, filtered_total, smoothed=None, smoothed_total=None))]
    fn py_new(
        py: Python<'_>,
        t: Py<PyAny>,
        states: Py<PyAny>,
        sources: Py<PyAny>,
        filtered: Py<PyAny>,
        filtered_total: Py<PyAny>,
        smoothed: Option<Py<PyAny>>,
        smoothed_total: Option<Py<PyAny>>,
    ) -> Self {
        let smoothed = smoothed.unwrap_or_else(|| py.None());
        let smoothed_total = smoothed_total.unwrap_or_else(|| py.None());
        Self { t, states, sources, filtered, filtered_total, smoothed, smoothed_total }
    }

    fn __repr__(&self, py: Python<'_>) -> String {
        let n = self.t.bind(py).len().unwrap_or(0);
        let s = self.sources.bind(py).len().unwrap_or(0);
        let m = self.states.bind(py).len().unwrap_or(0);
        let smoothed = if self.smoothed.is_none(py) { "" } else { ", smoothed" };
        format!("<ErrorBudget: {m} states, {s} sources, {n} IMU times{smoothed}>")
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let cls = py.get_type::<Self>().into_any();
        let fields =
            [&self.t, &self.states, &self.sources, &self.filtered, &self.filtered_total, &self.smoothed, &self.smoothed_total];
        Ok((cls, PyTuple::new(py, fields.iter().map(|f| f.clone_ref(py)))?))
    }
}

/// Where the core's budget writes: `(N + 1, S, m)` arrays, row by IMU time.
struct Arrays {
    width: usize,
    filtered: Vec<f64>,
    smoothed: Vec<f64>,
    total: Vec<f64>,
    m: usize,
}

impl BudgetSink for Arrays {
    fn filtered(&mut self, index: usize, parts: &[f64]) {
        self.filtered[index * self.width..(index + 1) * self.width].copy_from_slice(parts);
    }

    fn smoothed(&mut self, index: usize, parts: &[f64], total: &[f64]) {
        self.smoothed[index * self.width..(index + 1) * self.width].copy_from_slice(parts);
        self.total[index * self.m..(index + 1) * self.m].copy_from_slice(total);
    }
}

/// A zeroed buffer of `len` numbers, or MemoryError.
fn buffer(len: usize) -> PyResult<Vec<f64>> {
    let mut v = try_vec(len)?;
    v.resize(len, 0.0);
    Ok(v)
}

/// `AidedResult.budget`: `run` and `source` the result's (see its fields), `sigma` its
/// filtered σ, `smoothed` whether it was smoothed.
pub(super) fn split(
    py: Python<'_>,
    run: &Bound<'_, PyAny>,
    source: &Bound<'_, PyAny>,
    sigma: &Bound<'_, PyAny>,
    smoothed: bool,
    states: Option<&Bound<'_, PyAny>>,
) -> PyResult<PyErrorBudget> {
    if run.is_none() || source.is_none() {
        return Err(pyo3::exceptions::PyValueError::new_err(
            "this result holds no run to redo (a smoothed part, or a result made by hand): call `budget` on the result `run` returned",
        ));
    }
    let (navigator, sets, t): (Bound<'_, PyAidedNavigator>, Bound<'_, PyAny>, Bound<'_, PyAny>) = run.extract()?;
    let source: Bound<'_, PyTuple> = source.extract()?;
    let inputs = AidedInputs::parse(&t, &source.get_item(2)?, &source.get_item(3)?, &sets)?;
    let mut nav = navigator.get().current()?;
    let n = nav.states();
    let states: Vec<usize> = match states {
        None => (0..n).collect(),
        Some(s) => {
            let values: Vec<i64> = s
                .extract()
                .map_err(|_| pyo3::exceptions::PyTypeError::new_err("`states` must be a sequence of state indices (ints)"))?;
            let mut out = Vec::with_capacity(values.len());
            for v in values {
                let index = usize::try_from(v).ok().filter(|&i| i < n).ok_or_else(|| {
                    to_py(
                        &rotaframe::Error::OutOfRange { quantity: "states", value: v as f64, min: 0.0, max: (n - 1) as f64 },
                        "",
                    )
                })?;
                out.push(index);
            }
            out
        }
    };
    if states.is_empty() {
        return Err(ShapeError::new_err("`states` is empty: give at least one state index"));
    }
    let mut log = SmootherLog::new(&nav).map_err(|e| to_py(&e, ""))?;
    let measurements = inputs.sets.iter().map(|s| s.get().times.len()).sum();
    let rows = inputs.times.len();
    log.try_reserve(rows - 1, measurements)
        .map_err(|_| pyo3::exceptions::PyMemoryError::new_err("not enough memory to record the run for its budget"))?;
    inputs.run(py, &mut nav, &mut log).map_err(|e| to_py(&e.error, "(redoing the run for its budget)"))?;
    let sources = log.budget_sources(inputs.sets.len());
    let m = states.len();
    let width = sources.len() * m;
    let mut arrays = Arrays {
        width,
        filtered: buffer(rows * width)?,
        smoothed: if smoothed { buffer(rows * width)? } else { Vec::new() },
        total: if smoothed { buffer(rows * m)? } else { Vec::new() },
        m,
    };
    let set_count = inputs.sets.len();
    py.detach(|| log.budget(set_count, &states, smoothed, &mut arrays)).map_err(|e| to_py(&e, "(budget)"))?;
    drop(log);
    let sigma: PyReadonlyArray2<'_, f64> = sigma.extract()?;
    let sigma = sigma.as_array();
    let mut filtered_total = buffer(rows * m)?;
    for (k, row) in filtered_total.chunks_exact_mut(m).enumerate() {
        for (value, &i) in row.iter_mut().zip(&states) {
            *value = sigma[[k, i]] * sigma[[k, i]];
        }
    }
    let names: Vec<String> = sources
        .iter()
        .map(|s| match s {
            BudgetSource::Measurements(i) => format!("{} measurements (set {i})", inputs.sets[*i].get().kind.name()),
            other => other.name().to_string(),
        })
        .collect();
    let shaped = |values: Vec<f64>, dims: Vec<usize>| -> PyResult<Py<PyAny>> {
        Ok(PyArray1::from_vec(py, values).reshape(dims)?.into_any().unbind())
    };
    let (smoothed_parts, smoothed_total) = if smoothed {
        (shaped(arrays.smoothed, vec![rows, sources.len(), m])?, shaped(arrays.total, vec![rows, m])?)
    } else {
        (py.None(), py.None())
    };
    Ok(PyErrorBudget {
        t: PyArray1::from_slice(py, &inputs.times).into_any().unbind(),
        states: PyTuple::new(py, &states)?.into_any().unbind(),
        sources: PyTuple::new(py, &names)?.into_any().unbind(),
        filtered: shaped(arrays.filtered, vec![rows, sources.len(), m])?,
        filtered_total: shaped(filtered_total, vec![rows, m])?,
        smoothed: smoothed_parts,
        smoothed_total,
    })
}
