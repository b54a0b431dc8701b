//! The `jacobian=True` forms of the array functions, the error-state model (`Strapdown.
//! error_model`, `discrete_error_model`) and covariance prediction. Every Jacobian is the
//! core's (`rotaframe::linearise`); this module converts, batches and maps errors.
//!
//! Jacobians are row-major `(..., m, n)` with `J[..., i, j] = ∂yᵢ/∂xⱼ`, in the units of the
//! arguments as given: with `degrees=True` angles are differentiated per degree.

use numpy::{PyArrayDyn, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyTuple};
use rotaframe::apparent::FrameDynamics;
use rotaframe::earth::{EarthModel, Geodetic};
use rotaframe::linearise::{self, inertial};
use rotaframe::nalgebra::{DMatrix, Matrix3, SMatrix, SVector, Vector3};
use rotaframe::rotation::EulerZyx;

use crate::broadcast::{BatchArgs, Operand, map_elements_shaped, tuple_of};
use crate::errors::ShapeError;
use crate::geodesy::{python_error, python_name};

const DEG: f64 = core::f64::consts::PI / 180.0;

fn angle_scale(degrees: bool) -> f64 {
    if degrees { DEG } else { 1.0 }
}

fn v3(s: &[f64]) -> Vector3<f64> {
    Vector3::new(s[0], s[1], s[2])
}

/// Writes a matrix row-major.
fn put<const R: usize, const C: usize>(o: &mut [f64], m: &SMatrix<f64, R, C>) {
    for i in 0..R {
        for j in 0..C {
            o[i * C + j] = m[(i, j)];
        }
    }
}

/// `geodetic_to_ecef(..., jacobian=True)`: `(xyz, J)`, J `(..., 3, 3)` with columns lat, lon, h.
pub fn geodetic_to_ecef<'py>(
    py: Python<'py>,
    ops: [Operand<'py>; 3],
    model: &EarthModel,
    degrees: bool,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let s = angle_scale(degrees);
    let rename = move |e, x: &[&[f64]; 3]| python_error(e, degrees, x[0][0]);
    let (_, [xyz, j]) = map_elements_shaped(py, ops, [&[3], &[3, 3]], BatchArgs { out: None, threads }, rename, |x, [o, oj]| {
        let (value, mut jac) = linearise::geodetic_to_ecef_jacobian(model, &Geodetic::new(x[0][0] * s, x[1][0] * s, x[2][0]))?;
        jac.column_mut(0).scale_mut(s);
        jac.column_mut(1).scale_mut(s);
        o.copy_from_slice(value.as_slice());
        put(oj, &jac);
        Ok(())
    })?;
    Ok(PyTuple::new(py, [xyz.into_any(), j.into_any()])?.into_any())
}

/// `ecef_to_geodetic(..., jacobian=True)`: `(lat, lon, h, J)`, J `(..., 3, 3)` with rows lat,
/// lon, h and columns x, y, z.
pub fn ecef_to_geodetic<'py>(
    py: Python<'py>,
    xyz: Operand<'py>,
    model: &EarthModel,
    degrees: bool,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let s = 1.0 / angle_scale(degrees);
    let (plan, [lat, lon, h, j]) = map_elements_shaped(
        py,
        [xyz],
        [&[], &[], &[], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| python_name(e),
        |x, [la, lo, hh, oj]| {
            let (g, mut jac) = linearise::ecef_to_geodetic_jacobian(model, &v3(x[0]))?;
            jac.row_mut(0).scale_mut(s);
            jac.row_mut(1).scale_mut(s);
            (la[0], lo[0], hh[0]) = (g.latitude * s, g.longitude * s, g.height);
            put(oj, &jac);
            Ok(())
        },
    )?;
    tuple_of(py, &plan, vec![lat, lon, h, j])
}

/// `ned_from_ecef` / `enu_from_ecef` with `jacobian=True`: `(C, J)`, J `(..., 3, 2)`: the
/// small-angle rotation of the local-level axes relative to ECEF, resolved in ECEF, per unit
/// latitude and longitude (the same for NED and ENU axes).
pub fn local_rotation<'py>(
    py: Python<'py>,
    ops: [Operand<'py>; 2],
    degrees: bool,
    f: fn(f64, f64) -> rotaframe::Result<Matrix3<f64>>,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let s = angle_scale(degrees);
    let rename = move |e, x: &[&[f64]; 2]| python_error(e, degrees, x[0][0]);
    let (_, [c, j]) =
        map_elements_shaped(py, ops, [&[3, 3], &[3, 2]], BatchArgs { out: None, threads }, rename, |x, [o, oj]| {
            let (lat, lon) = (x[0][0] * s, x[1][0] * s);
            put(o, &f(lat, lon)?);
            put(oj, &(linearise::local_level_rotation_jacobian(lat, lon)? * s));
            Ok(())
        })?;
    Ok(PyTuple::new(py, [c.into_any(), j.into_any()])?.into_any())
}

