//! `FrameGraph`: the core's frame graph over time on numpy arrays. Conversion, validation,
//! batching over times and error mapping; the paths, edges and compositions are the core's.

use numpy::{PyArrayDyn, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyList, PyTuple};
use rotaframe::earth::Geodetic;
use rotaframe::graph::{
    EarthRotation, Edge, Fixed, FrameGraph, FrameId, GraphError, LocalAxes, SampledEdge, SamplesKind, Site, Spin,
};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};

use crate::earth::model::{PyEarthModel, model_or_default};
use crate::motion::{Motion, MotionBatch, PyFrameMotion, rotation_operand};
use crate::plumbing::broadcast::{Operand, Plan};
use crate::plumbing::errors::{ConcurrentUseError, FrameGraphError, ShapeError, to_py};
use crate::rotation::{matrix, quaternion};

/// A Python exception for a graph error: structural problems are `FrameGraphError`s; an
/// edge's own error keeps its class (`OutOfRangeError` for a time outside a sampled edge's
/// span, ...) with the frame and time index in front.
pub fn graph_error(error: GraphError) -> PyErr {
    match error {
        GraphError::Edge { name, index, error } => {
            let context = match index {
                Some(i) => format!("(frame {name:?}, at index {i} of `t`)"),
                None => format!("(frame {name:?})"),
            };
            to_py(&error, &context)
        }
        other => FrameGraphError::new_err(other.to_string()),
    }
}

/// The graph and the Python callables of its function edges, behind one lock.
#[derive(Debug)]
pub struct State {
    pub graph: FrameGraph,
    pub functions: Vec<(FrameId, Py<PyAny>)>,
}

/// A tree of named frames over time: add frames under parents with an edge each (fixed,
/// spin, earth, site, samples or a function of time), then ask for any frame's motion
/// relative to any other at an array of times. See the README's frame-graph section.
///
/// Not certified for safety-of-life use; validate against your own requirements.
#[pyclass(frozen, name = "FrameGraph", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyFrameGraph {
    state: std::sync::RwLock<State>,
}

