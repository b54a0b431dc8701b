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
//! results are the same bits whatever the count. Work runs on the process's one rayon pool,
//! made on first use, sized to the largest request so far and at most one thread per core,
//! with at most `threads` workers per call; the GIL is released throughout. The default of one thread never
//! oversubscribes a process that is one of many workers (a Dask worker, say).

use std::ops::Range;
use std::sync::{Arc, Mutex};

use numpy::{PyArrayDyn, PyArrayMethods, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;

use crate::plumbing::errors::{ShapeError, input_type_error};

/// Whether a float64 array's data and strides are all multiples of 8 bytes: Rust reads only
/// aligned `f64`, while numpy allows views at any byte offset (`np.frombuffer(b, offset=1)`).
pub fn is_aligned(array: &Bound<'_, PyArrayDyn<f64>>) -> bool {
    let size = core::mem::size_of::<f64>();
    (array.data() as usize).is_multiple_of(size) && array.strides().iter().all(|&s| s.unsigned_abs().is_multiple_of(size))
}

/// The byte range `[start, end)` of a C-contiguous array's data.
fn byte_range(array: &Bound<'_, PyArrayDyn<f64>>) -> (usize, usize) {
    let start = array.data() as usize;
    (start, start + array.len() * core::mem::size_of::<f64>())
}

std::thread_local! {
    /// The byte ranges of the inputs being read in place on this thread (the GIL's thread,
    /// where operands are extracted and outputs checked).
    static READ_IN_PLACE: std::cell::RefCell<Vec<(usize, usize)>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// An input's bytes, registered as read in place while this value lives, so that an `out=`
/// array over any of them is refused whichever Python object holds it (two buffer objects
/// over one memory block are invisible to rust-numpy's borrow tracking, which compares bases).
#[derive(Debug)]
pub struct ReadInPlace((usize, usize));

impl ReadInPlace {
    /// Registers the data of a C-contiguous array.
    pub fn register(array: &Bound<'_, PyArrayDyn<f64>>) -> Self {
        let range = byte_range(array);
        READ_IN_PLACE.with(|r| r.borrow_mut().push(range));
        Self(range)
    }
}

impl Drop for ReadInPlace {
    fn drop(&mut self) {
        READ_IN_PLACE.with(|r| {
            let mut r = r.borrow_mut();
            if let Some(k) = r.iter().rposition(|&x| x == self.0) {
                r.swap_remove(k);
            }
        });
    }
}

/// Whether two byte ranges share a byte (empty ranges share none).
fn intersect(a: (usize, usize), b: (usize, usize)) -> bool {
    a.0 < a.1 && b.0 < b.1 && a.0 < b.1 && b.0 < a.1
}

/// Batches smaller than this per thread run on the calling thread (splitting would cost more
/// than it saves).
const MIN_CHUNK: usize = 4096;

/// The most threads a call may ask for (more is refused: no machine this library targets has
/// that many cores, and a typo such as `threads=10000` should not start thousands of threads).
pub const MAX_THREADS: usize = 256;

/// The `threads` argument: a non-negative integer, 0 meaning one per core.
pub fn threads(obj: &Bound<'_, PyAny>) -> PyResult<usize> {
    let n = crate::plumbing::args::count(obj, "threads")?;
    if n as usize > MAX_THREADS {
        return Err(crate::plumbing::errors::OutOfRangeError::new_err(format!("`threads` = {n} is outside [0, {MAX_THREADS}]")));
    }
    Ok(if n == 0 { cores() } else { n as usize })
}

/// The number of cores this process may use.
fn cores() -> usize {
    std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get)
}

/// The process's one worker pool, sized to the largest request so far up to the core count:
/// a larger request replaces it (the old pool's threads end when its last user finishes), so
/// at most one pool lives between calls, and never more threads than cores.
static POOL: Mutex<Option<Arc<rayon::ThreadPool>>> = Mutex::new(None);

fn pool(threads: usize) -> PyResult<Arc<rayon::ThreadPool>> {
    let wanted = threads.min(cores()).max(1);
    let mut pool = POOL.lock().unwrap_or_else(std::sync::PoisonError::into_inner);
    if let Some(p) = pool.as_ref()
        && p.current_num_threads() >= wanted
    {
        return Ok(Arc::clone(p));
    }
    let p = rayon::ThreadPoolBuilder::new()
        .num_threads(wanted)
        .thread_name(|i| format!("rotaframe-{i}"))
        .build()
        .map_err(|e| pyo3::exceptions::PyRuntimeError::new_err(format!("could not start {wanted} threads: {e}")))?;
    let p = Arc::new(p);
    *pool = Some(Arc::clone(&p));
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
    // `threads` workers at most (fewer on fewer cores), each taking the next item: the pool
    // may be larger than this call asked for, and the call must not use more.
    let p = pool(threads)?;
    let workers = threads.min(p.current_num_threads()).min(items.len());
    let slots: Vec<Mutex<Option<T>>> = items.into_iter().map(|t| Mutex::new(Some(t))).collect();
    let results: Vec<Mutex<Option<R>>> = slots.iter().map(|_| Mutex::new(None)).collect();
    let next = std::sync::atomic::AtomicUsize::new(0);
    let take = |m: &Mutex<Option<T>>| m.lock().unwrap_or_else(std::sync::PoisonError::into_inner).take();
    p.scope(|scope| {
        for _ in 0..workers {
            scope.spawn(|_| {
                loop {
                    let i = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                    let Some(slot) = slots.get(i) else { break };
                    if let Some(item) = take(slot) {
                        let r = work(item);
                        *results[i].lock().unwrap_or_else(std::sync::PoisonError::into_inner) = Some(r);
                    }
                }
            });
        }
    });
    results
        .into_iter()
        .map(|m| m.into_inner().unwrap_or_else(std::sync::PoisonError::into_inner))
        .collect::<Option<Vec<R>>>()
        .ok_or_else(|| pyo3::exceptions::PyRuntimeError::new_err("a worker thread stopped before finishing its chunk"))
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
            // Uninitialised for `uninit`: nothing reads the buffer before it is written.
            let mut arrays = Vec::with_capacity(M);
            for d in dims {
                arrays.push(crate::plumbing::memory::new_array(py, d, !uninit)?);
            }
            let arrays: [Bound<'py, PyArrayDyn<f64>>; M] = arrays.try_into().unwrap_or_else(|_| unreachable!("M arrays"));
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
            if !is_aligned(a) {
                return Err(crate::plumbing::errors::RotaframeError::new_err(format!(
                    "{} must be aligned (its data at an address that is a multiple of 8 bytes); a view at a byte offset cannot be written in place",
                    name(j)
                )));
            }
            arrays.push(a.clone());
        }
        // Overlap by address: with every input read in place, and with each other.
        for (j, a) in arrays.iter().enumerate() {
            let range = byte_range(a);
            let with_input = READ_IN_PLACE.with(|r| r.borrow().iter().any(|&x| intersect(x, range)));
            let with_output = arrays[..j].iter().any(|b| intersect(byte_range(b), range));
            if with_input || with_output {
                return Err(crate::plumbing::errors::RotaframeError::new_err(format!(
                    "{} overlaps {} (outputs must not share memory with inputs or with each other)",
                    name(j),
                    if with_input { "an input" } else { "another output" }
                )));
            }
        }
        // Same-buffer views and writeability: borrow all outputs at once (the inputs are borrowed), and
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
