//! Array arguments: conversion to float64, trailing-shape checks, numpy broadcasting over the
//! leading axes, and element access for the batch loops.
//!
//! Every array argument has a *core* shape (`()` for a scalar, `(3,)` for a vector, `(4,)` for
//! a quaternion, `(3, 3)` for a matrix) that must match its trailing axes exactly, and a
//! *leading* shape that broadcasts with the other arguments by numpy's rules. A Python number
//! or a 0-d array is a scalar argument (it broadcasts over the batch); where a vector,
//! quaternion or matrix is required the trailing axes must be given, as in numpy's generalised
//! ufuncs. Only real numbers are accepted (see [`Operand::extract`]). C-contiguous float64
//! input is read in place; anything else (lists, other dtypes, strided views, partial
//! broadcasts) is converted once.

use numpy::{PyArrayDyn, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyFloat, PyInt, PyTuple};
use rotaframe::nalgebra::DMatrix;

use crate::plumbing::errors::{ShapeError, input_type_error, to_py};

/// Largest core size (a 3×3 matrix).
const MAX_CORE: usize = 9;

enum Storage<'py> {
    /// One number broadcast over every element (a scalar argument).
    Scalar([f64; MAX_CORE]),
    /// A C-contiguous float64 numpy array, read in place.
    Array(numpy::PyReadonlyArrayDyn<'py, f64>),
    /// A contiguous copy (of a strided view, or of a partially broadcast operand).
    Owned(Vec<f64>),
}

/// One array argument of a batch function.
pub struct Operand<'py> {
    /// The Python argument name, used in messages.
    pub name: &'static str,
    core: usize,
    leading: Vec<usize>,
    storage: Storage<'py>,
    /// The bytes read in place, registered for the overlap check of `out=` while this lives.
    _region: Option<crate::plumbing::batch::ReadInPlace>,
}

/// The `ShapeError` for a scalar given where a vector, quaternion or matrix is required.
fn needs_core(name: &str, core_shape: &[usize], what: &str) -> PyErr {
    ShapeError::new_err(format!(
        "`{name}` must be an array with trailing shape {} (one per element), got {what}",
        shape_text(core_shape)
    ))
}

/// numpy's `asarray`, looked up once.
static ASARRAY: pyo3::sync::PyOnceLock<Py<PyAny>> = pyo3::sync::PyOnceLock::new();

/// `obj` as a float64 numpy array, refusing anything that is not real numbers: numpy
/// converts strings, booleans, dates and complex numbers (dropping the imaginary part) to
/// float64 when asked, so the kind is checked first.
pub fn real_array<'py>(obj: &Bound<'py, PyAny>, name: &str) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
    let py = obj.py();
    if obj.is_none() {
        return Err(input_type_error(format!("`{name}` must be a number or an array of numbers, got None")));
    }
    if let Ok(a) = obj.cast::<PyArrayDyn<f64>>() {
        return aligned(a.clone());
    }
    let asarray =
        ASARRAY.get_or_try_init(py, || -> PyResult<Py<PyAny>> { Ok(py.import("numpy")?.getattr("asarray")?.unbind()) })?;
    let array = asarray.bind(py).call1((obj,)).map_err(|e| {
        input_type_error(format!(
            "`{name}` must be a number or an array of numbers, got {}: {e}",
            crate::plumbing::args::describe(obj)
        ))
    })?;
    match crate::plumbing::args::numpy_kind(&array) {
        Some('i' | 'u' | 'f') => {}
        _ => {
            return Err(input_type_error(format!(
                "`{name}` must be a number or an array of real numbers, got {}",
                crate::plumbing::args::describe(&array)
            )));
        }
    }
    // `astype` gives native byte order (a byte-swapped array is not float64 to rust-numpy).
    let array = if array.cast::<PyArrayDyn<f64>>().is_ok() { array } else { array.call_method1("astype", ("float64",))? };
    aligned(array.cast_into::<PyArrayDyn<f64>>()?)
}

/// `array`, or an aligned copy of it when its data are not aligned (see [`is_aligned`]).
fn aligned<'py>(array: Bound<'py, PyArrayDyn<f64>>) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
    if crate::plumbing::batch::is_aligned(&array) {
        return Ok(array);
    }
    Ok(array.call_method1("copy", ("C",))?.cast_into::<PyArrayDyn<f64>>()?)
}

fn shape_text(shape: &[usize]) -> String {
    match shape.len() {
        0 => "()".to_string(),
        1 => format!("({},)", shape[0]),
        _ => format!("({})", shape.iter().map(ToString::to_string).collect::<Vec<_>>().join(", ")),
    }
}

