//! The `jacobian=True` forms of the array functions, the error-state model (`Strapdown.
//! error_model`, `discrete_error_model`) and covariance prediction. Every Jacobian is the
//! core's (`rotaframe::linearise`); this module converts, batches and maps errors.
//!
//! Jacobians are row-major `(..., m, n)` with `J[..., i, j] = ∂yᵢ/∂xⱼ`, in the units of the
//! arguments as given: with `degrees=True` angles are differentiated per degree.

use numpy::PyArrayMethods;
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::linearise::inertial;
use rotaframe::nalgebra::{DMatrix, SMatrix, SVector};

use crate::plumbing::broadcast::Operand;
use crate::plumbing::broadcast::matrix_arg;
use crate::plumbing::broadcast::out_slice;
use crate::plumbing::errors::ShapeError;
use crate::plumbing::output::matrix_out;

/// `Φ` and `Q_d` of `F` `(n, n)`, `G` `(n, 12)` and the 12 noise densities over `dt`.
pub fn discrete<'py>(
    py: Python<'py>,
    f: &DMatrix<f64>,
    g: &DMatrix<f64>,
    psd: &SVector<f64, 12>,
    dt: f64,
    method: &str,
) -> PyResult<Bound<'py, PyTuple>> {
    let n = f.nrows();
    let second_order = method == "second_order";
    macro_rules! sized {
        ($n:literal) => {{
            let f = SMatrix::<f64, $n, $n>::from_iterator(f.iter().copied());
            let g = SMatrix::<f64, $n, 12>::from_iterator(g.iter().copied());
            let (phi, qd) = py
                .detach(|| {
                    if second_order {
                        inertial::discretise_second_order(&f, &g, psd, dt)
                    } else {
                        inertial::discretise(&f, &g, psd, dt)
                    }
                })
                .map_err(|e| crate::plumbing::errors::to_py(&discrete_name(e), ""))?;
            (DMatrix::from_column_slice(n, n, phi.as_slice()), DMatrix::from_column_slice(n, n, qd.as_slice()))
        }};
    }
    let (phi, qd) = match n {
        15 => sized!(15),
        21 => sized!(21),
        _ => return Err(ShapeError::new_err(format!("`F` must be 15×15 or 21×21 (the error-state model's sizes), got {n}×{n}"))),
    };
    PyTuple::new(py, [matrix_out(py, &phi), matrix_out(py, &qd)])
}

/// The core's argument names as `discrete_error_model`'s.
fn discrete_name(e: rotaframe::Error) -> rotaframe::Error {
    let to = match e.quantity() {
        "f" => "F",
        "g" => "G",
        "psd" => "noise",
        "interval" => "dt",
        _ => return e,
    };
    e.with_quantity(to)
}

/// `Φ` and `Q_d` over an interval `dt` (s) of a continuous error-state model `(F, G)` as
/// returned by `Strapdown.error_model`, with the noise densities of `noise`: an `ImuErrors`
/// (its white noise and Gauss–Markov drives) or 12 spectral densities `(N_a² ×3, N_g² ×3,
/// accelerometer bias drive ×3, gyro bias drive ×3)`.
///
/// `method="exact"` (the default) sums the series to rounding; `method="second_order"` keeps
/// their first three terms, `Φ = I + F dt + F² dt²/2`, `Q_d = Q_c dt + (F Q_c + Q_c Fᵀ) dt²/2`
/// (what real-time filters use at IMU rates; errors of order `(‖F dt‖)³`, see the README).
#[pyfunction]
#[pyo3(signature = (F, G, noise, dt, *, method="exact"))]
#[allow(non_snake_case)]
pub fn discrete_error_model<'py>(
    py: Python<'py>,
    F: &Bound<'py, PyAny>,
    G: &Bound<'py, PyAny>,
    noise: &Bound<'py, PyAny>,
    dt: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::method)] method: &str,
) -> PyResult<Bound<'py, PyTuple>> {
    let f = matrix_arg(F, "F", None, None)?;
    if f.nrows() != f.ncols() {
        return Err(ShapeError::new_err(format!("`F` must be square, got {}×{}", f.nrows(), f.ncols())));
    }
    let g = matrix_arg(G, "G", Some(f.nrows()), Some(12))?;
    let psd = noise_densities(noise)?;
    let dt = crate::plumbing::args::number(dt, "dt")?;
    discrete(py, &f, &g, &psd, dt, method)
}

/// The 12 noise densities of an `ImuErrors` or an array.
fn noise_densities(noise: &Bound<'_, PyAny>) -> PyResult<SVector<f64, 12>> {
    if let Ok(errors) = noise.cast::<crate::nav::sensor::PyImuErrors>() {
        return Ok(inertial::noise_psd(errors.get().lock()?.model()));
    }
    let values = crate::plumbing::broadcast::single(noise, "noise", &[12])?;
    Ok(SVector::<f64, 12>::from_column_slice(&values))
}

