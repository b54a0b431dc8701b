//! The two keywords every batched function shares: `out=` (write into the caller's arrays)
//! and `threads=` (split the batch across cores).
//!
//! `out` follows numpy's convention: one preallocated array for a function with one output, a
//! tuple of arrays for several. Each must be a writeable, C-contiguous float64 numpy array of
//! exactly the shape the function would return, and none may overlap an input read in place or
//! another output (rust-numpy's borrow tracking sees overlapping views of one buffer). Every
//! check runs before anything is written. If an element then fails (a latitude beyond ±90°,
//! say), the outputs are filled with NaN before the error is raised, so that they never hold a
//! mix of new and stale values.
//!
//! `threads` is the number of threads (default 1; 0 means one per core). The batch is split
//! into contiguous chunks of elements, each computed exactly as in the one-thread loop, so the
//! results are the same bits whatever the count. Work runs on a rayon pool per thread count,
//! made on first use and kept; the GIL is released throughout. The default of one thread never
//! oversubscribes a process that is one of many workers (a Dask worker, say).

use std::ops::Range;
use std::sync::{Arc, Mutex};

use numpy::{PyArrayDyn, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;

use crate::plumbing::errors::{ShapeError, input_type_error};

/// Batches smaller than this per thread run on the calling thread (splitting would cost more
/// than it saves).
const MIN_CHUNK: usize = 4096;

/// The most threads a call may ask for.
const MAX_THREADS: usize = 1024;

/// The `threads` argument: a non-negative integer, 0 meaning one per core.
pub fn threads(obj: &Bound<'_, PyAny>) -> PyResult<usize> {
    let n = crate::plumbing::args::count(obj, "threads")?;
    if n as usize > MAX_THREADS {
        return Err(crate::plumbing::errors::OutOfRangeError::new_err(format!("`threads` = {n} is outside [0, {MAX_THREADS}]")));
    }
    Ok(if n == 0 { std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get) } else { n as usize })
}

static POOLS: Mutex<Vec<(usize, Arc<rayon::ThreadPool>)>> = Mutex::new(Vec::new());

fn pool(threads: usize) -> PyResult<Arc<rayon::ThreadPool>> {
    let mut pools = POOLS.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    if let Some((_, p)) = pools.iter().find(|(n, _)| *n == threads) {
        return Ok(Arc::clone(p));
    }
    let p = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .thread_name(|i| format!("rotaframe-{i}"))
        .build()
        .map_err(|e| pyo3::exceptions::PyRuntimeError::new_err(format!("could not start {threads} threads: {e}")))?;
    let p = Arc::new(p);
    pools.push((threads, Arc::clone(&p)));
    Ok(p)
}

/// Contiguous element ranges covering `0..n`: one when a single thread is asked for or the
/// batch is small, else about four per thread (work stealing evens out slow chunks).
pub fn chunk_ranges(n: usize, threads: usize) -> Vec<Range<usize>> {
    if threads <= 1 || n < 2 * MIN_CHUNK {
        return core::iter::once(0..n).collect();
    }
    let chunks = (4 * threads).min(n / MIN_CHUNK).max(1);
    let size = n.div_ceil(chunks);
    (0..n).step_by(size).map(|s| s..(s + size).min(n)).collect()
}

/// Splits `values` (holding `per` values per element) into the pieces of `ranges`.
pub fn split<'a, T>(mut values: &'a mut [T], ranges: &[Range<usize>], per: usize) -> Vec<&'a mut [T]> {
    let mut pieces = Vec::with_capacity(ranges.len());
    for r in ranges {
        let (piece, rest) = values.split_at_mut(r.len() * per);
        pieces.push(piece);
        values = rest;
    }
    pieces
}

/// Runs `work` on every item, on `threads` threads (in the caller's thread for one item), and
/// returns the results in item order. Call with the GIL released.
pub fn parallel<T: Send, R: Send>(threads: usize, items: Vec<T>, work: impl Fn(T) -> R + Sync) -> PyResult<Vec<R>> {
    if threads <= 1 || items.len() <= 1 {
        return Ok(items.into_iter().map(work).collect());
    }
    use rayon::prelude::*;
    let p = pool(threads)?;
    Ok(p.install(|| items.into_par_iter().map(&work).collect()))
}

/// The first failure, by element index, of per-chunk results.
pub fn first_failure<E>(results: Vec<Result<(), E>>, index: impl Fn(&E) -> usize) -> Result<(), E> {
    results.into_iter().filter_map(Result::err).min_by_key(|e| index(e)).map_or(Ok(()), Err)
}

/// The output arrays of one call: the caller's (`out=`, checked) or new ones.
pub struct Outputs<'py, const M: usize> {
    /// One array per output, shape `batch + core`.
    pub arrays: [Bound<'py, PyArrayDyn<f64>>; M],
    /// Whether they are the caller's.
    pub given: bool,
}

impl<'py, const M: usize> Outputs<'py, M> {
    /// Checks `out` against the batch `shape` and the outputs' core shapes (or allocates,
    /// zero-filled, when `out` is None). Run while the inputs read in place are borrowed, so
    /// that an output overlapping one of them is refused.
    pub fn new(py: Python<'py>, out: Option<&Bound<'py, PyAny>>, shape: &[usize], cores: [&[usize]; M]) -> PyResult<Self> {
        Self::make(py, out, shape, cores, false)
    }

    /// As [`new`](Self::new), new outputs left uninitialised: write them only through
    /// [`slots`](Self::slots), every slot, before returning them.
    pub fn uninit(py: Python<'py>, out: Option<&Bound<'py, PyAny>>, shape: &[usize], cores: [&[usize]; M]) -> PyResult<Self> {
        Self::make(py, out, shape, cores, true)
    }