impl PyFrameGraph {
    pub fn read(&self) -> PyResult<std::sync::RwLockReadGuard<'_, State>> {
        match self.state.try_read() {
            Ok(g) => Ok(g),
            Err(std::sync::TryLockError::Poisoned(p)) => Ok(p.into_inner()),
            Err(std::sync::TryLockError::WouldBlock) => Err(ConcurrentUseError::new_err(
                "this FrameGraph is being changed by another thread; add frames before sharing it",
            )),
        }
    }

    fn write(&self) -> PyResult<std::sync::RwLockWriteGuard<'_, State>> {
        match self.state.try_write() {
            Ok(g) => Ok(g),
            Err(std::sync::TryLockError::Poisoned(p)) => Ok(p.into_inner()),
            Err(std::sync::TryLockError::WouldBlock) => Err(ConcurrentUseError::new_err(
                "this FrameGraph is in use by another thread (a query is running); add frames before sharing it",
            )),
        }
    }

    fn wrap(graph: FrameGraph) -> Self {
        Self { state: std::sync::RwLock::new(State { graph, functions: Vec::new() }) }
    }

    /// The times of a query as a flat vector and their shape.
    fn times(t: &Bound<'_, PyAny>) -> PyResult<(Vec<f64>, Vec<usize>)> {
        let mut op = Operand::extract(t, "t", &[])?;
        let plan = Plan::for_operands(&mut [&mut op], &[])?;
        let access = op.access(&plan);
        Ok(((0..plan.n).map(|i| access.scalar(i)).collect(), plan.shape))
    }

    /// The motions of `child` relative to `parent` at `times`, calling the Python functions
    /// of the function edges on the path once each with all the times.
    fn query(&self, py: Python<'_>, parent: &str, child: &str, times: &[f64]) -> PyResult<MotionBatch> {
        let state = self.read()?;
        let graph = &state.graph;
        let (p, c) = (graph.id(parent).map_err(graph_error)?, graph.id(child).map_err(graph_error)?);
        let path = graph.find_path(p, c).map_err(graph_error)?;
        // Function edges on the path: one batched call each, before the GIL is released.
        let mut external: Vec<(FrameId, MotionBatch)> = Vec::new();
        for frame in path.edges() {
            if let Some((_, f)) = state.functions.iter().find(|(id, _)| *id == frame) {
                let t = numpy::PyArray1::from_slice(py, times);
                let result = f.bind(py).call1((t,))?;
                let name = graph.name(frame).to_string();
                let motion = result.cast::<PyFrameMotion>().map_err(|_| {
                    crate::plumbing::errors::input_type_error(format!(
                        "the function of frame {name:?} must return a FrameMotion, got {}",
                        crate::plumbing::args::describe(&result)
                    ))
                })?;
                let motion = motion.get();
                if !(motion.shape == [times.len()] || motion.shape.is_empty()) {
                    return Err(ShapeError::new_err(format!(
                        "the function of frame {name:?} was called with {} times and must return a FrameMotion of shape ({},) or (), got {:?}",
                        times.len(),
                        times.len(),
                        motion.shape
                    )));
                }
                external.push((frame, motion.motions.clone()));
            }
        }
        let mut out = MotionBatch::default();
        out.reserve(times.len());
        let result = py.detach(|| {
            {
                graph.motions_each(
                    p,
                    c,
                    times,
                    |frame, index, _| {
                        let batch = &external.iter().find(|(f, _)| *f == frame).expect("every function edge was called").1;
                        Ok(batch.get(if batch.len() == 1 { 0 } else { index }))
                    },
                    |_, m| out.push(&m),
                )
            }
        });
        result.map_err(graph_error)?;
        Ok(out)
    }

    /// A single rotation argument: a quaternion (4,) or a matrix (3, 3), or the identity.
    fn rotation_argument(obj: Option<&Bound<'_, PyAny>>) -> PyResult<UnitQuaternion<f64>> {
        let Some(obj) = obj.filter(|o| !o.is_none()) else { return Ok(UnitQuaternion::identity()) };
        let (mut op, is_matrix) = rotation_operand(obj)?;
        let plan = Plan::for_operands(&mut [&mut op], &[])?;
        if !plan.shape.is_empty() {
            return Err(ShapeError::new_err(format!("`rotation` must be one rotation here, got batch shape {:?}", plan.shape)));
        }
        let values = op.access(&plan).slice(0).to_vec();
        let q = if is_matrix { matrix(&values, "rotation") } else { quaternion(&values, "rotation") };
        q.map_err(|e| to_py(&e, ""))
    }

    /// A single vector argument (3,).
    fn vector_argument(obj: Option<&Bound<'_, PyAny>>, name: &'static str) -> PyResult<Vector3<f64>> {
        let Some(obj) = obj.filter(|o| !o.is_none()) else { return Ok(Vector3::zeros()) };
        let mut op = Operand::extract(obj, name, &[3])?;
        let plan = Plan::for_operands(&mut [&mut op], &[])?;
        if !plan.shape.is_empty() {
            return Err(ShapeError::new_err(format!("`{name}` must have shape (3,) here, got batch shape {:?}", plan.shape)));
        }
        Ok(op.access(&plan).vec3(0))
    }

    /// Rows of an `(N, k)` argument as arrays.
    fn rows<const K: usize>(obj: &Bound<'_, PyAny>, name: &'static str, n: usize) -> PyResult<Vec<[f64; K]>> {
        let mut op = Operand::extract(obj, name, &[K])?;
        let plan = Plan::for_operands(&mut [&mut op], &[])?;
        if plan.shape != [n] {
            return Err(ShapeError::new_err(format!(
                "`{name}` must have shape ({n}, {K}) (one row per time), got batch shape {:?}",
                plan.shape
            )));
        }
        let access = op.access(&plan);
        Ok((0..n).map(|i| access.slice(i).try_into().expect("K values")).collect())
    }

    fn add(&self, result: Result<FrameId, GraphError>) -> PyResult<()> {
        result.map(|_| ()).map_err(graph_error)
    }
}

fn edge_error(e: rotaframe::Error) -> PyErr {
    to_py(&crate::plumbing::errors::python_name(e), "")
}

#[pymethods]
impl PyFrameGraph {
    /// A graph holding only its root frame, `root`, declared inertial or not.
    #[new]
    #[pyo3(signature = (root, *, inertial=true))]
    fn py_new(root: &Bound<'_, PyAny>, #[pyo3(from_py_with = crate::plumbing::args::inertial)] inertial: bool) -> PyResult<Self> {
        let root = crate::plumbing::args::text(root, "root")?;
        Ok(Self::wrap(FrameGraph::try_new(&root, inertial).map_err(graph_error)?))
    }