impl<'py> Operand<'py> {
    /// Converts `obj` (a number, sequence or array of real numbers) into an operand with the
    /// given core shape. Numbers only: booleans, complex numbers, strings, bytes, dates,
    /// `None` and arrays of objects raise `InputTypeError` naming the argument; an argument
    /// with a core shape needs those trailing axes (a number where a vector is required is a
    /// `ShapeError`, as in numpy's generalised ufuncs).
    pub fn extract(obj: &Bound<'py, PyAny>, name: &'static str, core_shape: &[usize]) -> PyResult<Self> {
        let core: usize = core_shape.iter().product();
        // Plain Python numbers skip numpy entirely (this keeps single-sample calls cheap).
        if (obj.is_exact_instance_of::<PyFloat>() || obj.is_instance_of::<PyInt>()) && !obj.is_instance_of::<PyBool>() {
            if !core_shape.is_empty() {
                return Err(needs_core(name, core_shape, "a number"));
            }
            let v = crate::plumbing::args::number(obj, name)?;
            return Ok(Self { name, core, leading: Vec::new(), storage: Storage::Scalar([v; MAX_CORE]), _region: None });
        }
        let array = real_array(obj, name)?;
        let shape = array.shape().to_vec();
        if shape.is_empty() {
            if !core_shape.is_empty() {
                return Err(needs_core(name, core_shape, "a 0-d array"));
            }
            let v = array.readonly().as_array().first().copied().unwrap_or(f64::NAN);
            return Ok(Self { name, core, leading: Vec::new(), storage: Storage::Scalar([v; MAX_CORE]), _region: None });
        }
        let k = core_shape.len();
        if shape.len() < k || shape[shape.len() - k..] != *core_shape {
            return Err(ShapeError::new_err(format!(
                "`{name}` must have trailing shape {}, got shape {}",
                shape_text(core_shape),
                shape_text(&shape)
            )));
        }
        let leading = shape[..shape.len() - k].to_vec();
        let (storage, region) = if array.is_c_contiguous() {
            (Storage::Array(array.readonly()), Some(crate::plumbing::batch::ReadInPlace::register(&array)))
        } else {
            (Storage::Owned(array.readonly().as_array().iter().copied().collect()), None)
        };
        Ok(Self { name, core, leading, storage, _region: region })
    }

    /// [`extract`](Self::extract) for an optional argument: `None` (omitted) is zero in every
    /// core slot, broadcast over the batch.
    pub fn optional(obj: Option<&Bound<'py, PyAny>>, name: &'static str, core_shape: &[usize]) -> PyResult<Self> {
        match obj {
            Some(o) if !o.is_none() => Self::extract(o, name, core_shape),
            _ => Ok(Self {
                name,
                core: core_shape.iter().product(),
                leading: Vec::new(),
                storage: Storage::Scalar([0.0; MAX_CORE]),
                _region: None,
            }),
        }
    }

    fn size(&self) -> usize {
        self.leading.iter().product()
    }

    /// Makes the operand readable with a stride of 0 or `core` for the broadcast `shape`:
    /// an operand of a different size than the batch is expanded into a contiguous copy.
    pub fn prepare(&mut self, plan: &Plan) -> PyResult<()> {
        let size = self.size();
        if matches!(self.storage, Storage::Scalar(_)) || size == plan.n || size == 1 {
            return Ok(());
        }
        let source = self.data();
        let mut owned = crate::plumbing::memory::try_vec(plan.n.saturating_mul(self.core))?;
        for i in 0..plan.n {
            let j = self.source_flat_index(i, plan);
            owned.extend_from_slice(&source[j * self.core..(j + 1) * self.core]);
        }
        self.storage = Storage::Owned(owned);
        self._region = None;
        self.leading = plan.shape.clone();
        Ok(())
    }

    /// The operand's values as one slice covering the whole batch, when they can be used as
    /// they are (no scaling, no broadcasting).
    pub fn full_slice(&self, plan: &Plan, scale: f64) -> Option<&[f64]> {
        (scale == 1.0 && !matches!(self.storage, Storage::Scalar(_)) && self.size() == plan.n).then(|| self.data())
    }

    fn data(&self) -> &[f64] {
        match &self.storage {
            Storage::Scalar(v) => &v[..self.core],
            Storage::Array(a) => a.as_slice().expect("checked C-contiguous"),
            Storage::Owned(v) => v,
        }
    }