/// `normal_gravity(..., jacobian=True)`: `(γ, J)`, J `(..., 2)`: `∂γ/∂lat`, `∂γ/∂h`.
pub fn normal_gravity<'py>(
    py: Python<'py>,
    ops: [Operand<'py>; 2],
    model: &EarthModel,
    degrees: bool,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let s = angle_scale(degrees);
    let rename = move |e, x: &[&[f64]; 2]| python_error(e, degrees, x[0][0]);
    let (plan, [g, j]) = map_elements_shaped(py, ops, [&[], &[2]], BatchArgs { out: None, threads }, rename, |x, [o, oj]| {
        let (value, (per_latitude, per_height)) = linearise::normal_gravity_jacobian(model, x[0][0] * s, x[1][0])?;
        o[0] = value;
        (oj[0], oj[1]) = (per_latitude * s, per_height);
        Ok(())
    })?;
    tuple_of(py, &plan, vec![g, j])
}

/// `gravitation_ecef` / `gravity_ecef` with `jacobian=True`: `(g, J)`, J `(..., 3, 3)` (s⁻²).
pub fn ecef_field<'py>(
    py: Python<'py>,
    xyz: Operand<'py>,
    model: &EarthModel,
    f: crate::geodesy::FieldJacobian,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let (_, [g, j]) = map_elements_shaped(
        py,
        [xyz],
        [&[3], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| python_name(e),
        |x, [o, oj]| {
            let (value, jac) = f(model, &v3(x[0]))?;
            o.copy_from_slice(value.as_slice());
            put(oj, &jac);
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [g.into_any(), j.into_any()])?.into_any())
}

