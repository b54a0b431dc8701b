//! `EarthModel`: the core's level ellipsoid as a Python value.

use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::earth::{self, EarthModel};

use crate::plumbing::errors::to_py;

/// A reference ellipsoid with its normal gravity field (see `rotaframe.WGS84`, `rotaframe.GRS80`).
#[pyclass(frozen, name = "EarthModel", module = "rotaframe._native")]
#[derive(Debug, Clone, Copy)]
pub struct PyEarthModel {
    pub inner: EarthModel,
    preset: Option<&'static str>,
}

impl PyEarthModel {
    pub fn preset(inner: EarthModel, name: &'static str) -> Self {
        Self { inner, preset: Some(name) }
    }
}

/// A model-construction error with the core's constant names spelled as `EarthModel`'s
/// keywords.
fn model_error(error: rotaframe::Error) -> PyErr {
    let name = match error.quantity() {
        "semi_major_axis" => "a",
        "flattening" => "f",
        "rotation_rate" => "omega",
        _ => "",
    };
    to_py(&if name.is_empty() { error } else { error.with_quantity(name) }, "")
}

/// The model argument of a function: the given one, or WGS 84.
pub fn model_or_default(model: Option<&Bound<'_, PyEarthModel>>) -> EarthModel {
    model.map_or(earth::WGS84, |m| m.get().inner)
}

#[pymethods]
impl PyEarthModel {
    /// A custom model. With only `a`, `f`, `gm` and `omega` the normal-gravity constants and J2
    /// are derived (level ellipsoid); otherwise give all of `gamma_equator`, `gamma_pole`, `j2`.
    #[new]
    #[pyo3(signature = (*, a, f, gm, omega, gamma_equator=None, gamma_pole=None, j2=None))]
    fn new(
        #[pyo3(from_py_with = crate::plumbing::args::a)] a: f64,
        #[pyo3(from_py_with = crate::plumbing::args::f)] f: f64,
        #[pyo3(from_py_with = crate::plumbing::args::gm)] gm: f64,
        #[pyo3(from_py_with = crate::plumbing::args::omega)] omega: f64,
        #[pyo3(from_py_with = crate::plumbing::args::gamma_equator)] gamma_equator: Option<f64>,
        #[pyo3(from_py_with = crate::plumbing::args::gamma_pole)] gamma_pole: Option<f64>,
        #[pyo3(from_py_with = crate::plumbing::args::j2)] j2: Option<f64>,
    ) -> PyResult<Self> {
        let inner = match (gamma_equator, gamma_pole, j2) {
            (None, None, None) => EarthModel::from_defining_constants(a, f, gm, omega),
            (Some(ge), Some(gp), Some(j2)) => EarthModel::custom(a, f, gm, omega, ge, gp, j2),
            _ => Err(rotaframe::Error::Invalid {
                quantity: "gamma_equator",
                reason: "give gamma_equator, gamma_pole and j2 together, or none of them",
            }),
        }
        .map_err(model_error)?;
        Ok(Self { inner, preset: None })
    }

    /// Semi-major axis (m).
    #[getter]
    fn a(&self) -> f64 {
        self.inner.semi_major_axis()
    }
    /// Flattening.
    #[getter]
    fn f(&self) -> f64 {
        self.inner.flattening()
    }
    /// Semi-minor axis (m).
    #[getter]
    fn b(&self) -> f64 {
        self.inner.semi_minor_axis()
    }
    /// First eccentricity squared.
    #[getter]
    fn e2(&self) -> f64 {
        self.inner.eccentricity_squared()
    }
    /// Second eccentricity squared.
    #[getter]
    fn ep2(&self) -> f64 {
        self.inner.second_eccentricity_squared()
    }
    /// Geocentric gravitational constant (m³/s²).
    #[getter]
    fn gm(&self) -> f64 {
        self.inner.gm()
    }
    /// Rotation rate (rad/s).
    #[getter]
    fn omega(&self) -> f64 {
        self.inner.rotation_rate()
    }
    /// Normal gravity at the equator (m/s²).
    #[getter]
    fn gamma_equator(&self) -> f64 {
        self.inner.gamma_equator()
    }
    /// Normal gravity at the poles (m/s²).
    #[getter]
    fn gamma_pole(&self) -> f64 {
        self.inner.gamma_pole()
    }
    /// Dynamical form factor J2.
    #[getter]
    fn j2(&self) -> f64 {
        self.inner.j2()
    }
    /// Somigliana's constant k.
    #[getter]
    fn k(&self) -> f64 {
        self.inner.somigliana_k()
    }
    /// m = ω² a² b / GM.
    #[getter]
    fn m(&self) -> f64 {
        self.inner.gravity_ratio_m()
    }