/// The covariance of the navigation errors along a `Strapdown.run`, predicted from an IMU
/// error model without simulating: `P ← Φ P Φᵀ + Q_d` at every increment of the run, from
/// `P0` (15×15 or 21×21; start from `bias_covariance`-style bias variances plus your initial
/// navigation uncertainty). Returns `(t, P)`: the times of the kept steps and `P` `(m, n, n)`,
/// every `every`-th step and the last.
#[pyfunction]
#[pyo3(signature = (history, imu_errors, P0, *, every=1))]
#[allow(non_snake_case)]
pub fn predict_covariance<'py>(
    py: Python<'py>,
    history: &Bound<'py, crate::nav::history::PyStrapdownHistory>,
    imu_errors: &Bound<'py, crate::nav::sensor::PyImuErrors>,
    P0: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::every)] every: u64,
) -> PyResult<Bound<'py, PyTuple>> {
    let history = history.get();
    let replay = history.replay().ok_or_else(|| ShapeError::new_err("`history` does not come from Strapdown.run"))?;
    let model = *imu_errors.get().lock()?.model();
    let p0 = matrix_arg(P0, "P0", None, None)?;
    let n_states = p0.nrows();
    if p0.ncols() != n_states || !(n_states == 15 || n_states == 21) {
        return Err(ShapeError::new_err(format!("`P0` must be 15×15 or 21×21, got {}×{}", p0.nrows(), p0.ncols())));
    }
    let (increments, heights) = replay_inputs(py, replay)?;
    let kept = inertial::kept_count(increments.len(), every as usize);
    let t = crate::plumbing::memory::new_array(py, vec![kept], true)?;
    let p = crate::plumbing::memory::new_array(py, vec![kept, n_states, n_states], true)?;
    {
        let (mut tw, mut pw) = (t.readwrite(), p.readwrite());
        let (to, po) = (out_slice(&mut tw), out_slice(&mut pw));
        let every = usize::try_from(every).unwrap_or(usize::MAX);
        // The core checks `every` and `P0`; no first pass (the arrays are new and dropped on
        // error). The covariances are symmetric, so column-major storage is also row-major.
        let end = py
            .detach(|| {
                macro_rules! sized {
                    ($n:literal) => {{
                        let p0 = SMatrix::<f64, $n, $n>::from_column_slice(p0.as_slice());
                        inertial::predict_covariance_kept::<$n>(
                            &replay.start,
                            &increments,
                            heights.as_deref(),
                            &model,
                            &p0,
                            every,
                            false,
                            Some(to),
                            po,
                        )
                    }};
                }
                if n_states == 15 { sized!(15) } else { sized!(21) }
            })
            .map_err(|e| {
                // `P0` and `every` are checked before the run; any other error is at a step.
                match e.error.quantity() {
                    "p0" => crate::plumbing::errors::to_py(&e.error.with_quantity("P0"), ""),
                    "every" => crate::plumbing::errors::to_py(&e.error, ""),
                    _ => crate::plumbing::errors::to_py(&e.error, &format!("(at increment {})", e.index)),
                }
            })?;
        if !increments.is_empty() && end.parts() != replay.end.parts() {
            return Err(crate::plumbing::errors::RotaframeError::new_err(
                "the increments given to the run that made `history` were changed after it: the replayed run does not end where the history does",
            ));
        }
    }
    PyTuple::new(py, [t.into_any(), p.into_any()])
}

/// The increments (and height references) of a recorded run, read again from its arguments.
type ReplayInputs = (Vec<rotaframe::nav::ImuIncrement>, Option<Vec<f64>>);

fn replay_inputs(py: Python<'_>, replay: &crate::nav::history::Replay) -> PyResult<ReplayInputs> {
    let (dtheta, dv, dt) = (replay.dtheta.bind(py), replay.dv.bind(py), replay.dt.bind(py));
    let mut a = Operand::extract(dtheta, "dtheta", &[3])?;
    let mut v = Operand::extract(dv, "dv", &[3])?;
    let mut t = Operand::extract(dt, "dt", &[])?;
    let mut href = match &replay.height_reference {
        Some(h) => Some(Operand::extract(h.bind(py), "height_reference", &[])?),
        None => None,
    };
    let plan = match href.as_mut() {
        Some(h) => crate::plumbing::broadcast::Plan::for_operands(&mut [&mut a, &mut v, &mut t, h], &[])?,
        None => crate::plumbing::broadcast::Plan::for_operands(&mut [&mut a, &mut v, &mut t], &[])?,
    };
    let (aa, va, ta) = (a.access(&plan), v.access(&plan), t.access(&plan));
    let increments = (0..plan.n).map(|i| rotaframe::nav::ImuIncrement::new(aa.vec3(i), va.vec3(i), ta.scalar(i))).collect();
    let heights = href.as_ref().map(|h| {
        let access = h.access(&plan);
        (0..plan.n).map(|i| access.scalar(i)).collect()
    });
    Ok((increments, heights))
}