/// `quat_from_euler(..., jacobian=True)`: `(q, J)`, J `(..., 3, 3)`: rows the small-angle
/// rotation (local-level axes), columns yaw, pitch, roll.
pub fn quat_from_euler<'py>(
    py: Python<'py>,
    ops: [Operand<'py>; 3],
    degrees: bool,
    threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let s = angle_scale(degrees);
    let (_, [q, j]) = map_elements_shaped(
        py,
        ops,
        [&[4], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [o, oj]| {
            let e = EulerZyx::new(x[0][0] * s, x[1][0] * s, x[2][0] * s);
            for (value, name) in [(e.yaw, "yaw"), (e.pitch, "pitch"), (e.roll, "roll")] {
                if !value.is_finite() {
                    return Err(rotaframe::Error::NonFinite { quantity: name });
                }
            }
            let (quaternion, jac) = linearise::quaternion_from_euler_jacobian(&e);
            crate::rotations::put_quaternion(o, &quaternion);
            put(oj, &(jac * s));
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [q.into_any(), j.into_any()])?.into_any())
}

/// `euler_from_quat(..., jacobian=True)`: `(yaw, pitch, roll, J)`, J `(..., 3, 3)`: rows yaw,
/// pitch, roll, columns the small-angle rotation (local-level axes).
pub fn euler_from_quat<'py>(py: Python<'py>, q: Operand<'py>, degrees: bool, threads: usize) -> PyResult<Bound<'py, PyTuple>> {
    let s = 1.0 / angle_scale(degrees);
    let (plan, [yaw, pitch, roll, j]) = map_elements_shaped(
        py,
        [q],
        [&[], &[], &[], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [y, p, r, oj]| {
            let (e, jac) = linearise::euler_from_quaternion_jacobian(&crate::rotations::quaternion(x[0], "q")?)?;
            (y[0], p[0], r[0]) = (e.yaw * s, e.pitch * s, e.roll * s);
            put(oj, &(jac * s));
            Ok(())
        },
    )?;
    tuple_of(py, &plan, vec![yaw, pitch, roll, j])
}

/// `quat_from_rotvec(v, jacobian=True)`: `(q, J)`, J the left Jacobian `(..., 3, 3)`.
pub fn quat_from_rotvec<'py>(py: Python<'py>, v: Operand<'py>, threads: usize) -> PyResult<Bound<'py, PyAny>> {
    let (_, [q, j]) = map_elements_shaped(
        py,
        [v],
        [&[4], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e.with_quantity("v"),
        |x, [o, oj]| {
            let (quaternion, jac) = linearise::quaternion_from_rotation_vector_jacobian(&v3(x[0]))?;
            crate::rotations::put_quaternion(o, &quaternion);
            put(oj, &jac);
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [q.into_any(), j.into_any()])?.into_any())
}

/// `quat_to_rotvec(q, jacobian=True)`: `(v, J)`, J `(..., 3, 3)` (the inverse left Jacobian).
pub fn quat_to_rotvec<'py>(py: Python<'py>, q: Operand<'py>, threads: usize) -> PyResult<Bound<'py, PyAny>> {
    let (_, [v, j]) = map_elements_shaped(
        py,
        [q],
        [&[3], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [o, oj]| {
            let (vector, jac) = linearise::rotation_vector_from_quaternion_jacobian(&crate::rotations::quaternion(x[0], "q")?)?;
            o.copy_from_slice(vector.as_slice());
            put(oj, &jac);
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [v.into_any(), j.into_any()])?.into_any())
}

/// The Jacobians of the total apparent acceleration, a dict of `(..., 3, 3)` arrays keyed by
/// the argument differentiated.
pub fn apparent_jacobians<'py>(py: Python<'py>, ops: [Operand<'py>; 5], threads: usize) -> PyResult<Bound<'py, PyDict>> {
    let core: [&[usize]; 5] = [&[3, 3]; 5];
    let (_, [jr, jv, ja0, jw, jal]) = map_elements_shaped(
        py,
        ops,
        core,
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [jr, jv, ja0, jw, jal]| {
            let dynamics =
                FrameDynamics { angular_velocity: v3(x[0]), angular_acceleration: v3(x[3]), origin_acceleration: v3(x[4]) };
            let (_, j) = linearise::apparent_terms_jacobian(&dynamics, &v3(x[1]), &v3(x[2]));
            put(jr, &j.position);
            put(jv, &j.velocity);
            put(ja0, &j.origin_acceleration);
            put(jw, &j.angular_velocity);
            put(jal, &j.angular_acceleration);
            Ok(())
        },
    )?;
    let out = PyDict::new(py);
    out.set_item("position", jr)?;
    out.set_item("velocity", jv)?;
    out.set_item("origin_acceleration", ja0)?;
    out.set_item("angular_velocity", jw)?;
    out.set_item("angular_acceleration", jal)?;
    Ok(out)
}

/// A square row-major matrix argument `(n, n)` (or `(n, m)` with `columns`).
pub fn matrix_arg(
    obj: &Bound<'_, PyAny>,
    name: &'static str,
    rows: Option<usize>,
    columns: Option<usize>,
) -> PyResult<DMatrix<f64>> {
    let array = crate::broadcast::real_array(obj, name)?;
    let shape = array.shape().to_vec();
    let ok = shape.len() == 2 && rows.is_none_or(|r| shape[0] == r) && columns.is_none_or(|c| shape[1] == c);
    if !ok {
        let want = match (rows, columns) {
            (Some(r), Some(c)) => format!("({r}, {c})"),
            (Some(r), None) => format!("({r}, m)"),
            _ => "a 2-D array".to_string(),
        };
        return Err(ShapeError::new_err(format!("`{name}` must have shape {want}, got {shape:?}")));
    }
    let values: Vec<f64> = array.readonly().as_array().iter().copied().collect();
    let m = DMatrix::from_row_slice(shape[0], shape[1], &values);
    if !m.iter().all(|x| x.is_finite()) {
        return Err(crate::errors::to_py(&rotaframe::Error::NonFinite { quantity: name }, ""));
    }
    Ok(m)
}

/// A row-major `(rows, columns)` numpy array of a matrix.
pub fn matrix_out<'py>(py: Python<'py>, m: &DMatrix<f64>) -> Bound<'py, PyArrayDyn<f64>> {
    let out = PyArrayDyn::<f64>::zeros(py, vec![m.nrows(), m.ncols()], false);
    {
        let mut w = out.readwrite();
        let o = crate::broadcast::out_slice(&mut w);
        for i in 0..m.nrows() {
            for j in 0..m.ncols() {
                o[i * m.ncols() + j] = m[(i, j)];
            }
        }
    }
    out
}

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
                .map_err(|e| crate::errors::to_py(&discrete_name(e), ""))?;
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
    #[pyo3(from_py_with = crate::args::method)] method: &str,
) -> PyResult<Bound<'py, PyTuple>> {
    let f = matrix_arg(F, "F", None, None)?;
    if f.nrows() != f.ncols() {
        return Err(ShapeError::new_err(format!("`F` must be square, got {}×{}", f.nrows(), f.ncols())));
    }
    let g = matrix_arg(G, "G", Some(f.nrows()), Some(12))?;
    let psd = noise_densities(noise)?;
    let dt = crate::args::number(dt, "dt")?;
    discrete(py, &f, &g, &psd, dt, method)
}

/// The 12 noise densities of an `ImuErrors` or an array.
fn noise_densities(noise: &Bound<'_, PyAny>) -> PyResult<SVector<f64, 12>> {
    if let Ok(errors) = noise.cast::<crate::nav::PyImuErrors>() {
        return Ok(inertial::noise_psd(errors.get().lock()?.model()));
    }
    let values = crate::nav::single(noise, "noise", &[12])?;
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
    history: &Bound<'py, crate::nav::PyStrapdownHistory>,
    imu_errors: &Bound<'py, crate::nav::PyImuErrors>,
    P0: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::args::every)] every: u64,
) -> PyResult<Bound<'py, PyTuple>> {
    let history = history.get();
    let replay = history.replay().ok_or_else(|| ShapeError::new_err("`history` does not come from Strapdown.run"))?;
    let model = *imu_errors.get().lock()?.model();
    let p0 = matrix_arg(P0, "P0", None, None)?;
    let n_states = p0.nrows();
    if p0.ncols() != n_states || !(n_states == 15 || n_states == 21) {
        return Err(ShapeError::new_err(format!("`P0` must be 15×15 or 21×21, got {}×{}", p0.nrows(), p0.ncols())));
    }
    let asymmetry = (&p0 - p0.transpose()).amax();
    if asymmetry > 1e-12 * p0.amax() {
        let e = rotaframe::Error::Invalid { quantity: "P0", reason: "must be symmetric" };
        return Err(crate::errors::to_py(&e, &format!("(largest difference {asymmetry:e})")));
    }
    if every == 0 {
        return Err(crate::errors::to_py(&rotaframe::Error::NotPositive { quantity: "every", value: 0.0 }, ""));
    }
    let (increments, heights) = replay_inputs(py, replay)?;
    let n = increments.len();
    let every = every as usize;
    let kept = |k: usize| (k + 1).is_multiple_of(every) || k + 1 == n;
    let m = (0..n).filter(|&k| kept(k)).count();
    let t = PyArrayDyn::<f64>::zeros(py, vec![m], false);
    let p = PyArrayDyn::<f64>::zeros(py, vec![m, n_states, n_states], false);
    let mut changed = false;
    {
        let (mut tw, mut pw) = (t.readwrite(), p.readwrite());
        let (to, po) = (crate::broadcast::out_slice(&mut tw), crate::broadcast::out_slice(&mut pw));
        let size = n_states * n_states;
        let mut row = 0;
        let mut sink = |k: usize, s: &rotaframe::nav::Strapdown, cov: &[f64]| {
            if kept(k) {
                to[row] = s.elapsed();
                // Symmetric: column-major storage is also row-major.
                po[row * size..(row + 1) * size].copy_from_slice(cov);
                row += 1;
            }
            if k + 1 == n && s.parts() != replay.end.parts() {
                changed = true;
            }
        };
        let result = py.detach(|| {
            macro_rules! sized {
                ($n:literal) => {{
                    let p0 = SMatrix::<f64, $n, $n>::from_column_slice(p0.as_slice());
                    inertial::predict_covariance::<$n>(&replay.start, &increments, heights.as_deref(), &model, &p0, |k, s, c| {
                        sink(k, s, c.as_slice())
                    })
                }};
            }
            if n_states == 15 { sized!(15) } else { sized!(21) }
        });
        result.map_err(|e| crate::errors::to_py(&e.error, &format!("(at increment {})", e.index)))?;
    }
    if changed {
        return Err(crate::errors::RotaframeError::new_err(
            "the increments given to the run that made `history` were changed after it: the replayed run does not end where the history does",
        ));
    }
    PyTuple::new(py, [t.into_any(), p.into_any()])
}

