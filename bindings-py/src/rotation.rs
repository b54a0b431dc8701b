//! Rotation conversions on numpy arrays: quaternions (w, x, y, z), matrices, z-y-x Euler
//! angles and rotation vectors. The algebra is nalgebra's, through the core.

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::nalgebra::{Matrix3, UnitQuaternion, Vector3};
use rotaframe::rotation::{self, EulerZyx};

use rotaframe::frames::{AnyFrame, FreeVector};

use crate::plumbing::broadcast::{BatchArgs, Operand, map_elements, tuple_of};
use rotaframe::linearise;

fn v3(s: &[f64]) -> Vector3<f64> {
    Vector3::new(s[0], s[1], s[2])
}

use crate::plumbing::broadcast::map_elements_shaped;
use crate::plumbing::output::{angle_scale, put_row_major};

fn same<const N: usize>(error: rotaframe::Error, _inputs: &[&[f64]; N]) -> rotaframe::Error {
    error
}

/// A validated unit quaternion from four `(w, x, y, z)` values.
pub fn quaternion(values: &[f64], name: &'static str) -> rotaframe::Result<UnitQuaternion<f64>> {
    rotation::quaternion_from_wxyz([values[0], values[1], values[2], values[3]], name)
}

/// A validated rotation from nine row-major matrix entries.
pub fn matrix(values: &[f64], name: &'static str) -> rotaframe::Result<UnitQuaternion<f64>> {
    rotation::quaternion_from_matrix(&Matrix3::from_row_slice(values), name)
}

/// Writes a quaternion as `(w, x, y, z)`.
pub fn put_quaternion(o: &mut [f64], q: &UnitQuaternion<f64>) {
    o.copy_from_slice(&rotation::quaternion_to_wxyz(q));
}

/// Writes a rotation as a row-major 3×3 matrix.
pub fn put_matrix(o: &mut [f64], q: &UnitQuaternion<f64>) {
    put_row_major(o, &rotation::matrix_from_quaternion(q));
}

/// Body-to-local-level quaternions `(..., 4)` from z-y-x (yaw, pitch, roll) Euler angles;
/// with `jacobian=True`, `(q, J)` with `J` `(..., 3, 3)` (rows the small-angle rotation in
/// local-level axes, columns yaw, pitch, roll).
#[pyfunction]
#[pyo3(signature = (yaw, pitch, roll, *, degrees=false, jacobian=false, out=None, threads=1))]
pub fn quat_from_euler<'py>(
    py: Python<'py>,
    yaw: &Bound<'py, PyAny>,
    pitch: &Bound<'py, PyAny>,
    roll: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let s = angle_scale(degrees);
    let ops = [Operand::extract(yaw, "yaw", &[])?, Operand::extract(pitch, "pitch", &[])?, Operand::extract(roll, "roll", &[])?];
    if jacobian {
        BatchArgs { out, threads }.refuse_out("with jacobian=True")?;
        return quat_from_euler_with_jacobian(py, ops, degrees, threads);
    }
    let (_, [out]) = map_elements(py, ops, &[4], BatchArgs { out, threads }, same, |x, [o]| {
        let e = EulerZyx::new(x[0][0] * s, x[1][0] * s, x[2][0] * s);
        for (value, name) in [(e.yaw, "yaw"), (e.pitch, "pitch"), (e.roll, "roll")] {
            if !value.is_finite() {
                return Err(rotaframe::Error::NonFinite { quantity: name });
            }
        }
        put_quaternion(o, &e.to_quaternion());
        Ok(())
    })?;
    Ok(out.into_any())
}

/// z-y-x Euler angles `(yaw, pitch, roll)` of body-to-local-level quaternions `q` `(..., 4)`;
/// with `jacobian=True`, `(yaw, pitch, roll, J)` with `J` `(..., 3, 3)` (columns the
/// small-angle rotation in local-level axes; refused within 1e-9 rad of ±90° pitch).
#[pyfunction]
#[pyo3(signature = (q, *, degrees=false, jacobian=false, out=None, threads=1))]
pub fn euler_from_quat<'py>(
    py: Python<'py>,
    q: &Bound<'py, PyAny>,
    degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    if jacobian {
        BatchArgs { out, threads }.refuse_out("with jacobian=True")?;
        return euler_from_quat_with_jacobian(py, Operand::extract(q, "q", &[4])?, degrees, threads);
    }
    let s = 1.0 / angle_scale(degrees);
    let (plan, [yaw, pitch, roll]) =
        map_elements(py, [Operand::extract(q, "q", &[4])?], &[], BatchArgs { out, threads }, same, |x, [yaw, pitch, roll]| {
            let e = EulerZyx::from_quaternion(&quaternion(x[0], "q")?);
            (yaw[0], pitch[0], roll[0]) = (e.yaw * s, e.pitch * s, e.roll * s);
            Ok(())
        })?;
    tuple_of(py, &plan, vec![yaw, pitch, roll])
}