    /// Element reader for a prepared operand.
    pub fn access(&self, plan: &Plan) -> Access<'_> {
        let stride = if self.size() == plan.n && !matches!(self.storage, Storage::Scalar(_)) { self.core } else { 0 };
        Access { data: self.data(), stride, core: self.core }
    }

    fn source_flat_index(&self, flat: usize, plan: &Plan) -> usize {
        plan.source_index(flat, &self.leading)
    }

    /// The index, in this argument's own shape, of batch element `flat`, as Python would write it.
    pub fn describe_index(&self, flat: usize, plan: &Plan) -> String {
        if self.leading.is_empty() {
            return String::new();
        }
        let index = plan.unravel(flat);
        let offset = plan.shape.len() - self.leading.len();
        let own: Vec<usize> =
            self.leading.iter().enumerate().map(|(d, &len)| if len == 1 { 0 } else { index[offset + d] }).collect();
        format!("(first bad element at index {} of `{}`)", shape_text(&own), self.name)
    }
}

/// The `out=` and `threads=` keywords of a batched call (see [`crate::plumbing::batch`]).
#[derive(Clone, Copy)]
pub struct BatchArgs<'a, 'py> {
    /// The caller's output array(s), or None.
    pub out: Option<&'a Bound<'py, PyAny>>,
    /// Threads to split the batch across (1: the calling thread only).
    pub threads: usize,
}

impl<'a, 'py> BatchArgs<'a, 'py> {
    /// New outputs on the calling thread (the defaults).
    pub const SERIAL: Self = Self { out: None, threads: 1 };

    /// `out` is refused for this mode of a function (`jacobian=True`, say).
    pub fn refuse_out(&self, why: &str) -> PyResult<()> {
        match self.out {
            Some(o) if !o.is_none() => Err(crate::plumbing::errors::RotaframeError::new_err(format!("`out` is not taken {why}"))),
            _ => Ok(()),
        }
    }
}

