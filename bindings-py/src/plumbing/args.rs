//! Scalar, flag, keyword and model arguments, converted so that bad input raises a
//! `RotaframeError` subclass that names the argument (pyo3's own conversions raise bare
//! `TypeError`s or `OverflowError`s).
//!
//! Each argument name gets its own extractor function (generated below), used as
//! `#[pyo3(from_py_with = args::lat)] lat: f64`: the function knows the name it reports.

use pyo3::prelude::*;
use pyo3::types::{PyBool, PyFloat, PyInt, PyString};

use crate::plumbing::errors::{OutOfRangeError, input_type_error};

/// A short description of a Python object's type for messages (`str`, `complex`, ...).
pub fn type_name(obj: &Bound<'_, PyAny>) -> String {
    obj.get_type().name().map_or_else(|_| "?".to_string(), |n| n.to_string())
}

/// A real number: a Python int or float, or a numpy integer or floating scalar (or a 0-d
/// array of one). Booleans, complex numbers, strings, bytes, dates, `None` and other objects
/// are refused with an `InputTypeError` naming `name`.
pub fn number(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<f64> {
    if obj.is_exact_instance_of::<PyFloat>() || (obj.is_instance_of::<PyInt>() && !obj.is_instance_of::<PyBool>()) {
        return obj.extract::<f64>().map_err(|_| {
            OutOfRangeError::new_err(format!(
                "`{name}` = {} is too large to be a float",
                obj.str().map_or_else(|_| "?".into(), |s| s.to_string())
            ))
        });
    }
    if let Some(kind) = numpy_kind(obj)
        && matches!(kind, 'i' | 'u' | 'f')
        && obj.getattr("ndim").and_then(|d| d.extract::<usize>()).is_ok_and(|d| d == 0)
    {
        return obj.call_method0("__float__")?.extract::<f64>();
    }
    Err(input_type_error(format!("`{name}` must be a real number, got {}", describe(obj))))
}

/// numpy's dtype kind character of an object that has a dtype (numpy arrays and scalars).
pub fn numpy_kind(obj: &Bound<'_, PyAny>) -> Option<char> {
    let dtype = obj.getattr("dtype").ok()?;
    let kind: String = dtype.getattr("kind").ok()?.extract().ok()?;
    kind.chars().next()
}

/// What an argument is, for a type error: its type, and its value when that is short.
pub fn describe(obj: &Bound<'_, PyAny>) -> String {
    let name = type_name(obj);
    if obj.is_none() {
        return "None".to_string();
    }
    match numpy_kind(obj) {
        Some('c') => return format!("a complex {name} (rotaframe works with real numbers only)"),
        Some('M' | 'm') => return format!("a date/time {name} (give times as float seconds)"),
        Some('U' | 'S') => return format!("a string {name}"),
        Some('O') => return format!("a {name} of Python objects"),
        Some('b') => return format!("a boolean {name}"),
        _ => {}
    }
    let text = obj.repr().map_or_else(|_| String::new(), |r| r.to_string());
    if text.len() <= 40 { format!("{name} {text}") } else { name }
}

/// A flag: a Python bool or a numpy bool.
pub fn flag(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<bool> {
    if obj.is_instance_of::<PyBool>() || numpy_kind(obj) == Some('b') {
        return obj.is_truthy();
    }
    Err(input_type_error(format!("`{name}` must be True or False, got {}", describe(obj))))
}

/// A keyword (an option name): a Python str equal to one of `allowed`, returned as the
/// matching static string.
pub fn keyword(obj: &Bound<'_, PyAny>, name: &str, allowed: &[&'static str]) -> PyResult<&'static str> {
    if !obj.is_instance_of::<PyString>() {
        return Err(input_type_error(format!("`{name}` must be a string, one of {}, got {}", choices(allowed), describe(obj))));
    }
    let given: String = obj.extract()?;
    allowed.iter().copied().find(|a| *a == given).ok_or_else(|| {
        crate::plumbing::errors::RotaframeError::new_err(format!("`{name}` must be one of {}, got {given:?}", choices(allowed)))
    })
}

