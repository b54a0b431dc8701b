//! Geodesy, gravity, field quantities and the Earth Rotation Angle on numpy arrays.
//!
//! Each function converts and broadcasts its arguments, loops over the batch with the GIL
//! released calling the core, and maps errors; no formula lives here.

use numpy::PyArrayMethods;
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::{self, EarthModel};
use rotaframe::nalgebra::{Matrix3, Vector3};

use crate::earth::model::{PyEarthModel, model_or_default};
use crate::plumbing::batch::{self, Outputs};
use crate::plumbing::broadcast::map_elements_shaped;
use crate::plumbing::broadcast::{
    BatchArgs, Failure, Operand, Plan, failure_to_py, map_elements, out_slice, scalar_or_array, tuple_of,
};
use crate::plumbing::errors::{python_error, python_name};
use crate::plumbing::output::{angle_scale, put_row_major};
use rotaframe::earth::Geodetic;
use rotaframe::linearise;

/// [`python_error`] for kernels whose first argument is the latitude.
fn lat_first<const N: usize>(degrees: bool) -> impl Fn(rotaframe::Error, &[&[f64]; N]) -> rotaframe::Error + Sync {
    move |e, x| python_error(e, degrees, x[0][0])
}

/// All `plan.n` values of a scalar operand, scaled, as one contiguous vector.
fn expanded(op: &Operand<'_>, plan: &Plan, scale: f64) -> Vec<f64> {
    let access = op.access(plan);
    (0..plan.n).map(|i| access.scalar(i) * scale).collect()
}

fn v3(s: &[f64]) -> Vector3<f64> {
    Vector3::new(s[0], s[1], s[2])
}

fn put3(o: &mut [f64], v: &Vector3<f64>) {
    o.copy_from_slice(v.as_slice());
}

/// ECEF coordinates (m), shape `(..., 3)`, of geodetic latitude, longitude and ellipsoidal height;
/// with `jacobian=True`, `(xyz, J)` with `J` `(..., 3, 3)` (columns lat, lon, h).
#[pyfunction]
#[pyo3(signature = (lat, lon, h, *, model=None, degrees=false, jacobian=false, out=None, threads=1))]
pub fn geodetic_to_ecef<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let model = model_or_default(model.as_ref());
    let (mut lat, mut lon, mut h) =
        (Operand::extract(lat, "lat", &[])?, Operand::extract(lon, "lon", &[])?, Operand::extract(h, "h", &[])?);
    let batch = BatchArgs { out, threads };
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
        return geodetic_to_ecef_with_jacobian(py, [lat, lon, h], &model, degrees, threads);
    }
    let plan = Plan::for_operands(&mut [&mut lat, &mut lon, &mut h], &[])?;
    let outputs = Outputs::new(py, batch.out, &plan.shape, [&[3]])?;
    let [out] = &outputs.arrays;
    {
        let scale = angle_scale(degrees);
        // Radian inputs that already cover the batch are read in place; others are expanded.
        let owned: [Option<Vec<f64>>; 3] = [
            lat.full_slice(&plan, scale).is_none().then(|| expanded(&lat, &plan, scale)),
            lon.full_slice(&plan, scale).is_none().then(|| expanded(&lon, &plan, scale)),
            h.full_slice(&plan, 1.0).is_none().then(|| expanded(&h, &plan, 1.0)),
        ];
        let la = owned[0].as_deref().or(lat.full_slice(&plan, scale)).expect("one of the two");
        let lo = owned[1].as_deref().or(lon.full_slice(&plan, scale)).expect("one of the two");
        let hh = owned[2].as_deref().or(h.full_slice(&plan, 1.0)).expect("one of the two");
        let mut w = out.readwrite();
        let (xyz, _) = out_slice(&mut w).as_chunks_mut::<3>();
        let ranges = batch::chunk_ranges(plan.n, threads);
        let work: Vec<_> = ranges.iter().cloned().zip(batch::split(xyz, &ranges, 1)).collect();
        let results = py.detach(|| {
            batch::parallel(threads, work, |(r, xyz)| {
                let (la, lo, hh) = (&la[r.clone()], &lo[r.clone()], &hh[r.clone()]);
                earth::geodetic_to_ecef_slices(&model, la, lo, hh, xyz)
                    .map_err(|e| rotaframe::BatchError { index: r.start + e.index, error: e.error })
            })
        })?;
        drop(w);
        batch::first_failure(results, |e| e.index).map_err(|e| {
            outputs.poison();
            let error = python_error(e.error, degrees, la[e.index] / scale);
            failure_to_py(&Failure { index: e.index, error }, &plan, &[&lat, &lon, &h])
        })?;
    }
    let [out] = outputs.arrays;
    Ok(out.into_any())
}

