//! `apparent_acceleration`: the four apparent terms on numpy arrays.

use numpy::PyArrayDyn;
use pyo3::prelude::*;
use rotaframe::apparent::{FrameDynamics, apparent_terms};
use rotaframe::frames::{AnyFrame, PointKinematics};

use rotaframe::limits::{MAX_ACCELERATION, MAX_ANGULAR_ACCELERATION, MAX_ANGULAR_VELOCITY, MAX_POSITION, MAX_VELOCITY, within};

use crate::plumbing::batch::{self, Outputs};
use crate::plumbing::broadcast::map_elements_shaped;
use crate::plumbing::broadcast::{Access, BatchArgs, Operand, Plan, Slot, failure_to_py, run};
use crate::plumbing::output::put_row_major;
use pyo3::types::PyDict;
use rotaframe::linearise;

fn v3(s: &[f64]) -> rotaframe::nalgebra::Vector3<f64> {
    rotaframe::nalgebra::Vector3::new(s[0], s[1], s[2])
}

/// The apparent accelerations in a rotating frame, each an array `(..., 3)` resolved in that
/// frame (m/s²): `translational` (−a₀), `coriolis` (−2 ω × v), `centrifugal` (−ω × (ω × r)),
/// `euler` (−α × r) and their `total`.
#[pyclass(frozen, name = "ApparentAcceleration", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyApparentAcceleration {
    #[pyo3(get)]
    translational: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    coriolis: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    centrifugal: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    euler: Py<PyArrayDyn<f64>>,
    #[pyo3(get)]
    total: Py<PyArrayDyn<f64>>,
}

#[pymethods]
impl PyApparentAcceleration {
    fn __repr__(&self, py: Python<'_>) -> PyResult<String> {
        let shape = self.total.bind(py).getattr("shape")?.repr()?;
        Ok(format!("ApparentAcceleration(shape={shape}; fields translational, coriolis, centrifugal, euler, total)"))
    }
}

/// Apparent accelerations for points at `position` moving at `velocity` relative to a frame
/// that turns at `angular_velocity` with `angular_acceleration` and whose origin accelerates at
/// `origin_acceleration`, all relative to an inertial frame and resolved in the moving frame.
///
/// With `jacobian=True`, `(terms, J)`: `J` a dict of `(..., 3, 3)` Jacobians of the total with
/// respect to `position`, `velocity`, `origin_acceleration`, `angular_velocity` and
/// `angular_acceleration`.
#[pyfunction]
#[pyo3(signature = (angular_velocity, position, velocity=None, *, angular_acceleration=None, origin_acceleration=None, jacobian=false, out=None, threads=1))]
pub fn apparent_acceleration<'py>(
    py: Python<'py>,
    angular_velocity: &Bound<'py, PyAny>,
    position: &Bound<'py, PyAny>,
    velocity: Option<&Bound<'py, PyAny>>,
    angular_acceleration: Option<&Bound<'py, PyAny>>,
    origin_acceleration: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::jacobian)] jacobian: bool,
    out: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::batch::threads)] threads: usize,
) -> PyResult<Bound<'py, PyAny>> {
    let batch = BatchArgs { out, threads };
    if jacobian {
        batch.refuse_out("with jacobian=True")?;
    }
    let args = [angular_velocity, position];
    let terms = Bound::new(py, apparent_terms_of(py, args, velocity, angular_acceleration, origin_acceleration, batch)?)?;
    if !jacobian {
        return Ok(terms.into_any());
    }
    let ops = [
        Operand::extract(angular_velocity, "angular_velocity", &[3])?,
        Operand::extract(position, "position", &[3])?,
        Operand::optional(velocity, "velocity", &[3])?,
        Operand::optional(angular_acceleration, "angular_acceleration", &[3])?,
        Operand::optional(origin_acceleration, "origin_acceleration", &[3])?,
    ];
    let jacobians = apparent_jacobians(py, ops, threads)?;
    Ok(pyo3::types::PyTuple::new(py, [terms.into_any(), jacobians.into_any()])?.into_any())
}

pub fn apparent_terms_of<'py>(
    py: Python<'py>,
    [angular_velocity, position]: [&Bound<'py, PyAny>; 2],
    velocity: Option<&Bound<'py, PyAny>>,
    angular_acceleration: Option<&Bound<'py, PyAny>>,
    origin_acceleration: Option<&Bound<'py, PyAny>>,
    batch: BatchArgs<'_, 'py>,
) -> PyResult<PyApparentAcceleration> {
    let mut w = Operand::extract(angular_velocity, "angular_velocity", &[3])?;
    let mut r = Operand::extract(position, "position", &[3])?;
    let mut v = Operand::optional(velocity, "velocity", &[3])?;
    let mut al = Operand::optional(angular_acceleration, "angular_acceleration", &[3])?;
    let mut a0 = Operand::optional(origin_acceleration, "origin_acceleration", &[3])?;
    let plan = Plan::for_operands(&mut [&mut w, &mut r, &mut v, &mut al, &mut a0], &[])?;
    let (wa, ra, va, ala, a0a) = (w.access(&plan), r.access(&plan), v.access(&plan), al.access(&plan), a0.access(&plan));
    let n = plan.n;
    let mut outs = Outputs::<5>::uninit(py, batch.out, &plan.shape, [&[3]; 5])?;
    let mut guards = Vec::new();
    let [s0, s1, s2, s3, s4] = outs.slots::<3>(&mut guards)?;
    let ranges = batch::chunk_ranges(n, batch.threads);
    let work: Vec<_> = ranges
        .iter()
        .cloned()
        .zip(batch::split(s0, &ranges, 1))
        .zip(batch::split(s1, &ranges, 1))
        .zip(batch::split(s2, &ranges, 1))
        .zip(batch::split(s3, &ranges, 1))
        .zip(batch::split(s4, &ranges, 1))
        .collect();
    // One pass writes every slot and folds a check of every input against its supported
    // range in without branching (inside the ranges the terms cannot overflow); only a batch
    // with a bad input is scanned again, to name the first one.
    let accesses = [wa, ala, a0a, ra, va];
    let flags = py.detach(|| {
        batch::parallel(batch.threads, work, |(((((range, s0), s1), s2), s3), s4)| {
            rotaframe::fast_call!(apparent_chunk_fast, apparent_chunk, (range, [s0, s1, s2, s3, s4], accesses, n))
        })
    })?;
    drop(guards);
    if flags.iter().any(|&b| b != 0) {
        let result = run(py, n, |i| {
            FrameDynamics { angular_velocity: wa.vec3(i), angular_acceleration: ala.vec3(i), origin_acceleration: a0a.vec3(i) }
                .validate()?;
            PointKinematics::<AnyFrame>::try_new(ra.vec3(i), va.vec3(i), rotaframe::nalgebra::Vector3::zeros()).map(|_| ())
        });
        outs.poison();
        result.map_err(|f| failure_to_py(&f, &plan, &[&w, &r, &v, &al, &a0]))?;
    }
    let [translational, coriolis, centrifugal, euler, total] = outs.arrays.map(Bound::unbind);
    Ok(PyApparentAcceleration { translational, coriolis, centrifugal, euler, total })
}