    fn __repr__(&self) -> String {
        match self.preset {
            Some(name) => format!("EarthModel<{name}>"),
            None => format!(
                "EarthModel(a={:?}, f={:?}, gm={:?}, omega={:?}, gamma_equator={:?}, gamma_pole={:?}, j2={:?})",
                self.a(),
                self.f(),
                self.gm(),
                self.omega(),
                self.gamma_equator(),
                self.gamma_pole(),
                self.j2()
            ),
        }
    }

    fn __eq__(&self, other: &Bound<'_, PyAny>) -> bool {
        other.cast::<PyEarthModel>().is_ok_and(|o| o.get().inner == self.inner)
    }

    fn __hash__(&self) -> u64 {
        [self.a(), self.f(), self.gm(), self.omega(), self.gamma_equator(), self.gamma_pole(), self.j2()]
            .iter()
            .fold(0xcbf2_9ce4_8422_2325u64, |h, v| (h ^ v.to_bits()).wrapping_mul(0x0100_0000_01b3))
    }

    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let rebuild = py.import("rotaframe._native")?.getattr("_earth_model_from_constants")?;
        let m = &self.inner;
        let preset = self.preset.unwrap_or("");
        let args =
            (m.semi_major_axis(), m.flattening(), m.gm(), m.rotation_rate(), m.gamma_equator(), m.gamma_pole(), m.j2(), preset);
        Ok((rebuild, args.into_pyobject(py)?))
    }
}

/// Rebuilds a pickled `EarthModel` (presets come back as the preset).
#[pyfunction]
pub fn _earth_model_from_constants(
    #[pyo3(from_py_with = crate::plumbing::args::a)] a: f64,
    #[pyo3(from_py_with = crate::plumbing::args::f)] f: f64,
    #[pyo3(from_py_with = crate::plumbing::args::gm)] gm: f64,
    #[pyo3(from_py_with = crate::plumbing::args::omega)] omega: f64,
    #[pyo3(from_py_with = crate::plumbing::args::req_gamma_equator)] gamma_equator: f64,
    #[pyo3(from_py_with = crate::plumbing::args::req_gamma_pole)] gamma_pole: f64,
    #[pyo3(from_py_with = crate::plumbing::args::req_j2)] j2: f64,
    preset: &str,
) -> PyResult<PyEarthModel> {
    match preset {
        "WGS84" => return Ok(PyEarthModel::preset(earth::WGS84, "WGS84")),
        "GRS80" => return Ok(PyEarthModel::preset(earth::GRS80, "GRS80")),
        _ => {}
    }
    let inner = EarthModel::custom(a, f, gm, omega, gamma_equator, gamma_pole, j2).map_err(model_error)?;
    Ok(PyEarthModel { inner, preset: None })
}

/// An Earth model argument: an `EarthModel` (or None for WGS 84).
pub fn earth_model<'py>(obj: &Bound<'py, PyAny>) -> PyResult<Option<Bound<'py, PyEarthModel>>> {
    if obj.is_none() {
        return Ok(None);
    }
    obj.cast::<PyEarthModel>().map(|m| Some(m.clone())).map_err(|_| {
        crate::plumbing::errors::input_type_error(format!(
            "`model` must be an EarthModel (rotaframe.WGS84, rotaframe.GRS80 or rotaframe.EarthModel(...)), got {}",
            crate::plumbing::args::describe(obj)
        ))
    })
}
