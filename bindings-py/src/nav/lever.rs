//! Lever arms: the position and velocity of a point fixed on the body (the core's
//! `nav::lever`).

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::Geodetic;
use rotaframe::nalgebra::Vector3;
use rotaframe::nav::{self, NavState};

use crate::earth::model::{PyEarthModel, model_or_default};
use crate::plumbing::broadcast::{BatchArgs, Operand, map_elements_shaped, tuple_of};
use crate::plumbing::errors::python_error;
use crate::plumbing::output::angle_scale;
use crate::rotation::quaternion;

/// Geodetic position and NED velocity `(lat, lon, h, v_ned)` of the point at `lever_arm` (m,
/// resolved in the body) on vehicles with navigation states `(lat, lon, h, v_ned, attitude)`
/// and gyro readings `angular_rate` (rad/s, body relative to inertial space, in body axes).
/// Broadcasts over leading axes.
#[pyfunction]
#[pyo3(signature = (lat, lon, h, v_ned, attitude, angular_rate, lever_arm, *, model=None, degrees=false, out=None, threads=1))]
pub fn lever_arm_state<'py>(
    py: Python<'py>,
    lat: &Bound<'py, PyAny>,
    lon: &Bound<'py, PyAny>,
    h: &Bound<'py, PyAny>,
    v_ned: &Bound<'py, PyAny>,
    attitude: &Bound<'py, PyAny>,
    angular_rate: &Bound<'py, PyAny>,
    lever_arm: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyTuple>> {
    let model = model_or_default(model.as_ref());
    let ops = [
        Operand::extract(lat, "lat", &[])?,
        Operand::extract(lon, "lon", &[])?,
        Operand::extract(h, "h", &[])?,
        Operand::extract(v_ned, "v_ned", &[3])?,
        Operand::extract(attitude, "attitude", &[4])?,
        Operand::extract(angular_rate, "angular_rate", &[3])?,
        Operand::extract(lever_arm, "lever_arm", &[3])?,
    ];
    let s = angle_scale(degrees);
    let v3 = |x: &[f64]| Vector3::new(x[0], x[1], x[2]);
    let rename = |e, x: &[&[f64]; 7]| python_error(e, degrees, x[0][0]);
    let (plan, [la, lo, hh, vel]) =
        map_elements_shaped(py, ops, [&[], &[], &[], &[3]], BatchArgs { out, threads }, rename, |x, [la, lo, hh, vel]| {
            let q = quaternion(x[4], "attitude")?;
            let state = NavState::new(Geodetic::new(x[0][0] * s, x[1][0] * s, x[2][0]), v3(x[3]), q);
            let (p, v) = nav::lever_arm_state(&model, &state, &v3(x[5]), &v3(x[6]))?;
            (la[0], lo[0], hh[0]) = (p.latitude / s, p.longitude / s, p.height);
            vel.copy_from_slice(v.as_slice());
            Ok(())
        })?;
    tuple_of(py, &plan, vec![la, lo, hh, vel])
}