/// The increments (and height references) of a recorded run, read again from its arguments.
type ReplayInputs = (Vec<rotaframe::nav::ImuIncrement>, Option<Vec<f64>>);

fn replay_inputs(py: Python<'_>, replay: &crate::nav::Replay) -> PyResult<ReplayInputs> {
    let (dtheta, dv, dt) = (replay.dtheta.bind(py), replay.dv.bind(py), replay.dt.bind(py));
    let mut a = Operand::extract(dtheta, "dtheta", &[3])?;
    let mut v = Operand::extract(dv, "dv", &[3])?;
    let mut t = Operand::extract(dt, "dt", &[])?;
    let mut href = match &replay.height_reference {
        Some(h) => Some(Operand::extract(h.bind(py), "height_reference", &[])?),
        None => None,
    };
    let plan = match href.as_mut() {
        Some(h) => crate::broadcast::Plan::for_operands(&mut [&mut a, &mut v, &mut t, h], &[])?,
        None => crate::broadcast::Plan::for_operands(&mut [&mut a, &mut v, &mut t], &[])?,
    };
    let (aa, va, ta) = (a.access(&plan), v.access(&plan), t.access(&plan));
    let increments = (0..plan.n).map(|i| rotaframe::nav::ImuIncrement::new(aa.vec3(i), va.vec3(i), ta.scalar(i))).collect();
    let heights = href.as_ref().map(|h| {
        let access = h.access(&plan);
        (0..plan.n).map(|i| access.scalar(i)).collect()
    });
    Ok((increments, heights))
}