/// Geodetic `(lat, lon, h)` of ECEF points `xyz` (m), shape `(..., 3)`; with `jacobian=True`,
/// `(lat, lon, h, J)` with `J` `(..., 3, 3)` (rows lat, lon, h).
#[pyfunction]
#[pyo3(signature = (xyz, *, model=None, degrees=false, jacobian=false, out=None, threads=1))]
pub fn ecef_to_geodetic<'py>(
    py: Python<'py>,
    xyz: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let model = model_or_default(model.as_ref());
    let mut xyz = Operand::extract(xyz, "xyz", &[3])?;
    let batch = BatchArgs { out, threads };
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
        return ecef_to_geodetic_with_jacobian(py, xyz, &model, degrees, threads);
    }
    let mut plan = Plan::for_operands(&mut [&mut xyz], &[])?;
    let outputs = Outputs::new(py, batch.out, &plan.shape, [&[], &[], &[]])?;
    plan.out_given = outputs.given;
    {
        let owned = xyz.full_slice(&plan, 1.0).is_none().then(|| {
            let access = xyz.access(&plan);
            (0..plan.n).flat_map(|i| access.slice(i).to_vec()).collect::<Vec<f64>>()
        });
        let points = owned.as_deref().or(xyz.full_slice(&plan, 1.0)).expect("one of the two");
        let (points, _) = points.as_chunks::<3>();
        let mut guards: Vec<_> = outputs.arrays.iter().map(|o| o.readwrite()).collect();
        let [lat, lon, h] = &mut guards[..] else { unreachable!("three outputs") };
        let ranges = batch::chunk_ranges(plan.n, threads);
        let work: Vec<_> = ranges
            .iter()
            .cloned()
            .zip(batch::split(out_slice(lat), &ranges, 1))
            .zip(batch::split(out_slice(lon), &ranges, 1))
            .zip(batch::split(out_slice(h), &ranges, 1))
            .collect();
        let results = py.detach(|| {
            batch::parallel(threads, work, |(((r, lat), lon), h)| {
                earth::ecef_to_geodetic_slices(&model, &points[r.clone()], lat, lon, h)
                    .map_err(|e| rotaframe::BatchError { index: r.start + e.index, error: e.error })?;
                if degrees {
                    lat.iter_mut().chain(lon.iter_mut()).for_each(|v| *v = v.to_degrees());
                }
                Ok::<(), rotaframe::BatchError>(())
            })
        })?;
        drop(guards);
        batch::first_failure(results, |e| e.index).map_err(|e| {
            outputs.poison();
            failure_to_py(&Failure { index: e.index, error: python_name(e.error) }, &plan, &[&xyz])
        })?;
    }
    tuple_of(py, &plan, outputs.arrays.into())
}

/// `C_e^n` matrices `(..., 3, 3)` with `v_ned = C @ v_ecef`.
#[pyfunction]
///
/// With `jacobian=True`, `(C, J)`: `J` `(..., 3, 2)` is the small-angle rotation of the local
/// axes relative to ECEF, resolved in ECEF, per unit latitude and longitude.
#[pyo3(signature = (lat, lon, *, degrees=false, jacobian=false, out=None, threads=1))]
pub fn ned_from_ecef<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let batch = BatchArgs { out, threads };
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
        let ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(lon, "lon", &[])?];
        return local_rotation_with_jacobian(py, ops, degrees, earth::ned_from_ecef, threads);
    }
    local_rotation(py, lat, lon, degrees, earth::ned_from_ecef, batch)
}

