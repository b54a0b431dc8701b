//! One strapdown run as a job: its checked arguments (`RunInputs`), its outputs allocated
//! with the GIL (`RunJob`), and the loop that steps it without the GIL (`RunJob::execute`),
//! which `Strapdown.run` and `run_strapdowns` share.

use numpy::{PyArrayDyn, PyArrayMethods};
use pyo3::prelude::*;
use rotaframe::nav::{ImuIncrement, Strapdown};
use rotaframe::rotation::quaternion_to_wxyz;

use super::history::{PyStrapdownHistory, Replay};
use crate::plumbing::broadcast::{Access, Operand, Plan, out_slice};
use crate::plumbing::errors::ShapeError;

/// Increments converted and stepped per chunk by `Strapdown.run`: the only memory the runner
/// needs beyond its outputs (65 536 × 56 B ≈ 3.7 MB).
pub(super) const RUN_CHUNK: usize = 65_536;

/// The checked arguments of one strapdown run.
pub(super) struct RunInputs<'py> {
    pub(super) operands: Vec<Operand<'py>>,
    pub(super) plan: Plan,
    pub(super) objects: [Bound<'py, PyAny>; 3],
    pub(super) height_object: Option<Bound<'py, PyAny>>,
}

impl<'py> RunInputs<'py> {
    pub(super) fn new(
        dtheta: &Bound<'py, PyAny>,
        dv: &Bound<'py, PyAny>,
        dt: &Bound<'py, PyAny>,
        height_reference: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Self> {
        let mut operands =
            vec![Operand::extract(dtheta, "dtheta", &[3])?, Operand::extract(dv, "dv", &[3])?, Operand::extract(dt, "dt", &[])?];
        let height_object = height_reference.filter(|h| !h.is_none()).cloned();
        if let Some(h) = &height_object {
            operands.push(Operand::extract(h, "height_reference", &[])?);
        }
        let plan = {
            let mut refs: Vec<&mut Operand<'py>> = operands.iter_mut().collect();
            Plan::for_operands(&mut refs, &[])?
        };
        if plan.shape.len() != 1 {
            return Err(ShapeError::new_err(format!(
                "`run` takes one increment per row, `dtheta` and `dv` of shape (N, 3); got batch shape {:?}",
                plan.shape
            )));
        }
        Ok(Self { operands, plan, objects: [dtheta.clone(), dv.clone(), dt.clone()], height_object })
    }

    /// Element readers of the operands (dtheta, dv, dt, then the height reference if given).
    pub(super) fn access(&self) -> Vec<Access<'_>> {
        self.operands.iter().map(|o| o.access(&self.plan)).collect()
    }
}

/// One run's start and its output arrays (allocated with the GIL, written without it).
pub(super) struct RunJob<'py> {
    pub(super) start: Strapdown,
    pub(super) scale: f64,
    pub(super) outputs: [Bound<'py, PyArrayDyn<f64>>; 6],
    pub(super) guards: Vec<numpy::PyReadwriteArrayDyn<'py, f64>>,
}

/// A run's output slices and its stepper while it runs.
pub(super) struct RunSlices<'a> {
    pub(super) stepper: Strapdown,
    pub(super) scale: f64,
    pub(super) columns: [&'a mut [f64]; 6],
}

impl<'py> RunJob<'py> {
    pub(super) fn new(py: Python<'py>, inputs: &RunInputs<'py>, start: Strapdown, degrees: bool) -> PyResult<Self> {
        let n = inputs.plan.n;
        let new = |dims: Vec<usize>| crate::plumbing::memory::new_array(py, dims, true);
        let outputs = [new(vec![n])?, new(vec![n])?, new(vec![n])?, new(vec![n, 3])?, new(vec![n, 4])?, new(vec![n])?];
        let guards = outputs.iter().map(|o| o.readwrite()).collect();
        Ok(Self { start, scale: crate::plumbing::output::degrees_scale(degrees), outputs, guards })
    }

    pub(super) fn slices(&mut self) -> RunSlices<'_> {
        let mut slices = self.guards.iter_mut().map(out_slice);
        RunSlices {
            stepper: self.start,
            scale: self.scale,
            columns: core::array::from_fn(|_| slices.next().expect("six outputs")),
        }
    }

    /// Steps through every increment (read through `access`: dtheta, dv, dt and optionally
    /// the height reference), writing the states; `progress(done, total)`
    /// runs after each chunk and stops the run by failing. Call without the GIL.
    pub(super) fn execute(
        access: &[Access<'_>],
        out: &mut RunSlices<'_>,
        progress: impl Fn(usize, usize) -> PyResult<()>,
    ) -> Result<(), RunFailure> {
        let n = out.columns[0].len();
        let (aa, va, ta, ha) = (access[0], access[1], access[2], access.get(3).copied());
        let scale = out.scale;
        let [lat, lon, hh, vel, att, time] = &mut out.columns;
        let inner = &mut out.stepper;
        let mut increments = Vec::with_capacity(RUN_CHUNK.min(n));
        let mut heights = Vec::with_capacity(if ha.is_some() { RUN_CHUNK.min(n) } else { 0 });
        for first in (0..n).step_by(RUN_CHUNK) {
            let last = (first + RUN_CHUNK).min(n);
            increments.clear();
            increments.extend((first..last).map(|i| ImuIncrement::new(aa.vec3(i), va.vec3(i), ta.scalar(i))));
            if let Some(h) = &ha {
                heights.clear();
                heights.extend((first..last).map(|i| h.scalar(i)));
            }
            let chunk_heights = ha.as_ref().map(|_| heights.as_slice());
            inner
                .run_each(&increments, chunk_heights, |j, s| {
                    let k = first + j;
                    let state = s.state();
                    lat[k] = state.position.latitude * scale;
                    lon[k] = state.position.longitude * scale;
                    hh[k] = state.position.height;
                    vel[3 * k..3 * k + 3].copy_from_slice(state.velocity_ned.as_slice());
                    att[4 * k..4 * k + 4].copy_from_slice(&quaternion_to_wxyz(&state.attitude));
                    time[k] = s.elapsed();
                })
                .map_err(|e| RunFailure::Step(rotaframe::BatchError { index: first + e.index, error: e.error }))?;
            progress(last, n).map_err(RunFailure::Stopped)?;
        }
        Ok(())
    }

    /// The history of a finished run ending at `end`.
    pub(super) fn into_history(self, inputs: &RunInputs<'py>, end: Strapdown) -> PyStrapdownHistory {
        let Self { start, outputs, guards, .. } = self;
        drop(guards);
        let [lat, lon, h, v_ned, attitude, t] = outputs.map(Bound::unbind);
        let [dtheta, dv, dt] = inputs.objects.clone().map(Bound::unbind);
        let height_reference = inputs.height_object.clone().map(Bound::unbind);
        let replay = Replay { start, end, dtheta, dv, dt, height_reference };
        PyStrapdownHistory { lat, lon, h, v_ned, attitude, t, len: inputs.plan.n, replay: Some(replay) }
    }

    /// The latitude output after step `index` (as returned: radians or degrees).
    pub(super) fn latitude_after(&mut self, index: usize) -> f64 {
        out_slice(&mut self.guards[0])[index]
    }
}

/// Why a run stopped early.
pub(super) enum RunFailure {
    /// A step failed (an increment out of range, say).
    Step(rotaframe::BatchError),
    /// The progress callback raised.
    Stopped(PyErr),
}