    fn make(
        py: Python<'py>,
        out: Option<&Bound<'py, PyAny>>,
        shape: &[usize],
        cores: [&[usize]; M],
        uninit: bool,
    ) -> PyResult<Self> {
        let dims: [Vec<usize>; M] = core::array::from_fn(|j| [shape, cores[j]].concat());
        let Some(out) = out.filter(|o| !o.is_none()) else {
            let arrays = dims.map(|d| {
                if uninit {
                    // SAFETY: see `uninit`: nothing reads the buffer before it is written.
                    unsafe { PyArrayDyn::<f64>::new(py, d, false) }
                } else {
                    PyArrayDyn::<f64>::zeros(py, d, false)
                }
            });
            return Ok(Self { arrays, given: false });
        };
        let items: Vec<Bound<'py, PyAny>> = if let Ok(t) = out.cast::<PyTuple>() {
            t.iter().collect()
        } else if M == 1 {
            vec![out.clone()]
        } else {
            return Err(input_type_error(format!(
                "`out` must be a tuple of {M} arrays (one per output), got {}",
                crate::plumbing::args::describe(out)
            )));
        };
        if items.len() != M {
            return Err(ShapeError::new_err(format!("`out` must hold {M} array(s), one per output, got {}", items.len())));
        }
        let name = |j: usize| if M == 1 { "`out`".to_string() } else { format!("`out[{j}]`") };
        let mut arrays = Vec::with_capacity(M);
        for (j, item) in items.iter().enumerate() {
            let Ok(a) = item.cast::<PyArrayDyn<f64>>() else {
                let got = match item.getattr("dtype") {
                    Ok(dtype) if item.hasattr("shape").unwrap_or(false) => format!("an array of dtype {dtype}"),
                    _ => crate::plumbing::args::describe(item),
                };
                return Err(input_type_error(format!("{} must be a float64 numpy array, got {got}", name(j))));
            };
            if a.shape() != dims[j].as_slice() {
                return Err(ShapeError::new_err(format!(
                    "{} must have shape {:?} (the batch shape then the output's own), got {:?}",
                    name(j),
                    dims[j],
                    a.shape()
                )));
            }
            if !a.is_c_contiguous() {
                return Err(ShapeError::new_err(format!(
                    "{} must be C-contiguous (a strided view cannot be written in place)",
                    name(j)
                )));
            }
            arrays.push(a.clone());
        }
        // Overlap and writeability: borrow all outputs at once (the inputs are borrowed), and
        // release them before the caller borrows them again.
        {
            let mut guards = Vec::with_capacity(M);
            for (j, a) in arrays.iter().enumerate() {
                match a.try_readwrite() {
                    Ok(g) => guards.push(g),
                    Err(e) => {
                        let why = match e {
                            numpy::BorrowError::NotWriteable => "is read-only",
                            _ => "overlaps an input or another output (outputs must not share memory with inputs)",
                        };
                        return Err(crate::plumbing::errors::RotaframeError::new_err(format!("{} {why}", name(j))));
                    }
                }
            }
        }
        let arrays: [Bound<'py, PyArrayDyn<f64>>; M] = arrays.try_into().unwrap_or_else(|_| unreachable!("M checked"));
        Ok(Self { arrays, given: true })
    }

    /// Every output as slots of `K` values per element (each output's core shape holds `K`
    /// values), with write borrows held in `guards` (keep them alive while writing).
    pub fn slots<const K: usize>(
        &mut self,
        guards: &mut Vec<numpy::PyReadwriteArrayDyn<'py, f64>>,
    ) -> PyResult<[&mut [core::mem::MaybeUninit<[f64; K]>]; M]> {
        for a in &self.arrays {
            guards.push(
                a.try_readwrite().map_err(|e| crate::plumbing::errors::RotaframeError::new_err(format!("an output: {e}")))?,
            );
        }
        Ok(core::array::from_fn(|j| {
            let a = &self.arrays[j];
            let len = a.len();
            assert_eq!(len % K, 0, "K values per element");
            // SAFETY: each array is C-contiguous float64 (checked for the caller's, true for
            // new ones) with `len` values and alive while `self` is borrowed; the arrays do
            // not overlap (the caller's were checked, new ones are separate allocations), so
            // the slices are disjoint, and `&mut self` makes them unique to the caller; the
            // write borrows keep other rust-numpy borrowers out; `MaybeUninit` makes a new
            // array's uninitialised contents sound to refer to.
            unsafe { core::slice::from_raw_parts_mut(a.data().cast::<core::mem::MaybeUninit<[f64; K]>>(), len / K) }
        }))
    }

    /// Fills the caller's outputs with NaN after a failed element (new outputs are dropped).
    pub fn poison(&self) {
        if self.given {
            for a in &self.arrays {
                if let Ok(mut g) = a.try_readwrite()
                    && let Ok(s) = g.as_slice_mut()
                {
                    s.fill(f64::NAN);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chunk_ranges_cover_the_batch_in_order() {
        for (n, t) in [(0, 4), (10, 1), (8191, 2), (100_000, 2), (1_000_003, 3)] {
            let r = chunk_ranges(n, t);
            assert_eq!(r.first().map(|r| r.start), Some(0));
            assert_eq!(r.last().map(|r| r.end), Some(n));
            assert!(r.windows(2).all(|w| w[0].end == w[1].start));
        }
        assert_eq!(chunk_ranges(100_000, 2).len(), 8);
    }
}