/// `C_e^enu` matrices `(..., 3, 3)` with `v_enu = C @ v_ecef`.
#[pyfunction]
///
/// With `jacobian=True`, `(C, J)`: `J` `(..., 3, 2)` is the small-angle rotation of the local
/// axes relative to ECEF, resolved in ECEF, per unit latitude and longitude.
#[pyo3(signature = (lat, lon, *, degrees=false, jacobian=false, out=None, threads=1))]
pub fn enu_from_ecef<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let batch = BatchArgs { out, threads };
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
        let ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(lon, "lon", &[])?];
        return local_rotation_with_jacobian(py, ops, degrees, earth::enu_from_ecef, threads);
    }
    local_rotation(py, lat, lon, degrees, earth::enu_from_ecef, batch)
}

type RotationAt = fn(f64, f64) -> rotaframe::Result<rotaframe::nalgebra::Matrix3<f64>>;

fn local_rotation<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    degrees: bool,
    f: RotationAt,
    batch: BatchArgs<'_, 'py>,
) -> PyResult<Bound<'py, PyAny>> {
    let s = angle_scale(degrees);
    let ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(lon, "lon", &[])?];
    let (_, [out]) = map_elements(py, ops, &[3, 3], batch, lat_first(degrees), |x, [o]| {
        let m = f(x[0][0] * s, x[1][0] * s)?;
        put_row_major(o, &m);
        Ok(())
    })?;
    Ok(out.into_any())
}

/// `(meridian, prime_vertical)` radii of curvature (m) at geodetic latitudes.
#[pyfunction]
#[pyo3(signature = (lat, *, model=None, degrees=false, out=None, threads=1))]
pub fn radii_of_curvature<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let (model, s) = (model_or_default(model.as_ref()), angle_scale(degrees));
    let batch = BatchArgs { out, threads };
    let (plan, [m, n]) = map_elements(py, [Operand::extract(lat, "lat", &[])?], &[], batch, lat_first(degrees), |x, [m, n]| {
        let r = earth::radii_of_curvature(&model, x[0][0] * s)?;
        m[0] = r.meridian;
        n[0] = r.prime_vertical;
        Ok(())
    })?;
    tuple_of(py, &plan, vec![m, n])
}

/// A scalar function of latitude and an optional second scalar (height), per element.
fn lat_scalar<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    degrees: bool,
    batch: BatchArgs<'_, 'py>,
    f: impl Fn(f64, f64) -> rotaframe::Result<f64> + Sync,
) -> PyResult<Bound<'py, PyAny>> {
    let s = angle_scale(degrees);
    let ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(h, "h", &[])?];
    let (plan, [out]) = map_elements(py, ops, &[], batch, lat_first(degrees), |x, [o]| {
        o[0] = f(x[0][0] * s, x[1][0])?;
        Ok(())
    })?;
    scalar_or_array(py, &plan, out)
}

/// Normal gravity (m/s²) at geodetic latitude and ellipsoidal height (Somigliana, TR8350.2);
/// with `jacobian=True`, `(γ, J)` with `J` `(..., 2)`: `∂γ/∂lat`, `∂γ/∂h`.
#[pyfunction]
#[pyo3(signature = (lat, h=None, *, model=None, degrees=false, jacobian=false, out=None, threads=1))]
pub fn normal_gravity<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    h: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let model = model_or_default(model.as_ref());
    let zero = 0.0f64.into_pyobject(py)?.into_any();
    let batch = BatchArgs { out, threads };
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
        let ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(h.unwrap_or(&zero), "h", &[])?];
        return Ok(normal_gravity_with_jacobian(py, ops, &model, degrees, threads)?.into_any());
    }
    lat_scalar(py, lat, h.unwrap_or(&zero), degrees, batch, |lat, h| earth::normal_gravity_at_height(&model, lat, h))
}

