//! Python exceptions and the mapping from the core's errors.
//!
//! Every exception derives from `RotaframeError`, itself a `ValueError`, so `except ValueError`
//! keeps working. Messages come from the core (they name the quantity), with the Python
//! argument name and the index of the first bad element added by the batch loops.

use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;
use rotaframe::Error;

pyo3::create_exception!(
    rotaframe,
    RotaframeError,
    PyValueError,
    "Base class of every rotaframe error (a ValueError): bad input, named in the message."
);
pyo3::create_exception!(rotaframe, NonFiniteError, RotaframeError, "An input holds NaN or infinity.");
pyo3::create_exception!(
    rotaframe,
    OutOfRangeError,
    RotaframeError,
    "A value lies outside its allowed range (for example a latitude beyond ±90°)."
);
pyo3::create_exception!(rotaframe, NotPositiveError, OutOfRangeError, "A value that must be strictly positive is not.");
pyo3::create_exception!(rotaframe, ZeroNormError, RotaframeError, "A vector or quaternion that needs a direction has zero norm.");
pyo3::create_exception!(
    rotaframe,
    NotUnitQuaternionError,
    RotaframeError,
    "A quaternion's norm is too far from one to be a rotation."
);
pyo3::create_exception!(
    rotaframe,
    NotRotationMatrixError,
    RotaframeError,
    "A 3×3 matrix is not orthonormal with determinant +1."
);
pyo3::create_exception!(
    rotaframe,
    NearPoleError,
    OutOfRangeError,
    "A latitude is too close to a pole for north-east-down rates."
);
pyo3::create_exception!(
    rotaframe,
    NearEarthCentreError,
    OutOfRangeError,
    "A position is too close to the Earth's centre for geodetic coordinates."
);
pyo3::create_exception!(
    rotaframe,
    ShapeError,
    RotaframeError,
    "Array shapes do not fit: a wrong trailing dimension, or shapes that do not broadcast."
);
pyo3::create_exception!(rotaframe, FrameMismatchError, RotaframeError, "Frame motions whose labels do not chain were composed.");
pyo3::create_exception!(
    rotaframe,
    FrameGraphError,
    RotaframeError,
    "A frame graph problem: an unknown or duplicate frame name, a parent loop, frames without a common ancestor, an unattached frame, a non-inertial root, a malformed graph file."
);
pyo3::create_exception!(
    rotaframe,
    UnobservableError,
    RotaframeError,
    "Data that cannot determine the parameters asked of them (a calibration whose positions leave parameters unobservable); the message names them."
);
pyo3::create_exception!(
    rotaframe,
    ConcurrentUseError,
    RotaframeError,
    "A stateful object (a Strapdown, an ImuErrors) was used by two threads at once; give each thread its own copy."
);

/// `InputTypeError(RotaframeError, TypeError)`: an argument that is not a number, an array of
/// numbers or the object it must be. Built at import, because it has two bases.
static INPUT_TYPE_ERROR: pyo3::sync::PyOnceLock<Py<pyo3::types::PyType>> = pyo3::sync::PyOnceLock::new();

/// The `InputTypeError` class.
fn input_type_error_class(py: Python<'_>) -> PyResult<&Py<pyo3::types::PyType>> {
    INPUT_TYPE_ERROR.get_or_try_init(py, || {
        let bases = pyo3::types::PyTuple::new(py, [py.get_type::<RotaframeError>().into_any(), py.get_type::<pyo3::exceptions::PyTypeError>().into_any()])?;
        let namespace = pyo3::types::PyDict::new(py);
        namespace.set_item(
            "__doc__",
            "An argument of the wrong kind: not a real number or an array of real numbers (complex, string, bytes, date, None, object), or not the object required. Both a RotaframeError and a TypeError.",
        )?;
        namespace.set_item("__module__", "rotaframe")?;
        let class = py.get_type::<pyo3::types::PyType>().call1(("InputTypeError", bases, namespace))?;
        Ok(class.cast_into::<pyo3::types::PyType>()?.unbind())
    })
}