    /// Adds frame `name` fixed in `parent`: `rotation` child to parent (quaternion (4,) or
    /// matrix (3, 3); identity if omitted), `position` of its origin in the parent (m).
    #[pyo3(signature = (name, parent, *, rotation=None, position=None))]
    fn add_fixed(
        &self,
        name: &str,
        parent: &str,
        rotation: Option<&Bound<'_, PyAny>>,
        position: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<()> {
        let edge =
            Fixed::new(Self::rotation_argument(rotation)?, Self::vector_argument(position, "position")?).map_err(edge_error)?;
        let mut state = self.write()?;
        self.add(state.graph.add_fixed(name, parent, edge))
    }

    /// Adds frame `name` spinning in `parent` about `axis` (in the parent's axes) at `rate`
    /// (rad/s), with `angle_at_zero` (rad) at t = 0 and a constant `angular_acceleration`.
    #[pyo3(signature = (name, parent, *, axis, rate, angle_at_zero=0.0, angular_acceleration=0.0))]
    fn add_spin(
        &self,
        name: &str,
        parent: &str,
        axis: &Bound<'_, PyAny>,
        #[pyo3(from_py_with = crate::plumbing::args::rate)] rate: f64,
        #[pyo3(from_py_with = crate::plumbing::args::angle_at_zero)] angle_at_zero: f64,
        #[pyo3(from_py_with = crate::plumbing::args::angular_acceleration)] angular_acceleration: f64,
    ) -> PyResult<()> {
        let axis = Self::vector_argument(Some(axis), "axis")?;
        let edge = Spin::new(axis, rate, angle_at_zero, angular_acceleration).map_err(edge_error)?;
        let mut state = self.write()?;
        self.add(state.graph.add_spin(name, parent, edge))
    }

    /// Adds the Earth-fixed frame `name` (ECEF) turning relative to `parent` (an inertial
    /// frame): t = 0 at rotation angle `angle_at_epoch` (rad), turning at the model's rate, or
    /// at the UT1 Julian date `epoch_jd_ut1` (a number or a pair (day, fraction), whose Earth
    /// Rotation Angle is then the angle), turning at the ERA's rate (t in UT1 seconds). With
    /// `eop` (an `EarthOrientation`) the frame is the ITRS relative to the GCRS by the full IERS
    /// model instead (`rf.earth_motion_iers`), t in seconds of TT after `epoch_jd_tt` (a number or
    /// a pair); saved to TOML as a declared function frame, attached again in code.
    #[pyo3(signature = (name, parent, *, angle_at_epoch=0.0, model=None, epoch_jd_ut1=None, eop=None, epoch_jd_tt=None))]
    fn add_earth(
        &self,
        name: &str,
        parent: &str,
        #[pyo3(from_py_with = crate::plumbing::args::angle_at_epoch)] angle_at_epoch: f64,
        #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
        epoch_jd_ut1: Option<&Bound<'_, PyAny>>,
        eop: Option<&Bound<'_, PyAny>>,
        epoch_jd_tt: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<()> {
        let two_parts = |epoch: &Bound<'_, PyAny>, name: &'static str| -> PyResult<(f64, f64)> {
            let mut op = Operand::extract(epoch, name, &[])?;
            let plan = Plan::for_operands(&mut [&mut op], &[])?;
            let access = op.access(&plan);
            let parts: Vec<f64> = (0..plan.n).map(|i| access.scalar(i)).collect();
            match parts.as_slice() {
                [jd] => Ok((*jd, 0.0)),
                [jd, fraction] => Ok((*jd, *fraction)),
                _ => Err(ShapeError::new_err(format!("`{name}` must be a Julian date or a pair (day, fraction)"))),
            }
        };
        if let Some(table) = crate::time::orientation::ut1_source(eop)? {
            let epoch = epoch_jd_tt
                .filter(|o| !o.is_none())
                .ok_or_else(|| crate::plumbing::errors::RotaframeError::new_err("`epoch_jd_tt` is needed with `eop`"))?;
            let (jd, fraction) = two_parts(epoch, "epoch_jd_tt")?;
            let edge = rotaframe::graph::IersEarth::new(rotaframe::time::JulianDate { jd, fraction }, table.get().table.clone())
                .map_err(|e| edge_error(if e.quantity() == "jd_tt" { e.with_quantity("epoch_jd_tt") } else { e }))?;
            let mut state = self.write()?;
            return self.add(state.graph.add_earth_iers(name, parent, edge));
        }
        if epoch_jd_tt.is_some_and(|o| !o.is_none()) {
            return Err(crate::plumbing::errors::RotaframeError::new_err("`epoch_jd_tt` goes with `eop` (the full IERS model)"));
        }
        let m = model_or_default(model.as_ref());
        let edge = match epoch_jd_ut1.filter(|o| !o.is_none()) {
            None => EarthRotation::with_angle(m, angle_at_epoch),
            Some(epoch) => {
                let (jd, fraction) = two_parts(epoch, "epoch_jd_ut1")?;
                EarthRotation::at_ut1_epoch(m, jd, fraction)
            }
        }
        .map_err(edge_error)?;
        let mut state = self.write()?;
        self.add(state.graph.add_earth(name, parent, edge))
    }

    /// Adds a local-level frame `name` at the fixed geodetic point (`lat`, `lon`, `h`) of
    /// `parent` (an Earth-fixed frame), with `axes` "ned" or "enu".
    #[pyo3(signature = (name, parent, lat, lon, h, *, axes="ned", model=None, degrees=false))]
    fn add_site(
        &self,
        name: &str,
        parent: &str,
        #[pyo3(from_py_with = crate::plumbing::args::lat)] lat: f64,
        #[pyo3(from_py_with = crate::plumbing::args::lon)] lon: f64,
        #[pyo3(from_py_with = crate::plumbing::args::h)] h: f64,
        #[pyo3(from_py_with = crate::plumbing::args::axes)] axes: &str,
        #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
        #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
    ) -> PyResult<()> {
        let s = crate::plumbing::output::angle_scale(degrees);
        let axes = if axes == "enu" { LocalAxes::Enu } else { LocalAxes::Ned };
        let edge = Site::new(model_or_default(model.as_ref()), Geodetic::new(lat * s, lon * s, h), axes)
            .map_err(|e| to_py(&crate::plumbing::errors::python_error(e, degrees, lat), ""))?;
        let mut state = self.write()?;
        self.add(state.graph.add_site(name, parent, edge))
    }

    /// Adds frame `name` moving as logged: times `t` (N,), `position` (N, 3) and `attitude`
    /// (N, 4) quaternions. With `position_kind="geodetic"` the rows are (lat, lon, h) relative
    /// to the Earth-fixed `parent` and the attitudes body-to-NED; with `"cartesian"` positions
    /// are in the parent (m) and attitudes child-to-parent. Optional measured `velocity` (N, 3)
    /// (NED for geodetic, parent axes for Cartesian) and `angular_rate` (N, 3) (of the child
    /// relative to the parent, in child axes) replace the estimated derivatives. The motion is
    /// interpolated (all six kinematic quantities) and never extrapolated.
    #[pyo3(signature = (name, parent, t, position, attitude, *, position_kind="geodetic", degrees=false, model=None, velocity=None, angular_rate=None))]
    fn add_samples(
        &self,
        name: &str,
        parent: &str,
        t: &Bound<'_, PyAny>,
        position: &Bound<'_, PyAny>,
        attitude: &Bound<'_, PyAny>,
        #[pyo3(from_py_with = crate::plumbing::args::position_kind)] position_kind: &str,
        #[pyo3(from_py_with = crate::plumbing::args::degrees)] degrees: bool,
        #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'_, PyEarthModel>>,
        velocity: Option<&Bound<'_, PyAny>>,
        angular_rate: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<()> {
        let (times, shape) = Self::times(t)?;
        if shape.len() != 1 {
            return Err(ShapeError::new_err(format!("`t` must be a 1-D array of sample times, got shape {shape:?}")));
        }
        let n = times.len();
        let positions = Self::rows::<3>(position, "position", n)?;
        let attitudes = Self::rows::<4>(attitude, "attitude", n)?;
        let velocities = velocity.filter(|o| !o.is_none()).map(|v| Self::rows::<3>(v, "velocity", n)).transpose()?;
        let rates = angular_rate.filter(|o| !o.is_none()).map(|w| Self::rows::<3>(w, "angular_rate", n)).transpose()?;
        let located = |e: rotaframe::BatchError| {
            let error = crate::plumbing::errors::python_name(e.error);
            let argument = match error.quantity() {
                "time" => "t",
                other => other,
            };
            to_py(&error, &format!("(at index {} of `{argument}`)", e.index))
        };
        let edge = if position_kind == "geodetic" {
            let s = crate::plumbing::output::angle_scale(degrees);
            let geodetic: Vec<Geodetic> = positions.iter().map(|p| Geodetic::new(p[0] * s, p[1] * s, p[2])).collect();
            SampledEdge::geodetic(
                &model_or_default(model.as_ref()),
                times,
                &geodetic,
                &attitudes,
                velocities.as_deref(),
                rates.as_deref(),
            )
        } else {
            SampledEdge::cartesian(times, positions, attitudes, velocities, rates)
        }
        .map_err(located)?;
        let mut state = self.write()?;
        self.add(state.graph.add_samples(name, parent, edge))
    }

    /// Adds frame `name` whose motion relative to `parent` is `fn(t)`: a callable taking a 1-D
    /// float64 array of times and returning a `FrameMotion` of that length (or a single one).
    fn add_function(&self, name: &str, parent: &str, r#fn: &Bound<'_, PyAny>) -> PyResult<()> {
        if !r#fn.is_callable() {
            return Err(crate::plumbing::errors::input_type_error(format!(
                "`fn` must be callable, got {}",
                crate::plumbing::args::describe(r#fn)
            )));
        }
        let mut state = self.write()?;
        let id = state.graph.add_external(name, parent).map_err(graph_error)?;
        state.functions.retain(|(f, _)| *f != id);
        state.functions.push((id, r#fn.clone().unbind()));
        Ok(())
    }

    /// The motion of `child` relative to `parent` at times `t` (any shape), as a
    /// `FrameMotion` of that shape labelled (parent, child).
    fn motion(&self, py: Python<'_>, parent: &str, child: &str, t: &Bound<'_, PyAny>) -> PyResult<PyFrameMotion> {
        let (times, shape) = Self::times(t)?;
        let motions = self.query(py, parent, child, &times)?;
        Ok(PyFrameMotion { motions, shape, parent: Some(parent.to_string()), child: Some(child.to_string()) })
    }

    /// Points given relative to frame `frame_from` (resolved in it) at times `t`, relative to
    /// frame `frame_to` (resolved in it): `(position, velocity, acceleration)`.
    #[pyo3(signature = (frame_from, frame_to, t, position, velocity=None, acceleration=None))]
    fn map_point<'py>(
        &self,
        py: Python<'py>,
        frame_from: &str,
        frame_to: &str,
        t: &Bound<'py, PyAny>,
        position: &Bound<'py, PyAny>,
        velocity: Option<&Bound<'py, PyAny>>,
        acceleration: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyTuple>> {
        let motion = Bound::new(py, self.motion(py, frame_to, frame_from, t)?)?;
        motion.call_method1("map_point", (position, velocity, acceleration))?.cast_into::<PyTuple>().map_err(Into::into)
    }

    /// The apparent accelerations, resolved in `frame`, on points at `position` moving at
    /// `velocity` relative to `frame` at times `t`: the same terms object as
    /// `rotaframe.apparent_acceleration`, from the frame's motion relative to the inertial root.
    #[pyo3(signature = (frame, t, position, velocity=None))]
    fn apparent_acceleration<'py>(
        &self,
        py: Python<'py>,
        frame: &str,
        t: &Bound<'py, PyAny>,
        position: &Bound<'py, PyAny>,
        velocity: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<crate::apparent::PyApparentAcceleration> {
        let root = {
            let state = self.read()?;
            if !state.graph.is_inertial() {
                return Err(graph_error(GraphError::NotInertial { root: state.graph.root().to_string() }));
            }
            state.graph.root().to_string()
        };
        let motion = self.motion(py, &root, frame, t)?;
        let part = |f: fn(&Motion) -> Vector3<f64>| -> Bound<'py, PyArrayDyn<f64>> {
            let mut dims = motion.shape.clone();
            dims.push(3);
            let flat: Vec<f64> = motion.motions.iter().flat_map(|m| <[f64; 3]>::from(f(&m))).collect();
            numpy::PyArray1::from_vec(py, flat).reshape(dims).expect("n × 3 values")
        };
        let w = part(|m| m.angular_velocity_in_child());
        let alpha = part(|m| m.angular_acceleration_in_child());
        let a0 = part(|m| m.acceleration_in_child());
        let args = [w.as_any(), position];
        let batch = crate::plumbing::broadcast::BatchArgs::SERIAL;
        crate::apparent::apparent_terms_of(py, args, velocity, Some(alpha.as_any()), Some(a0.as_any()), batch)
    }

    /// The frames' names, root first, in the order they were added.
    #[getter]
    fn frames(&self) -> PyResult<Vec<String>> {
        Ok(self.read()?.graph.frames().map(str::to_string).collect())
    }

    /// The name of the root frame.
    #[getter]
    fn root(&self) -> PyResult<String> {
        Ok(self.read()?.graph.root().to_string())
    }

    /// Whether the root is declared inertial.
    #[getter]
    fn inertial(&self) -> PyResult<bool> {
        Ok(self.read()?.graph.is_inertial())
    }

    /// The parent of frame `name` (None for the root).
    fn parent_of(&self, name: &str) -> PyResult<Option<String>> {
        Ok(self.read()?.graph.parent_of(name).map_err(graph_error)?.map(str::to_string))
    }

    /// The kind of the edge that attaches frame `name`: "root", "fixed", "spin", "earth",
    /// "site", "samples" or "function".
    fn kind_of(&self, name: &str) -> PyResult<&'static str> {
        Ok(self.read()?.graph.edge(name).map_err(graph_error)?.kind_name())
    }

    /// The frames from `a` to `b` through their lowest common ancestor, both included.
    fn path(&self, a: &str, b: &str) -> PyResult<Vec<String>> {
        Ok(self.read()?.graph.path(a, b).map_err(graph_error)?.into_iter().map(str::to_string).collect())
    }

    /// The static structure as a TOML file (samples and function frames declared, to be
    /// attached in code after `from_toml`).
    fn to_toml(&self) -> PyResult<String> {
        Ok(self.read()?.graph.to_toml())
    }

    /// A graph from a TOML file written by `to_toml` or by hand.
    #[staticmethod]
    fn from_toml(text: &str) -> PyResult<Self> {
        Ok(Self::wrap(FrameGraph::from_toml(text).map_err(graph_error)?))
    }

    fn __contains__(&self, name: &str) -> PyResult<bool> {
        Ok(self.read()?.graph.id(name).is_ok())
    }

    fn __len__(&self) -> PyResult<usize> {
        Ok(self.read()?.graph.frames().count())
    }

    fn __repr__(&self) -> PyResult<String> {
        let state = self.read()?;
        let g = &state.graph;
        let frames: Vec<String> =
            g.frames().skip(1).map(|n| format!("{n} ({})", g.edge(n).map_or("?", Edge::kind_name))).collect();
        Ok(format!(
            "FrameGraph(root={:?}, inertial={}, frames=[{}])",
            g.root(),
            if g.is_inertial() { "True" } else { "False" },
            frames.join(", ")
        ))
    }

    /// Pickling: the structure as TOML and each sampled edge's samples (in the parent's
    /// coordinates). Graphs with function edges cannot be pickled (a Python callable does not
    /// travel between processes reliably).
    fn __reduce__<'py>(&self, py: Python<'py>) -> PyResult<(Bound<'py, PyAny>, Bound<'py, PyTuple>)> {
        let state = self.read()?;
        let g = &state.graph;
        let functions: Vec<&str> =
            g.frames().filter(|n| g.edge(n).is_ok_and(|e| matches!(e, Edge::Function(_) | Edge::External))).collect();
        if !functions.is_empty() {
            let names = functions;
            return Err(FrameGraphError::new_err(format!(
                "a FrameGraph with function edges ({}) cannot be pickled; rebuild it in the other process, or replace them by samples",
                names.join(", ")
            )));
        }
        let samples = PyList::empty(py);
        for name in g.frames() {
            if let Ok(Edge::Sampled(edge)) = g.edge(name) {
                let s = edge.samples();
                let flat = |rows: &[[f64; 3]]| -> Bound<'py, PyAny> {
                    numpy::PyArray1::from_vec(py, rows.iter().flatten().copied().collect()).into_any()
                };
                let attitudes: Vec<f64> = s.attitudes.iter().flatten().copied().collect();
                let kind = if edge.kind() == SamplesKind::Geodetic { "geodetic" } else { "cartesian" };
                samples.append((
                    name,
                    kind,
                    numpy::PyArray1::from_slice(py, s.times),
                    flat(s.positions),
                    numpy::PyArray1::from_vec(py, attitudes),
                    s.velocities.map(flat),
                    s.angular_rates.map(flat),
                ))?;
            }
        }
        // Full-model Earth edges: the epoch and the Earth orientation table.
        let iers = PyList::empty(py);
        for name in g.frames() {
            if let Ok(Edge::EarthIers(edge)) = g.edge(name) {
                let table = Bound::new(py, crate::time::orientation::PyEarthOrientation { table: edge.eop().clone() })?;
                iers.append((name, edge.epoch_tt().jd, edge.epoch_tt().fraction, table))?;
            }
        }
        let rebuild = py.import("rotaframe._native")?.getattr("_frame_graph_from_parts")?;
        Ok((rebuild, (g.to_toml(), samples, iers).into_pyobject(py)?))
    }
}

/// One pickled sampled edge: frame name, kind, times, flat positions, flat attitudes and the
/// optional flat velocities and angular rates.
type PickledSamples<'py> = (
    String,
    String,
    Bound<'py, PyAny>,
    Bound<'py, PyAny>,
    Bound<'py, PyAny>,
    Option<Bound<'py, PyAny>>,
    Option<Bound<'py, PyAny>>,
);