/// The Schuler period (s) at geodetic latitude and ellipsoidal height:
/// `2π √((√(M N) + h) / γ(φ, h))`, about 84.5 min at 45°.
#[pyfunction]
#[pyo3(signature = (lat, h=None, *, model=None, degrees=false, out=None, threads=1))]
pub fn schuler_period<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    h: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let model = model_or_default(model.as_ref());
    let zero = 0.0f64.into_pyobject(py)?.into_any();
    lat_scalar(py, lat, h.unwrap_or(&zero), degrees, BatchArgs { out, threads }, |lat, h| earth::schuler_period(&model, lat, h))
}

/// Plumb-line gravity `(0, 0, γ(φ, h))` resolved in NED (m/s²), shape `(..., 3)`.
#[pyfunction]
#[pyo3(signature = (lat, h=None, *, model=None, degrees=false, out=None, threads=1))]
pub fn gravity_ned<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    h: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let (model, s) = (model_or_default(model.as_ref()), angle_scale(degrees));
    let ops = [Operand::extract(lat, "lat", &[])?, Operand::optional(h, "h", &[])?];
    let (_, [out]) = map_elements(py, ops, &[3], BatchArgs { out, threads }, lat_first(degrees), |x, [o]| {
        put3(o, &earth::gravity_ned(&model, x[0][0] * s, x[1][0])?);
        Ok(())
    })?;
    Ok(out.into_any())
}

fn ecef_vector<'py>(
    py: Python<'py>,
    xyz: &Bound<'py, PyAny>,
    model: &EarthModel,
    f: fn(&EarthModel, &Vector3<f64>) -> rotaframe::Result<Vector3<f64>>,
    batch: BatchArgs<'_, 'py>,
) -> PyResult<Bound<'py, PyAny>> {
    let (_, [out]) = map_elements(
        py,
        [Operand::extract(xyz, "xyz", &[3])?],
        &[3],
        batch,
        |e, _| python_name(e),
        |x, [o]| {
            put3(o, &f(model, &v3(x[0]))?);
            Ok(())
        },
    )?;
    Ok(out.into_any())
}

type Field = fn(&EarthModel, &Vector3<f64>) -> rotaframe::Result<Vector3<f64>>;
pub type FieldJacobian = fn(&EarthModel, &Vector3<f64>) -> rotaframe::Result<(Vector3<f64>, rotaframe::nalgebra::Matrix3<f64>)>;

/// A field at ECEF points, or with `jacobian` the field and its gradient.
fn ecef_field<'py>(
    py: Python<'py>,
    xyz: &Bound<'py, PyAny>,
    model: &EarthModel,
    jacobian: bool,
    (field, gradient): (Field, FieldJacobian),
    batch: BatchArgs<'_, 'py>,
) -> PyResult<Bound<'py, PyAny>> {
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
        return ecef_field_with_jacobian(py, Operand::extract(xyz, "xyz", &[3])?, model, gradient, batch.threads);
    }
    ecef_vector(py, xyz, model, field, batch)
}

/// J2 gravitation (no centrifugal part) at ECEF positions, resolved in ECEF (m/s²).
#[pyfunction]
///
/// With `jacobian=True`, `(g, J)` with the gradient `J` `(..., 3, 3)` (s⁻²).
#[pyo3(signature = (xyz, *, model=None, jacobian=false, out=None, threads=1))]
pub fn gravitation_ecef<'py>(
    py: Python<'py>,
    xyz: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    ecef_field(
        py,
        xyz,
        &model_or_default(model.as_ref()),
        jacobian,
        (earth::gravitation_ecef, rotaframe::linearise::gravitation_jacobian),
        BatchArgs { out, threads },
    )
}

/// Gravity (J2 gravitation plus centrifugal) at ECEF positions, resolved in ECEF (m/s²).
#[pyfunction]
///
/// With `jacobian=True`, `(g, J)` with the gradient `J` `(..., 3, 3)` (s⁻²).
#[pyo3(signature = (xyz, *, model=None, jacobian=false, out=None, threads=1))]
pub fn gravity_ecef<'py>(
    py: Python<'py>,
    xyz: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    ecef_field(
        py,
        xyz,
        &model_or_default(model.as_ref()),
        jacobian,
        (earth::gravity_ecef, rotaframe::linearise::gravity_ecef_jacobian),
        BatchArgs { out, threads },
    )
}