/// Rotation matrices `(..., 3, 3)` of unit quaternions `(..., 4)`.
#[pyfunction]
#[pyo3(signature = (q, *, out=None, threads=1))]
pub fn quat_to_matrix<'py>(
    py: Python<'py>,
    q: &Bound<'py, PyAny>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let (_, [out]) = map_elements(py, [Operand::extract(q, "q", &[4])?], &[3, 3], BatchArgs { out, threads }, same, |x, [o]| {
        put_matrix(o, &quaternion(x[0], "q")?);
        Ok(())
    })?;
    Ok(out.into_any())
}

/// Unit quaternions `(..., 4)` of rotation matrices `(..., 3, 3)`.
#[pyfunction]
#[pyo3(signature = (m, *, out=None, threads=1))]
pub fn matrix_to_quat<'py>(
    py: Python<'py>,
    m: &Bound<'py, PyAny>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let (_, [out]) = map_elements(py, [Operand::extract(m, "m", &[3, 3])?], &[4], BatchArgs { out, threads }, same, |x, [o]| {
        put_quaternion(o, &matrix(x[0], "m")?);
        Ok(())
    })?;
    Ok(out.into_any())
}

/// Hamilton product `p ⊗ q` of unit quaternions `(..., 4)`: the rotation `q` followed by `p`.
#[pyfunction]
#[pyo3(signature = (p, q, *, out=None, threads=1))]
pub fn quat_multiply<'py>(
    py: Python<'py>,
    p: &Bound<'py, PyAny>,
    q: &Bound<'py, PyAny>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let ops = [Operand::extract(p, "p", &[4])?, Operand::extract(q, "q", &[4])?];
    let (_, [out]) = map_elements(py, ops, &[4], BatchArgs { out, threads }, same, |x, [o]| {
        put_quaternion(o, &(quaternion(x[0], "p")? * quaternion(x[1], "q")?));
        Ok(())
    })?;
    Ok(out.into_any())
}

/// The inverse (conjugate) of unit quaternions `(..., 4)`.
#[pyfunction]
#[pyo3(signature = (q, *, out=None, threads=1))]
pub fn quat_inverse<'py>(
    py: Python<'py>,
    q: &Bound<'py, PyAny>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let (_, [out]) = map_elements(py, [Operand::extract(q, "q", &[4])?], &[4], BatchArgs { out, threads }, same, |x, [o]| {
        put_quaternion(o, &quaternion(x[0], "q")?.inverse());
        Ok(())
    })?;
    Ok(out.into_any())
}

/// Vectors `v` `(..., 3)` rotated by unit quaternions `q` `(..., 4)`: `q v q*`.
#[pyfunction]
#[pyo3(signature = (q, v, *, out=None, threads=1))]
pub fn quat_rotate<'py>(
    py: Python<'py>,
    q: &Bound<'py, PyAny>,
    v: &Bound<'py, PyAny>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let ops = [Operand::extract(q, "q", &[4])?, Operand::extract(v, "v", &[3])?];
    let (_, [out]) = map_elements(py, ops, &[3], BatchArgs { out, threads }, same, |x, [o]| {
        let v = FreeVector::<AnyFrame>::try_from_vector(Vector3::new(x[1][0], x[1][1], x[1][2]), "v")?;
        o.copy_from_slice((quaternion(x[0], "q")? * v.vector).as_slice());
        Ok(())
    })?;
    Ok(out.into_any())
}