/// `"a", "b" or "c"`.
fn choices(allowed: &[&str]) -> String {
    let quoted: Vec<String> = allowed.iter().map(|a| format!("{a:?}")).collect();
    match quoted.split_last() {
        Some((last, [])) => last.clone(),
        Some((last, rest)) => format!("{} or {last}", rest.join(", ")),
        None => String::new(),
    }
}

/// A count: a non-negative integer (Python or numpy), up to 2⁶⁴ − 1.
pub fn count(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<u64> {
    let integer = obj.is_instance_of::<PyInt>() && !obj.is_instance_of::<PyBool>();
    if !integer && !matches!(numpy_kind(obj), Some('i' | 'u')) {
        return Err(input_type_error(format!("`{name}` must be an integer, got {}", describe(obj))));
    }
    obj.extract::<u64>().map_err(|_| {
        OutOfRangeError::new_err(format!(
            "`{name}` = {} is outside [0, 18446744073709551615]",
            obj.str().map_or_else(|_| "?".into(), |s| s.to_string())
        ))
    })
}

/// Generates one extractor per argument name for `#[pyo3(from_py_with = ...)]`
/// (`function = "python name"` where the two differ).
macro_rules! extractors {
    ($kind:ident, $ty:ty: $($name:ident $(= $label:literal)?),* $(,)?) => {
        $(
            #[doc = concat!("The `", stringify!($name), "` argument (see the module documentation).")]
            pub fn $name(obj: &Bound<'_, PyAny>) -> PyResult<$ty> {
                $kind(obj, extractors!(@label $name $($label)?))
            }
        )*
    };
    (@label $name:ident) => { stringify!($name) };
    (@label $name:ident $label:literal) => { $label };
}

/// Optional real numbers: `None` passes through.
fn optional_number(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<Option<f64>> {
    if obj.is_none() { Ok(None) } else { number(obj, name).map(Some) }
}

extractors!(number, f64: lat, lon, h, a, f, gm, omega, angle_at_epoch, rtol, atol, height_reference, elapsed, elapsed_correction,
    req_gamma_equator = "gamma_equator", req_gamma_pole = "gamma_pole", req_j2 = "j2", rate, angle_at_zero, angular_acceleration);
extractors!(optional_number, Option<f64>: gamma_equator, gamma_pole, j2, height_time_constant, opt_height_reference = "height_reference",
    opt_max_step = "max_step", opt_stop_height = "stop_height", opt_scale_height = "scale_height");
extractors!(flag, bool: degrees, inertial, budget, jacobian);
extractors!(count, u64: max_steps, seed, states, every);
extractors!(number, f64: ballistic_coefficient, density, dt, confidence);
/// Keyword arguments with their allowed values.
macro_rules! keywords {
    ($($name:ident: [$($value:literal),*]),* $(,)?) => {
        $(
            #[doc = concat!("The `", stringify!($name), "` keyword: one of ", $("`", $value, "` ",)* ".")]
            pub fn $name(obj: &Bound<'_, PyAny>) -> PyResult<&'static str> {
                keyword(obj, stringify!($name), &[$($value),*])
            }
        )*
    };
}

keywords!(
    frame: ["ned", "ecef"],
    gravity: ["normal", "j2"],
    vertical: ["free", "hold", "aided"],
    axes: ["ned", "enu"],
    position_kind: ["geodetic", "cartesian"],
    method: ["exact", "second_order"],
    parameters: ["full", "bias_scale", "bias"],
);

/// A text argument (a name): a Python str.
pub fn text(obj: &Bound<'_, PyAny>, name: &str) -> PyResult<String> {
    if obj.is_instance_of::<PyString>() {
        return obj.extract();
    }
    Err(input_type_error(format!("`{name}` must be a string, got {}", describe(obj))))
}