/// Centripetal acceleration `ω × (ω × r)` of Earth-fixed points at ECEF positions (m/s²).
#[pyfunction]
#[pyo3(signature = (xyz, *, model=None, out=None, threads=1))]
pub fn centripetal_acceleration_ecef<'py>(
    py: Python<'py>,
    xyz: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    ecef_vector(py, xyz, &model_or_default(model.as_ref()), earth::centripetal_acceleration_ecef, BatchArgs { out, threads })
}

/// Earth rate `Ω (cos φ, 0, −sin φ)` resolved in NED (rad/s), shape `(..., 3)`.
#[pyfunction]
#[pyo3(signature = (lat, *, model=None, degrees=false, out=None, threads=1))]
pub fn earth_rate_ned<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let (model, s) = (model_or_default(model.as_ref()), angle_scale(degrees));
    let (_, [out]) = map_elements(
        py,
        [Operand::extract(lat, "lat", &[])?],
        &[3],
        BatchArgs { out, threads },
        lat_first(degrees),
        |x, [o]| {
            put3(o, &earth::earth_rate_ned(&model, x[0][0] * s)?);
            Ok(())
        },
    )?;
    Ok(out.into_any())
}

/// A 3-vector function of latitude, height and NED velocity, per element.
fn lat_h_velocity<'py>(
    py: Python<'py>,
    [lat, h, v]: [&Bound<'py, PyAny>; 3],
    degrees: bool,
    out_core: &[usize],
    batch: BatchArgs<'_, 'py>,
    f: impl Fn(f64, f64, &Vector3<f64>, &mut [f64]) -> rotaframe::Result<()> + Sync,
) -> PyResult<(Plan, Bound<'py, numpy::PyArrayDyn<f64>>)> {
    let s = angle_scale(degrees);
    let ops = [Operand::extract(lat, "lat", &[])?, Operand::extract(h, "h", &[])?, Operand::extract(v, "v_ned", &[3])?];
    let (plan, [out]) =
        map_elements(py, ops, out_core, batch, lat_first(degrees), |x, [o]| f(x[0][0] * s, x[1][0], &v3(x[2]), o))?;
    Ok((plan, out))
}

type VectorAtVelocity = fn(&EarthModel, f64, f64, &Vector3<f64>) -> rotaframe::Result<Vector3<f64>>;

fn velocity_vector<'py>(
    py: Python<'py>,
    args: [&Bound<'py, PyAny>; 3],
    model: Option<&Bound<'py, PyEarthModel>>,
    degrees: bool,
    f: VectorAtVelocity,
    batch: BatchArgs<'_, 'py>,
) -> PyResult<Bound<'py, PyAny>> {
    let model = model_or_default(model);
    let (_, out) = lat_h_velocity(py, args, degrees, &[3], batch, |lat, h, v, o| {
        put3(o, &f(&model, lat, h, v)?);
        Ok(())
    })?;
    Ok(out.into_any())
}

/// Transport rate (angular velocity of NED relative to the Earth) resolved in NED (rad/s).
#[pyfunction]
#[pyo3(signature = (lat, h, v_ned, *, model=None, degrees=false, out=None, threads=1))]
pub fn transport_rate_ned<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    v_ned: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    velocity_vector(py, [lat, h, v_ned], model.as_ref(), degrees, earth::transport_rate_ned, BatchArgs { out, threads })
}

/// The Coriolis and transport-rate term `−(2 ω_ie + ω_en) × v` of the NED velocity equation (m/s²).
#[pyfunction]
#[pyo3(signature = (lat, h, v_ned, *, model=None, degrees=false, out=None, threads=1))]
pub fn coriolis_ned<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    v_ned: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    velocity_vector(py, [lat, h, v_ned], model.as_ref(), degrees, earth::coriolis_ned, BatchArgs { out, threads })
}