/// An `InputTypeError` with `message`.
pub fn input_type_error(message: String) -> PyErr {
    Python::attach(|py| match input_type_error_class(py) {
        Ok(class) => PyErr::from_type(class.bind(py).clone(), message),
        Err(e) => e,
    })
}

/// Python exception for a core error, with the core's message and `context` appended (the
/// position of the bad element, when there is one).
pub fn to_py(error: &Error, context: &str) -> PyErr {
    let message = if context.is_empty() { error.to_string() } else { format!("{error} {context}") };
    match error {
        Error::NonFinite { .. } => NonFiniteError::new_err(message),
        Error::ZeroNorm { .. } => ZeroNormError::new_err(message),
        Error::NotUnitQuaternion { .. } => NotUnitQuaternionError::new_err(message),
        Error::NotRotationMatrix { .. } => NotRotationMatrixError::new_err(message),
        Error::NotPositive { .. } => NotPositiveError::new_err(message),
        Error::NearPole { .. } => NearPoleError::new_err(message),
        Error::NearEarthCentre { .. } => NearEarthCentreError::new_err(message),
        Error::OutOfRange { .. } | Error::BeyondLimit { .. } => OutOfRangeError::new_err(message),
        Error::LengthMismatch { .. } => ShapeError::new_err(message),
        Error::Unobservable { .. } | Error::Undetermined { .. } => UnobservableError::new_err(message),
        _ => RotaframeError::new_err(message),
    }
}

/// Registers the exception classes on the module.
pub fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add("RotaframeError", py.get_type::<RotaframeError>())?;
    m.add("NonFiniteError", py.get_type::<NonFiniteError>())?;
    m.add("OutOfRangeError", py.get_type::<OutOfRangeError>())?;
    m.add("NotPositiveError", py.get_type::<NotPositiveError>())?;
    m.add("ZeroNormError", py.get_type::<ZeroNormError>())?;
    m.add("NotUnitQuaternionError", py.get_type::<NotUnitQuaternionError>())?;
    m.add("NotRotationMatrixError", py.get_type::<NotRotationMatrixError>())?;
    m.add("NearPoleError", py.get_type::<NearPoleError>())?;
    m.add("NearEarthCentreError", py.get_type::<NearEarthCentreError>())?;
    m.add("ShapeError", py.get_type::<ShapeError>())?;
    m.add("FrameMismatchError", py.get_type::<FrameMismatchError>())?;
    m.add("ConcurrentUseError", py.get_type::<ConcurrentUseError>())?;
    m.add("UnobservableError", py.get_type::<UnobservableError>())?;
    m.add("FrameGraphError", py.get_type::<FrameGraphError>())?;
    m.add("InputTypeError", input_type_error_class(py)?.clone_ref(py))?;
    Ok(())
}

/// Renames the core's quantity names to the Python argument names (`lat`, `lon`, `h`, `xyz`, `v_ned`, `a_ned`).
pub fn python_name(error: rotaframe::Error) -> rotaframe::Error {
    let to = match error.quantity() {
        "latitude" => "lat",
        "longitude" => "lon",
        "height" => "h",
        "ecef" | "position_ecef" => "xyz",
        "velocity_ned" => "v_ned",
        "acceleration_ned" => "a_ned",
        _ => return error,
    };
    error.with_quantity(to)
}

/// A core error for Python: argument names, and for `degrees=True` calls the rejected latitude
/// shown in degrees (`lat` is the caller's input value, before conversion).
pub fn python_error(error: rotaframe::Error, degrees: bool, lat: f64) -> rotaframe::Error {
    use rotaframe::Error;
    let error = python_name(error);
    if !degrees || error.quantity() != "lat" {
        return error;
    }
    match error {
        Error::OutOfRange { quantity, .. } => Error::OutOfRange { quantity, value: lat, min: -90.0, max: 90.0 },
        Error::NearPole { quantity, limit, .. } => Error::NearPole { quantity, value: lat, limit: limit.to_degrees() },
        other => other,
    }
}

/// Refuses values that are not all finite, naming `quantity` (through the core's check).
pub fn check_finite(values: &[f64], quantity: &'static str) -> PyResult<()> {
    rotaframe::error::ensure_finite(values, quantity).map_err(|e| to_py(&e, ""))
}