/// Evaluates `kernel` for every batch element with the GIL released: the kernel receives the
/// core values of each argument and fills one slot slice per output (all outputs have core
/// shape `out_core`). Errors are rewritten for Python by `rename` (which also sees the failing
/// element's inputs) and located in the argument they name.
pub fn map_elements<'py, const N: usize, const M: usize, K, R>(
    py: Python<'py>,
    ops: [Operand<'py>; N],
    out_core: &[usize],
    batch: BatchArgs<'_, 'py>,
    rename: R,
    kernel: K,
) -> PyResult<(Plan, [Bound<'py, PyArrayDyn<f64>>; M])>
where
    K: Fn(&[&[f64]; N], &mut [&mut [f64]; M]) -> rotaframe::Result<()> + Sync,
    R: Fn(rotaframe::Error, &[&[f64]; N]) -> rotaframe::Error + Sync,
{
    map_elements_shaped(py, ops, [out_core; M], batch, rename, kernel)
}

/// As [`map_elements`] with a core shape per output (a value and its Jacobian, say).
pub fn map_elements_shaped<'py, const N: usize, const M: usize, K, R>(
    py: Python<'py>,
    mut ops: [Operand<'py>; N],
    out_cores: [&[usize]; M],
    batch: BatchArgs<'_, 'py>,
    rename: R,
    kernel: K,
) -> PyResult<(Plan, [Bound<'py, PyArrayDyn<f64>>; M])>
where
    K: Fn(&[&[f64]; N], &mut [&mut [f64]; M]) -> rotaframe::Result<()> + Sync,
    R: Fn(rotaframe::Error, &[&[f64]; N]) -> rotaframe::Error + Sync,
{
    let mut plan = {
        let mut refs: Vec<&mut Operand<'py>> = ops.iter_mut().collect();
        Plan::for_operands(&mut refs, &[])?
    };
    let outputs = crate::plumbing::batch::Outputs::new(py, batch.out, &plan.shape, out_cores)?;
    plan.out_given = outputs.given;
    let sizes: [usize; M] = core::array::from_fn(|j| out_cores[j].iter().product());
    {
        let accesses: [Access<'_>; N] = core::array::from_fn(|j| ops[j].access(&plan));
        let mut guards: Vec<numpy::PyReadwriteArrayDyn<'py, f64>> = outputs.arrays.iter().map(|o| o.readwrite()).collect();
        let ranges = crate::plumbing::batch::chunk_ranges(plan.n, batch.threads);
        // Per chunk, one piece of every output.
        let mut pieces: Vec<Vec<&mut [f64]>> = (0..ranges.len()).map(|_| Vec::with_capacity(M)).collect();
        for (g, &k) in guards.iter_mut().zip(&sizes) {
            for (c, piece) in crate::plumbing::batch::split(out_slice(g), &ranges, k).into_iter().enumerate() {
                pieces[c].push(piece);
            }
        }
        let work: Vec<(core::ops::Range<usize>, Vec<&mut [f64]>)> = ranges.into_iter().zip(pieces).collect();
        let results = py.detach(|| {
            crate::plumbing::batch::parallel(batch.threads, work, |(range, mut bufs)| {
                let bufs: &mut [&mut [f64]; M] = (&mut bufs[..]).try_into().expect("M outputs");
                for (local, i) in range.enumerate() {
                    let inputs: [&[f64]; N] = core::array::from_fn(|j| accesses[j].slice(i));
                    let mut j = 0;
                    let mut slots = bufs.each_mut().map(|b| {
                        let k = sizes[j];
                        j += 1;
                        &mut b[local * k..(local + 1) * k]
                    });
                    kernel(&inputs, &mut slots).map_err(|error| Failure { index: i, error: rename(error, &inputs) })?;
                }
                Ok(())
            })
        })?;
        drop(guards);
        if let Err(f) = crate::plumbing::batch::first_failure(results, |f: &Failure| f.index) {
            outputs.poison();
            let refs: Vec<&Operand<'py>> = ops.iter().collect();
            return Err(failure_to_py(&f, &plan, &refs));
        }
    }
    Ok((plan, outputs.arrays))
}

/// Reads element `i` of a prepared operand: `core` consecutive values starting at `i·stride`.
#[derive(Clone, Copy)]
pub struct Access<'a> {
    data: &'a [f64],
    stride: usize,
    core: usize,
}

impl Access<'_> {
    /// The `core` values of element `i`.
    #[inline(always)]
    pub fn slice(&self, i: usize) -> &[f64] {
        let o = i * self.stride;
        &self.data[o..o + self.core]
    }

    /// The whole batch as 3-vectors, when the operand holds one vector per element (not
    /// broadcast): lets hot loops iterate without strides or bounds checks.
    pub fn full_vec3(&self, n: usize) -> Option<&[[f64; 3]]> {
        (self.core == 3 && self.stride == 3).then(|| &self.data.as_chunks::<3>().0[..n])
    }

    /// Element `i` of a scalar operand.
    #[inline(always)]
    pub fn scalar(&self, i: usize) -> f64 {
        self.data[i * self.stride]
    }

    /// Element `i` of a 3-vector operand.
    #[inline(always)]
    pub fn vec3(&self, i: usize) -> rotaframe::nalgebra::Vector3<f64> {
        let o = i * self.stride;
        match self.data.get(o..o + 3) {
            Some(&[x, y, z]) => rotaframe::nalgebra::Vector3::new(x, y, z),
            _ => rotaframe::nalgebra::Vector3::repeat(f64::NAN),
        }
    }
}

/// The broadcast batch shape of a call.
pub struct Plan {
    /// Broadcast leading shape.
    pub shape: Vec<usize>,
    /// Number of elements (product of `shape`).
    pub n: usize,
    /// The outputs are the caller's (`out=`): returned as arrays even without batch axes.
    pub out_given: bool,
}

impl Plan {
    /// Broadcasts the leading shapes (numpy rules), naming the arguments on failure.
    pub fn new(shapes: &[(&str, &[usize])]) -> PyResult<Self> {
        let ndim = shapes.iter().map(|(_, s)| s.len()).max().unwrap_or(0);
        let mut shape = vec![1usize; ndim];
        for (_, s) in shapes {
            let offset = ndim - s.len();
            for (d, &len) in s.iter().enumerate() {
                let slot = &mut shape[offset + d];
                if *slot == 1 {
                    *slot = len;
                } else if len != 1 && len != *slot {
                    let described: Vec<String> = shapes.iter().map(|(n, s)| format!("`{n}` {}", shape_text(s))).collect();
                    return Err(ShapeError::new_err(format!("batch shapes do not broadcast: {}", described.join(", "))));
                }
            }
        }
        let n = shape.iter().product();
        Ok(Self { shape, n, out_given: false })
    }

    /// Broadcasts the leading shapes of `operands` and prepares each of them.
    pub fn for_operands(operands: &mut [&mut Operand<'_>], extra: &[(&str, &[usize])]) -> PyResult<Self> {
        let mut shapes: Vec<(&str, &[usize])> = operands.iter().map(|o| (o.name, o.leading.as_slice())).collect();
        shapes.extend_from_slice(extra);
        let plan = Self::new(&shapes)?;
        for o in operands.iter_mut() {
            o.prepare(&plan)?;
        }
        Ok(plan)
    }

    /// Flat index, into an operand with leading shape `leading` (which broadcasts to this
    /// plan), of batch element `flat`.
    pub fn source_index(&self, flat: usize, leading: &[usize]) -> usize {
        let index = self.unravel(flat);
        let offset = self.shape.len() - leading.len();
        leading.iter().enumerate().fold(0, |acc, (d, &len)| acc * len + if len == 1 { 0 } else { index[offset + d] })
    }

    fn unravel(&self, mut flat: usize) -> Vec<usize> {
        let mut index = vec![0; self.shape.len()];
        for (d, &len) in self.shape.iter().enumerate().rev() {
            index[d] = flat % len.max(1);
            flat /= len.max(1);
        }
        index
    }

    /// A new zero-filled output array of shape `batch + core`.
    pub fn output<'py>(&self, py: Python<'py>, core: &[usize]) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
        let mut dims = self.shape.clone();
        dims.extend_from_slice(core);
        crate::plumbing::memory::new_array(py, dims, true)
    }
}

/// One uninitialised output slot of a `(..., 3)` output.
pub type Slot<'a> = &'a mut core::mem::MaybeUninit<[f64; 3]>;

/// A batch failure: the flat element index and the core error (already named after the
/// Python argument).
pub struct Failure {
    /// Flat index of the first bad element.
    pub index: usize,
    /// What was wrong with it.
    pub error: rotaframe::Error,
}

/// Maps a batch failure to a Python exception, locating the element in the argument it names.
pub fn failure_to_py(failure: &Failure, plan: &Plan, operands: &[&Operand<'_>]) -> PyErr {
    let context = operands
        .iter()
        .find(|o| o.name == failure.error.quantity())
        .map(|o| o.describe_index(failure.index, plan))
        .unwrap_or_else(|| {
            if plan.shape.is_empty() { String::new() } else { format!("(first bad element at batch index {})", failure.index) }
        });
    to_py(&failure.error, &context)
}

/// Returns a scalar output as a Python float when the call had no batch axes, else the array.
pub fn scalar_or_array<'py>(py: Python<'py>, plan: &Plan, array: Bound<'py, PyArrayDyn<f64>>) -> PyResult<Bound<'py, PyAny>> {
    if plan.shape.is_empty() && array.ndim() == 0 && !plan.out_given {
        let v: f64 = array.readonly().as_array().first().copied().unwrap_or(f64::NAN);
        Ok(PyFloat::new(py, v).into_any())
    } else {
        Ok(array.into_any())
    }
}

/// A tuple of outputs, each a float or an array as [`scalar_or_array`] decides.
pub fn tuple_of<'py>(py: Python<'py>, plan: &Plan, arrays: Vec<Bound<'py, PyArrayDyn<f64>>>) -> PyResult<Bound<'py, PyTuple>> {
    let items: PyResult<Vec<Bound<'py, PyAny>>> = arrays.into_iter().map(|a| scalar_or_array(py, plan, a)).collect();
    PyTuple::new(py, items?)
}

/// Runs `kernel` for every batch element with the GIL released, stopping at the first error.
pub fn run<F>(py: Python<'_>, n: usize, mut kernel: F) -> Result<(), Failure>
where
    F: FnMut(usize) -> Result<(), rotaframe::Error> + Send,
{
    py.detach(move || {
        for i in 0..n {
            kernel(i).map_err(|error| Failure { index: i, error })?;
        }
        Ok(())
    })
}

/// Mutable float64 slice of an output array created by [`Plan::output`] (always C-contiguous).
pub fn out_slice<'a>(array: &'a mut numpy::PyReadwriteArrayDyn<'_, f64>) -> &'a mut [f64] {
    array.as_slice_mut().expect("outputs are created C-contiguous")
}

/// One scalar or 3-vector argument without batch axes.
pub fn single(obj: &Bound<'_, PyAny>, name: &'static str, core: &[usize]) -> PyResult<Vec<f64>> {
    let mut op = Operand::extract(obj, name, core)?;
    let plan = Plan::for_operands(&mut [&mut op], &[])?;
    if !plan.shape.is_empty() {
        return Err(ShapeError::new_err(format!("`{name}` must have shape {core:?} here, got batch shape {:?}", plan.shape)));
    }
    Ok(op.access(&plan).slice(0).to_vec())
}

/// A square row-major matrix argument `(n, n)` (or `(n, m)` with `columns`).
pub fn matrix_arg(
    obj: &Bound<'_, PyAny>,
    name: &'static str,
    rows: Option<usize>,
    columns: Option<usize>,
) -> PyResult<DMatrix<f64>> {
    let array = real_array(obj, name)?;
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
        return Err(crate::plumbing::errors::to_py(&rotaframe::Error::NonFinite { quantity: name }, ""));
    }
    Ok(m)
}