/// Eötvös correction (m/s², to add to a moving gravimeter's reading).
#[pyfunction]
#[pyo3(signature = (lat, v_ned, h=None, *, model=None, degrees=false, out=None, threads=1))]
pub fn eotvos_correction<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    v_ned: &Bound<'py, PyAny>,
    h: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let model = model_or_default(model.as_ref());
    let zero = 0.0f64.into_pyobject(py)?.into_any();
    let (plan, out) =
        lat_h_velocity(py, [lat, h.unwrap_or(&zero), v_ned], degrees, &[], BatchArgs { out, threads }, |lat, h, v, o| {
            o[0] = earth::eotvos_correction(&model, lat, h, v)?;
            Ok(())
        })?;
    scalar_or_array(py, &plan, out)
}

/// Coriolis parameter `2 Ω sin φ` (1/s).
#[pyfunction]
#[pyo3(signature = (lat, *, model=None, degrees=false, out=None, threads=1))]
pub fn coriolis_parameter<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let model = model_or_default(model.as_ref());
    let zero = 0.0f64.into_pyobject(py)?.into_any();
    lat_scalar(py, lat, &zero, degrees, BatchArgs { out, threads }, |lat, _| earth::coriolis_parameter(&model, lat))
}

/// Earth Rotation Angle (rad, in [0, 2π)) at UT1 Julian dates given in two parts.
#[pyfunction]
#[pyo3(signature = (jd_ut1, jd_ut1_fraction=None, *, out=None, threads=1))]
pub fn earth_rotation_angle<'py>(
    py: Python<'py>,
    jd_ut1: &Bound<'py, PyAny>,
    jd_ut1_fraction: Option<&Bound<'py, PyAny>>,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let ops = [Operand::extract(jd_ut1, "jd_ut1", &[])?, Operand::optional(jd_ut1_fraction, "jd_ut1_fraction", &[])?];
    let (plan, [out]) = map_elements(
        py,
        ops,
        &[],
        BatchArgs { out, threads },
        |e, _| python_name(e),
        |x, [o]| {
            o[0] = earth::earth_rotation_angle(x[0][0], x[1][0])?;
            Ok(())
        },
    )?;
    scalar_or_array(py, &plan, out)
}

/// `geodetic_to_ecef(..., jacobian=True)`: `(xyz, J)`, J `(..., 3, 3)` with columns lat, lon, h.
fn geodetic_to_ecef_with_jacobian<'py>(
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
        put_row_major(oj, &jac);
        Ok(())
    })?;
    Ok(PyTuple::new(py, [xyz.into_any(), j.into_any()])?.into_any())
}

/// `ecef_to_geodetic(..., jacobian=True)`: `(lat, lon, h, J)`, J `(..., 3, 3)` with rows lat,
/// lon, h and columns x, y, z.
fn ecef_to_geodetic_with_jacobian<'py>(
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
            put_row_major(oj, &jac);
            Ok(())
        },
    )?;
    tuple_of(py, &plan, vec![lat, lon, h, j])
}

/// `ned_from_ecef` / `enu_from_ecef` with `jacobian=True`: `(C, J)`, J `(..., 3, 2)`: the
/// small-angle rotation of the local-level axes relative to ECEF, resolved in ECEF, per unit
/// latitude and longitude (the same for NED and ENU axes).
fn local_rotation_with_jacobian<'py>(
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
            put_row_major(o, &f(lat, lon)?);
            put_row_major(oj, &(linearise::local_level_rotation_jacobian(lat, lon)? * s));
            Ok(())
        })?;
    Ok(PyTuple::new(py, [c.into_any(), j.into_any()])?.into_any())
}

/// `normal_gravity(..., jacobian=True)`: `(γ, J)`, J `(..., 2)`: `∂γ/∂lat`, `∂γ/∂h`.
fn normal_gravity_with_jacobian<'py>(
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
fn ecef_field_with_jacobian<'py>(
    py: Python<'py>,
    xyz: Operand<'py>,
    model: &EarthModel,
    f: FieldJacobian,
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
            put_row_major(oj, &jac);
            Ok(())
        },
    )?;
    Ok(PyTuple::new(py, [g.into_any(), j.into_any()])?.into_any())
}