/// Rebuilds a pickled `FrameGraph`.
#[pyfunction]
#[pyo3(signature = (toml, samples, iers=None))]
pub fn _frame_graph_from_parts(
    toml: &str,
    samples: &Bound<'_, PyList>,
    iers: Option<&Bound<'_, PyList>>,
) -> PyResult<PyFrameGraph> {
    let mut graph = FrameGraph::from_toml(toml).map_err(graph_error)?;
    for item in iers.into_iter().flat_map(|list| list.iter()) {
        let (name, jd, fraction, table): (String, f64, f64, Bound<'_, crate::time::orientation::PyEarthOrientation>) =
            item.extract()?;
        let parent = graph.parent_of(&name).map_err(graph_error)?.unwrap_or_default().to_string();
        let edge = rotaframe::graph::IersEarth::new(rotaframe::time::JulianDate { jd, fraction }, table.get().table.clone())
            .map_err(edge_error)?;
        graph.add_earth_iers(&name, &parent, edge).map_err(graph_error)?;
    }
    for item in samples.iter() {
        let (name, _kind, t, r, q, v, w): PickledSamples<'_> = item.extract()?;
        let (times, _) = PyFrameGraph::times(&t)?;
        let n = times.len();
        fn reshape<'py>(a: &Bound<'py, PyAny>, n: usize, k: usize) -> PyResult<Bound<'py, PyAny>> {
            a.call_method1("reshape", (n, k))
        }
        let positions = PyFrameGraph::rows::<3>(&reshape(&r, n, 3)?, "position", n)?;
        let attitudes = PyFrameGraph::rows::<4>(&reshape(&q, n, 4)?, "attitude", n)?;
        let velocities = v.map(|v| PyFrameGraph::rows::<3>(&reshape(&v, n, 3)?, "velocity", n)).transpose()?;
        let rates = w.map(|w| PyFrameGraph::rows::<3>(&reshape(&w, n, 3)?, "angular_rate", n)).transpose()?;
        let parent = graph.parent_of(&name).map_err(graph_error)?.unwrap_or_default().to_string();
        // The samples were pickled in the parent's coordinates (ECEF for geodetic ones).
        let edge = SampledEdge::cartesian(times, positions, attitudes, velocities, rates).map_err(|e| to_py(&e.error, ""))?;
        graph.add_samples(&name, &parent, edge).map_err(graph_error)?;
    }
    Ok(PyFrameGraph::wrap(graph))
}