/// The five output slots of a chunk of `apparent_acceleration` (translational, Coriolis,
/// centrifugal, Euler, total).
type TermSlots<'a> = [&'a mut [core::mem::MaybeUninit<[f64; 3]>]; 5];

/// One element: writes its five terms and returns 1 if an input lies beyond its supported
/// range (inside the ranges the terms cannot overflow), without branching. A function, not a
/// closure, so that each CPU path inlines it (see `dispatch`).
#[inline(always)]
fn apparent_one(slots: [Slot<'_>; 5], [w, al, a0, r, v]: [&[f64; 3]; 5]) -> u64 {
    let vector = |x: &[f64; 3]| rotaframe::nalgebra::Vector3::new(x[0], x[1], x[2]);
    let dynamics =
        FrameDynamics { angular_velocity: vector(w), angular_acceleration: vector(al), origin_acceleration: vector(a0) };
    let (position, velocity) = (vector(r), vector(v));
    let terms = apparent_terms(&dynamics, &position, &velocity);
    let [t, c, f, e, s] = slots;
    t.write(terms.translational.into());
    c.write(terms.coriolis.into());
    f.write(terms.centrifugal.into());
    e.write(terms.euler.into());
    s.write(terms.total.into());
    u64::from(
        !(within(&dynamics.angular_velocity, MAX_ANGULAR_VELOCITY)
            & within(&dynamics.angular_acceleration, MAX_ANGULAR_ACCELERATION)
            & within(&dynamics.origin_acceleration, MAX_ACCELERATION)
            & within(&position, MAX_POSITION)
            & within(&velocity, MAX_VELOCITY)),
    )
}

/// The elements of `range` (the slots hold that range), inputs read through `access`
/// (angular velocity, angular acceleration, origin acceleration, position, velocity); returns
/// the OR of the range flags. Compiled for both CPU code paths.
#[inline(always)]
fn apparent_chunk(range: core::ops::Range<usize>, [s0, s1, s2, s3, s4]: TermSlots<'_>, access: [Access<'_>; 5], n: usize) -> u64 {
    let mut bad = 0u64;
    let count = range.len().min(s0.len()).min(s1.len()).min(s2.len()).min(s3.len()).min(s4.len());
    let full: [Option<&[[f64; 3]]>; 5] = core::array::from_fn(|j| access[j].full_vec3(n));
    if let [Some(w), Some(al), Some(a0), Some(r), Some(v)] = full {
        // Every argument has one vector per element: plain indexed slices of one length.
        let k = range.start..range.start + count;
        let (w, al, a0, r, v) = (&w[k.clone()], &al[k.clone()], &a0[k.clone()], &r[k.clone()], &v[k]);
        for i in 0..count {
            let slots = [&mut s0[i], &mut s1[i], &mut s2[i], &mut s3[i], &mut s4[i]];
            bad |= apparent_one(slots, [&w[i], &al[i], &a0[i], &r[i], &v[i]]);
        }
    } else {
        for i in 0..count {
            let e = range.start + i;
            let x: [[f64; 3]; 5] = access.map(|a| a.vec3(e).into());
            let slots = [&mut s0[i], &mut s1[i], &mut s2[i], &mut s3[i], &mut s4[i]];
            bad |= apparent_one(slots, [&x[0], &x[1], &x[2], &x[3], &x[4]]);
        }
    }
    bad
}

rotaframe::fast_twin!(fn apparent_chunk_fast(range: core::ops::Range<usize>, slots: TermSlots<'_>, access: [Access<'_>; 5], n: usize) -> u64 = apparent_chunk);

/// The Jacobians of the total apparent acceleration, a dict of `(..., 3, 3)` arrays keyed by
/// the argument differentiated.
fn apparent_jacobians<'py>(py: Python<'py>, ops: [Operand<'py>; 5], threads: usize) -> PyResult<Bound<'py, PyDict>> {
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
            put_row_major(jr, &j.position);
            put_row_major(jv, &j.velocity);
            put_row_major(ja0, &j.origin_acceleration);
            put_row_major(jw, &j.angular_velocity);
            put_row_major(jal, &j.angular_acceleration);
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