/// Unit quaternions `(..., 4)` of rotation vectors `(..., 3)` (angle × axis, radians); with
/// `jacobian=True`, `(q, J)` with the left Jacobian `J` `(..., 3, 3)`.
#[pyfunction]
#[pyo3(signature = (v, *, jacobian=false, out=None, threads=1))]
pub fn quat_from_rotvec<'py>(
    py: Python<'py>,
    v: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    if jacobian {
        BatchArgs { out, threads }.refuse_out("with jacobian=True")?;
        return quat_from_rotvec_with_jacobian(py, Operand::extract(v, "v", &[3])?, threads);
    }
    let (_, [out]) = map_elements(py, [Operand::extract(v, "v", &[3])?], &[4], BatchArgs { out, threads }, same, |x, [o]| {
        put_quaternion(o, &rotation::quaternion_from_rotation_vector(&Vector3::new(x[0][0], x[0][1], x[0][2]), "v")?);
        Ok(())
    })?;
    Ok(out.into_any())
}

/// Rotation vectors `(..., 3)` (angle in [0, π] × axis) of unit quaternions `(..., 4)`; with
/// `jacobian=True`, `(v, J)` with `J` `(..., 3, 3)` (refused within 1e-6 rad of a half turn).
#[pyfunction]
#[pyo3(signature = (q, *, jacobian=false, out=None, threads=1))]
pub fn quat_to_rotvec<'py>(
    py: Python<'py>,
    q: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    if jacobian {
        BatchArgs { out, threads }.refuse_out("with jacobian=True")?;
        return quat_to_rotvec_with_jacobian(py, Operand::extract(q, "q", &[4])?, threads);
    }
    let (_, [out]) = map_elements(py, [Operand::extract(q, "q", &[4])?], &[3], BatchArgs { out, threads }, same, |x, [o]| {
        o.copy_from_slice(rotation::rotation_vector_from_quaternion(&quaternion(x[0], "q")?).as_slice());
        Ok(())
    })?;
    Ok(out.into_any())
}

/// `quat_from_euler(..., jacobian=True)`: `(q, J)`, J `(..., 3, 3)`: rows the small-angle
/// rotation (local-level axes), columns yaw, pitch, roll.
fn quat_from_euler_with_jacobian<'py>(
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
            put_quaternion(o, &quaternion);
            put_row_major(oj, &(jac * s));
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [q.into_any(), j.into_any()])?.into_any())
}

/// `euler_from_quat(..., jacobian=True)`: `(yaw, pitch, roll, J)`, J `(..., 3, 3)`: rows yaw,
/// pitch, roll, columns the small-angle rotation (local-level axes).
fn euler_from_quat_with_jacobian<'py>(
    py: Python<'py>,
    q: Operand<'py>,
    degrees: bool,
    threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let s = 1.0 / angle_scale(degrees);
    let (plan, [yaw, pitch, roll, j]) = map_elements_shaped(
        py,
        [q],
        [&[], &[], &[], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [y, p, r, oj]| {
            let (e, jac) = linearise::euler_from_quaternion_jacobian(&quaternion(x[0], "q")?)?;
            (y[0], p[0], r[0]) = (e.yaw * s, e.pitch * s, e.roll * s);
            put_row_major(oj, &(jac * s));
            Ok(())
        },
    )?;
    tuple_of(py, &plan, vec![yaw, pitch, roll, j])
}

/// `quat_from_rotvec(v, jacobian=True)`: `(q, J)`, J the left Jacobian `(..., 3, 3)`.
fn quat_from_rotvec_with_jacobian<'py>(py: Python<'py>, v: Operand<'py>, threads: usize) -> PyResult<Bound<'py, PyAny>> {
    let (_, [q, j]) = map_elements_shaped(
        py,
        [v],
        [&[4], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e.with_quantity("v"),
        |x, [o, oj]| {
            let (quaternion, jac) = linearise::quaternion_from_rotation_vector_jacobian(&v3(x[0]))?;
            put_quaternion(o, &quaternion);
            put_row_major(oj, &jac);
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [q.into_any(), j.into_any()])?.into_any())
}

/// `quat_to_rotvec(q, jacobian=True)`: `(v, J)`, J `(..., 3, 3)` (the inverse left Jacobian).
fn quat_to_rotvec_with_jacobian<'py>(py: Python<'py>, q: Operand<'py>, threads: usize) -> PyResult<Bound<'py, PyAny>> {
    let (_, [v, j]) = map_elements_shaped(
        py,
        [q],
        [&[3], &[3, 3]],
        BatchArgs { out: None, threads },
        |e, _| e,
        |x, [o, oj]| {
            let (vector, jac) = linearise::rotation_vector_from_quaternion_jacobian(&quaternion(x[0], "q")?)?;
            o.copy_from_slice(vector.as_slice());
            put_row_major(oj, &jac);
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [v.into_any(), j.into_any()])?.into_any())
}
