//! `propagate`: free-body trajectories in moving frames (the core's `propagate` module) from
//! Python. Conversion, validation and error mapping; the equations, the integrator, the event
//! location and the budget are the core's.

use numpy::{PyArray1, PyArrayDyn, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyTuple;
use rotaframe::graph::{FrameGraph, FrameId};
use rotaframe::graph::{GraphError, LocalAxes};
use rotaframe::nalgebra::Vector3;
use rotaframe::propagate::{self as rp, AirDensity, ApparentTerms, DenseStep, Drag, Gravitation, Motion, Settings, Tolerances};

use crate::earth::model::{PyEarthModel, model_or_default};
use crate::graph::{PyFrameGraph, graph_error};
use crate::motion::PyFrameMotion;
use crate::plumbing::broadcast::{Operand, Plan};
use crate::plumbing::errors::{RotaframeError, ShapeError, to_py};

/// The deflection each apparent term caused by the end of a run (first order, from the
/// variational equations), resolved in the propagation frame (m): `translational`,
/// `coriolis`, `centrifugal`, `euler` and their sum `total`; the velocity changes are
/// `*_velocity` (m/s).
#[pyclass(frozen, name = "DeflectionBudget", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyDeflectionBudget {
    budget: rp::DeflectionBudget,
    /// The axes of the propagation frame when it is a graph's local-level (site) frame.
    local_axes: Option<LocalAxes>,
}

fn vec3<'py>(py: Python<'py>, v: &Vector3<f64>) -> Bound<'py, PyArray1<f64>> {
    PyArray1::from_slice(py, v.as_slice())
}

/// Four 3-vectors as a (4, 3) array.
fn rows<'py>(py: Python<'py>, vectors: [Vector3<f64>; 4]) -> Bound<'py, PyArrayDyn<f64>> {
    let flat: Vec<f64> = vectors.iter().flat_map(|v| v.iter().copied()).collect();
    PyArray1::from_vec(py, flat).reshape(vec![4, 3]).expect("12 values")
}

/// Quadratic aerodynamic drag, a built-in force for `propagate` (evaluated without calling
/// Python): `f = −ρ |u| u / (2β)`, `u = v − wind`, with `β = m / (C_D A)` the
/// `ballistic_coefficient` (kg/m²) and `ρ` the air `density` (kg/m³): constant, or with
/// `scale_height` (m) the exponential atmosphere `density · exp(−(up · r) / scale_height)`,
/// `up` the upward unit vector in the propagation frame. `wind` is the air's velocity relative
/// to the propagation frame (m/s): use drag in a frame that moves with the air (Earth-fixed,
/// a site's frame).
#[pyclass(frozen, name = "Drag", module = "rotaframe._native")]
#[derive(Debug, Clone, Copy)]
pub struct PyDrag {
    drag: Drag,
}

#[pymethods]
impl PyDrag {
    #[new]
    #[pyo3(signature = (ballistic_coefficient, *, density=1.225, scale_height=None, up=None, wind=None))]
    fn new(
        #[pyo3(from_py_with = crate::plumbing::args::ballistic_coefficient)] ballistic_coefficient: f64,
        #[pyo3(from_py_with = crate::plumbing::args::density)] density: f64,
        #[pyo3(from_py_with = crate::plumbing::args::opt_scale_height)] scale_height: Option<f64>,
        up: Option<&Bound<'_, PyAny>>,
        wind: Option<&Bound<'_, PyAny>>,
    ) -> PyResult<Self> {
        let wind = match wind.filter(|w| !w.is_none()) {
            Some(w) => single_vector(w, "wind")?,
            None => Vector3::zeros(),
        };
        let up = up.filter(|u| !u.is_none()).map(|u| single_vector(u, "up")).transpose()?;
        let model = match (scale_height, up) {
            (None, None) => AirDensity::Constant(density),
            (Some(scale_height), Some(up)) => AirDensity::Exponential { at_origin: density, scale_height, up },
            (Some(_), None) => {
                return Err(RotaframeError::new_err(
                    "an exponential atmosphere (`scale_height`) needs `up`, the upward direction in the propagation frame",
                ));
            }
            (None, Some(_)) => return Err(RotaframeError::new_err("`up` is only used with `scale_height`")),
        };
        Drag::new(ballistic_coefficient, model, wind).map(|drag| Self { drag }).map_err(|e| to_py(&e, ""))
    }

    /// The drag acceleration (m/s²) on a body at `position` moving at `velocity` (one point).
    fn acceleration<'py>(
        &self,
        py: Python<'py>,
        position: &Bound<'py, PyAny>,
        velocity: &Bound<'py, PyAny>,
    ) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let (r, v) = (single_vector(position, "position")?, single_vector(velocity, "velocity")?);
        Ok(vec3(py, &self.drag.checked_acceleration(&r, &v).map_err(|e| to_py(&e, ""))?))
    }

    /// The ballistic coefficient (kg/m²).
    #[getter]
    fn ballistic_coefficient(&self) -> f64 {
        self.drag.ballistic_coefficient()
    }

    fn __repr__(&self) -> String {
        let d = &self.drag;
        let density = match d.density() {
            AirDensity::Constant(rho) => format!("density={rho}"),
            AirDensity::Exponential { at_origin, scale_height, up } => {
                format!("density={at_origin}, scale_height={scale_height}, up={:?}", up.as_slice())
            }
        };
        format!("Drag(ballistic_coefficient={}, {density}, wind={:?})", d.ballistic_coefficient(), d.wind().as_slice())
    }
}

/// One 3-vector argument (shape (3,)).
fn single_vector(obj: &Bound<'_, PyAny>, name: &'static str) -> PyResult<Vector3<f64>> {
    let mut op = Operand::extract(obj, name, &[3])?;
    let plan = Plan::for_operands(&mut [&mut op], &[])?;
    if !plan.shape.is_empty() {
        return Err(ShapeError::new_err(format!("`{name}` must have shape (3,)")));
    }
    Ok(op.access(&plan).vec3(0))
}

/// A stop function's type when there is none.
type NoStop = fn(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<f64>;

/// The memory a propagation's dense output may hold (1 GiB): at about 400 bytes a step,
/// some 2.6 million steps, past the default `max_steps` of 10⁶.
const MAX_DENSE_BYTES: usize = 1 << 30;

/// The most steps a propagation keeps.
const MAX_KEPT_STEPS: usize = MAX_DENSE_BYTES / core::mem::size_of::<DenseStep<6>>();

/// Why the steps of a run could not all be kept.
enum StepsNotKept {
    /// More than `MAX_KEPT_STEPS`.
    Cap,
    /// The allocator refused.
    Memory,
}

/// A propagation in a graph's frame: everything but the force and stop callbacks.
struct GraphRun<'a> {
    settings: &'a Settings,
    graph: &'a FrameGraph,
    frame: FrameId,
    /// The Earth-fixed frame, for a height event.
    earth: Option<FrameId>,
    stop_height: Option<f64>,
    span: (f64, f64),
    r0: Vector3<f64>,
    v0: Vector3<f64>,
    budget: bool,
}

impl GraphRun<'_> {
    /// Runs; a graph error (which names the frame and time) is returned beside the core's.
    fn go<F, E>(
        &self,
        force: F,
        stop: Option<E>,
        record: impl FnMut(&DenseStep<6>) -> rotaframe::Result<()>,
    ) -> (rotaframe::Result<rp::Outcome>, Option<GraphError>)
    where
        F: FnMut(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<Vector3<f64>>,
        E: FnMut(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<f64>,
    {
        let failure: std::cell::RefCell<Option<GraphError>> = std::cell::RefCell::new(None);
        let fail = |e: GraphError| -> rotaframe::Error {
            let core = match &e {
                GraphError::Edge { error, .. } => *error,
                _ => rotaframe::Error::Invalid { quantity: "frame_motion", reason: "the graph cannot give this frame's motion" },
            };
            failure.borrow_mut().get_or_insert(e);
            core
        };
        let sources = self.graph.motion_source(0, self.frame).and_then(|s| {
            let earth = self.earth.map(|e| self.graph.motion_source(e, self.frame)).transpose()?;
            Ok((s, earth))
        });
        let (mut source, mut earth) = match sources {
            Ok(pair) => pair,
            Err(e) => return (Err(rotaframe::Error::Invalid { quantity: "frame_motion", reason: "no path" }), Some(e)),
        };
        let model = self.settings.model;
        let frame = |t: f64| source.at(t).map_err(fail);
        let has_event = self.stop_height.is_some() || stop.is_some();
        let mut stop = stop;
        let event = |t: f64, r: &Vector3<f64>, v: &Vector3<f64>| -> rotaframe::Result<f64> {
            match (earth.as_mut(), self.stop_height, stop.as_mut()) {
                (Some(earth), Some(h), _) => Ok(rp::height_in(&model, &earth.at(t).map_err(fail)?, r)? - h),
                (_, _, Some(f)) => f(t, r, v),
                _ => Ok(1.0),
            }
        };
        let out = rp::propagate(
            self.settings,
            frame,
            force,
            has_event.then_some(event),
            self.span.0,
            self.span.1,
            self.r0,
            self.v0,
            self.budget,
            record,
        );
        (out, failure.into_inner())
    }
}

/// The `force` argument: nothing, the built-in drag, or a Python callable.
enum Force<'a, 'py> {
    None,
    Drag(Drag),
    Python(&'a Bound<'py, PyAny>),
}

#[pymethods]
impl PyDeflectionBudget {
    /// Displacement caused by the translational term (m).
    #[getter]
    fn translational<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        vec3(py, &self.budget.translational[0])
    }
    /// Displacement caused by the Coriolis term (m).
    #[getter]
    fn coriolis<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        vec3(py, &self.budget.coriolis[0])
    }
    /// Displacement caused by the centrifugal term (m).
    #[getter]
    fn centrifugal<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        vec3(py, &self.budget.centrifugal[0])
    }
    /// Displacement caused by the Euler term (m).
    #[getter]
    fn euler<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        vec3(py, &self.budget.euler[0])
    }
    /// The four displacements summed: the first-order effect of all apparent terms (m).
    #[getter]
    fn total<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        vec3(py, &self.budget.total_displacement())
    }
    /// Velocity changes caused by each term, in the order translational, Coriolis,
    /// centrifugal, Euler: shape (4, 3) (m/s).
    #[getter]
    fn velocity<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        let b = &self.budget;
        rows(py, [b.translational[1], b.coriolis[1], b.centrifugal[1], b.euler[1]])
    }

    /// The four displacements resolved north/east/down, shape (4, 3), rows translational,
    /// Coriolis, centrifugal, Euler (m): for a propagation in a graph's site frame (NED or
    /// ENU). For any other frame the axes are not known to be local-level: an error.
    #[getter]
    fn north_east_down<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArrayDyn<f64>>> {
        let b = match self.local_axes {
            Some(LocalAxes::Ned) => self.budget,
            Some(LocalAxes::Enu) => self.budget.resolved_in(&rotaframe::earth::ENU_FROM_NED),
            None => {
                return Err(RotaframeError::new_err(
                    "the propagation frame is not a graph's site frame, so its axes are not known to be north/east/down: read the budget in the frame's own axes",
                ));
            }
        };
        Ok(rows(py, [b.translational[0], b.coriolis[0], b.centrifugal[0], b.euler[0]]))
    }

    fn __repr__(&self) -> String {
        let b = &self.budget;
        format!(
            "DeflectionBudget(translational={:?}, coriolis={:?}, centrifugal={:?}, euler={:?}) m",
            b.translational[0].as_slice(),
            b.coriolis[0].as_slice(),
            b.centrifugal[0].as_slice(),
            b.euler[0].as_slice()
        )
    }
}

/// A propagated trajectory: `t`, `position`, `velocity` at the integrator's steps (the start
/// included), `event_time` (None when the run reached the end of its span), `sample(t)` for
/// the dense output between steps, `budget` (with `budget=True`) and `steps`.
#[pyclass(frozen, name = "Propagation", module = "rotaframe._native")]
#[derive(Debug)]
pub struct PyPropagation {
    steps: Vec<DenseStep<6>>,
    start: [f64; 7],
    end: [f64; 7],
    event_time: Option<f64>,
    budget: Option<rp::DeflectionBudget>,
    local_axes: Option<LocalAxes>,
    evaluations: usize,
}

#[pymethods]
impl PyPropagation {
    /// Times of the steps (s), the start and the end (or event) included.
    #[getter]
    fn t<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let mut t: Vec<f64> = core::iter::once(self.start[0]).chain(self.steps.iter().map(|s| s.t1)).collect();
        if let Some(last) = t.last_mut() {
            *last = self.end[0];
        }
        PyArray1::from_vec(py, t)
    }

    /// Positions at `t` (m), shape (N, 3).
    #[getter]
    fn position<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        self.states(py, 1)
    }

    /// Velocities at `t` (m/s), shape (N, 3).
    #[getter]
    fn velocity<'py>(&self, py: Python<'py>) -> Bound<'py, PyArrayDyn<f64>> {
        self.states(py, 4)
    }

    /// The time of the stopping event (s), or None.
    #[getter]
    fn event_time(&self) -> Option<f64> {
        self.event_time
    }

    /// The deflection budget (with `budget=True`), or None.
    #[getter]
    fn budget(&self) -> Option<PyDeflectionBudget> {
        self.budget.map(|budget| PyDeflectionBudget { budget, local_axes: self.local_axes })
    }

    /// Number of accepted integration steps.
    #[getter]
    fn steps(&self) -> usize {
        self.steps.len()
    }

    /// Number of right-hand-side evaluations.
    #[getter]
    fn evaluations(&self) -> usize {
        self.evaluations
    }

    /// Position and velocity at times `t` (any shape, within the run) from the integrator's
    /// dense output: `(position, velocity)`, each of shape `t.shape + (3,)`.
    fn sample<'py>(&self, py: Python<'py>, t: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyTuple>> {
        let mut op = Operand::extract(t, "t", &[])?;
        let plan = Plan::for_operands(&mut [&mut op], &[])?;
        let access = op.access(&plan);
        let (t0, t1) = (self.start[0], self.end[0]);
        let mut p = Vec::with_capacity(3 * plan.n);
        let mut v = Vec::with_capacity(3 * plan.n);
        for i in 0..plan.n {
            let time = access.scalar(i);
            if !(t0..=t1).contains(&time) {
                return Err(to_py(
                    &rotaframe::Error::OutOfRange { quantity: "t", value: time, min: t0, max: t1 },
                    &format!("(index {i}; the run covers [{t0}, {t1}])"),
                ));
            }
            let k = self.steps.partition_point(|s| s.t1 < time).min(self.steps.len().saturating_sub(1));
            let y = match self.steps.get(k) {
                Some(step) => step.at(time),
                None => [self.start[1], self.start[2], self.start[3], self.start[4], self.start[5], self.start[6]],
            };
            p.extend_from_slice(&y[..3]);
            v.extend_from_slice(&y[3..]);
        }
        let mut dims = plan.shape.clone();
        dims.push(3);
        let p = PyArray1::from_vec(py, p).reshape(dims.clone())?;
        let v = PyArray1::from_vec(py, v).reshape(dims)?;
        PyTuple::new(py, [p, v])
    }

    fn __repr__(&self) -> String {
        format!(
            "Propagation(t=[{}, {}] s, {} steps, event_time={:?}, end position {:?} m)",
            self.start[0],
            self.end[0],
            self.steps.len(),
            self.event_time,
            &self.end[1..4]
        )
    }
}

impl PyPropagation {
    fn states<'py>(&self, py: Python<'py>, first: usize) -> Bound<'py, PyArrayDyn<f64>> {
        let mut flat = Vec::with_capacity(3 * (self.steps.len() + 1));
        flat.extend_from_slice(&self.start[first..first + 3]);
        let n = self.steps.len();
        for (k, s) in self.steps.iter().enumerate() {
            if k + 1 == n {
                flat.extend_from_slice(&self.end[first..first + 3]);
            } else {
                flat.extend_from_slice(&s.y1[first - 1..first + 2]);
            }
        }
        let rows = flat.len() / 3;
        PyArray1::from_vec(py, flat).reshape(vec![rows, 3]).expect("rows of 3")
    }
}

/// The `gravity` keyword of `propagate`: "point", "j2" or None (no gravitation).
pub fn gravitation(obj: &Bound<'_, PyAny>) -> PyResult<Gravitation> {
    if obj.is_none() {
        return Ok(Gravitation::None);
    }
    Ok(match crate::plumbing::args::keyword(obj, "gravity", &["point", "j2"])? {
        "j2" => Gravitation::J2,
        _ => Gravitation::PointMass,
    })
}

/// The apparent terms to keep: all, or the names given.
fn apparent_terms(obj: Option<&Bound<'_, PyAny>>) -> PyResult<ApparentTerms> {
    let Some(obj) = obj.filter(|o| !o.is_none()) else { return Ok(ApparentTerms::ALL) };
    let mut terms = ApparentTerms::NONE;
    for item in obj.try_iter()? {
        match crate::plumbing::args::keyword(&item?, "apparent", &["translational", "coriolis", "centrifugal", "euler"])? {
            "translational" => terms.translational = true,
            "coriolis" => terms.coriolis = true,
            "centrifugal" => terms.centrifugal = true,
            _ => terms.euler = true,
        }
    }
    Ok(terms)
}

/// A Python force or stop function's result as a 3-vector or a number.
fn vector_result(obj: &Bound<'_, PyAny>, name: &'static str) -> rotaframe::Result<Vector3<f64>> {
    let values: Vec<f64> =
        obj.extract().map_err(|_| rotaframe::Error::Invalid { quantity: name, reason: "must return three numbers" })?;
    match values.as_slice() {
        [x, y, z] => Ok(Vector3::new(*x, *y, *z)),
        _ => Err(rotaframe::Error::Invalid { quantity: name, reason: "must return three numbers" }),
    }
}

/// Propagates a body from `position`, `velocity` (m, m/s; relative to and resolved in the
/// propagation frame) over `t_span = (t0, t1)` (s).
///
/// `frame_motion` is the frame's motion relative to an inertial frame whose origin is the
/// Earth's centre: a callable `t -> FrameMotion` (for a float `t`), or a pair
/// `(FrameGraph, frame_name)` (the graph's root must be inertial; no Python is called for the
/// frame then, and `stop_height` uses the graph's Earth-fixed frame). `gravity` is "point",
/// "j2" or None; `force` a `Drag` (built in) or a callable `force(t, position, velocity)`
/// giving a force per unit mass in the frame (m/s²); `stop_fn(t, position, velocity)` ends the
/// run where it crosses zero, `stop_height` where the height above the ellipsoid crosses that
/// value (both located to 1e-9 s on the dense output). With `budget=True` the result carries
/// the first-order deflection caused by each apparent term; `apparent` names the terms kept in
/// the equations (all by default). `max_steps` bounds the work (an error past it).
///
/// Not certified for safety-of-life, range-safety or weapons use: validate against your own
/// requirements, the applicable standards and licensed practice.
#[pyfunction]
#[pyo3(
    text_signature = "(frame_motion, t_span, position, velocity, *, gravity='point', force=None, rtol=1e-10, atol=1e-09, max_step=None, stop_height=None, stop_fn=None, budget=False, model=None, apparent=None, max_steps=1000000)"
)]
#[pyo3(signature = (frame_motion, t_span, position, velocity, *, gravity=Gravitation::PointMass, force=None, rtol=1e-10, atol=1e-9, max_step=None, stop_height=None, stop_fn=None, budget=false, model=None, apparent=None, max_steps=1_000_000))]
#[allow(clippy::too_many_arguments, clippy::too_many_lines)]
pub fn propagate<'py>(
    py: Python<'py>,
    frame_motion: &Bound<'py, PyAny>,
    t_span: &Bound<'py, PyAny>,
    position: &Bound<'py, PyAny>,
    velocity: &Bound<'py, PyAny>,
    #[pyo3(from_py_with = gravitation)] gravity: Gravitation,
    force: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::rtol)] rtol: f64,
    #[pyo3(from_py_with = crate::plumbing::args::atol)] atol: f64,
    #[pyo3(from_py_with = crate::plumbing::args::opt_max_step)] max_step: Option<f64>,
    #[pyo3(from_py_with = crate::plumbing::args::opt_stop_height)] stop_height: Option<f64>,
    stop_fn: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::budget)] budget: bool,
    #[pyo3(from_py_with = crate::earth::model::earth_model)] model: Option<Bound<'py, PyEarthModel>>,
    apparent: Option<&Bound<'py, PyAny>>,
    #[pyo3(from_py_with = crate::plumbing::args::max_steps)] max_steps: u64,
) -> PyResult<PyPropagation> {
    let span = {
        let mut op = Operand::extract(t_span, "t_span", &[2])?;
        let plan = Plan::for_operands(&mut [&mut op], &[])?;
        if !plan.shape.is_empty() {
            return Err(ShapeError::new_err("`t_span` must be a pair (t0, t1)"));
        }
        let s = op.access(&plan).slice(0).to_vec();
        (s[0], s[1])
    };
    let (r0, v0) = (single_vector(position, "position")?, single_vector(velocity, "velocity")?);
    let settings = Settings {
        model: model_or_default(model.as_ref()),
        gravitation: gravity,
        apparent: apparent_terms(apparent)?,
        tolerances: Tolerances {
            rtol,
            atol,
            max_step: max_step.unwrap_or(f64::INFINITY),
            max_steps: usize::try_from(max_steps).unwrap_or(usize::MAX),
        },
    };
    settings.tolerances.validate().map_err(|e| to_py(&e, ""))?;
    let force = match force.filter(|f| !f.is_none()) {
        None => Force::None,
        Some(f) => match f.cast::<PyDrag>() {
            Ok(d) => Force::Drag(d.get().drag),
            Err(_) if f.is_callable() => Force::Python(f),
            Err(_) => {
                return Err(crate::plumbing::errors::input_type_error(format!(
                    "`force` must be a Drag or a callable force(t, position, velocity), got {}",
                    crate::plumbing::args::describe(f)
                )));
            }
        },
    };
    let stop_fn = stop_fn.filter(|f| !f.is_none());
    if let Some(f) = stop_fn
        && !f.is_callable()
    {
        return Err(crate::plumbing::errors::input_type_error(format!(
            "`stop_fn` must be callable, got {}",
            crate::plumbing::args::describe(f)
        )));
    }
    if let Some(h) = stop_height {
        crate::plumbing::errors::check_finite(&[h], "stop_height")?;
    }
    if stop_fn.is_some() && stop_height.is_some() {
        return Err(RotaframeError::new_err("give `stop_height` or `stop_fn`, not both"));
    }
    let graph_frame: Option<(Bound<'py, PyFrameGraph>, String)> =
        match frame_motion.extract::<(Bound<'py, PyFrameGraph>, String)>() {
            Ok(pair) => Some(pair),
            Err(_) if frame_motion.is_callable() => None,
            Err(_) => {
                return Err(crate::plumbing::errors::input_type_error(format!(
                    "`frame_motion` must be a callable t -> FrameMotion or a pair (FrameGraph, frame name), got {}",
                    crate::plumbing::args::describe(frame_motion)
                )));
            }
        };

    // A Python exception (or a graph error) inside a callback ends the run and is raised as
    // it was; the core sees a placeholder error.
    let raised: std::cell::RefCell<Option<PyErr>> = std::cell::RefCell::new(None);
    let keep = |e: PyErr| -> rotaframe::Error {
        *raised.borrow_mut() = Some(e);
        rotaframe::Error::Invalid { quantity: "callback", reason: "a callback raised an exception" }
    };
    let call_force = |t: f64, r: &Vector3<f64>, v: &Vector3<f64>| -> rotaframe::Result<Vector3<f64>> {
        match force {
            Force::None => Ok(Vector3::zeros()),
            Force::Drag(d) => Ok(d.acceleration(r, v)),
            Force::Python(f) => {
                let out = f.call1((t, vec3(py, r), vec3(py, v))).map_err(&keep)?;
                vector_result(&out, "force")
            }
        }
    };
    let call_stop = |t: f64, r: &Vector3<f64>, v: &Vector3<f64>| -> rotaframe::Result<f64> {
        let Some(f) = stop_fn else { return Ok(1.0) };
        let out = f.call1((t, vec3(py, r), vec3(py, v))).map_err(&keep)?;
        crate::plumbing::args::number(&out, "stop_fn result").map_err(keep)
    };
    let mut steps: Vec<DenseStep<6>> = Vec::new();
    // The dense output is kept whole (for `at`); past its memory cap, or when the allocator
    // refuses, the run stops with a named error instead of exhausting memory.
    let mut kept_all = Ok(());
    let record = |step: &DenseStep<6>| -> rotaframe::Result<()> {
        let stop = rotaframe::Error::Invalid { quantity: "t_span", reason: "the run stopped: its steps cannot be kept" };
        if steps.len() >= MAX_KEPT_STEPS {
            kept_all = Err(StepsNotKept::Cap);
            return Err(stop);
        }
        if steps.try_reserve(1).is_err() {
            kept_all = Err(StepsNotKept::Memory);
            return Err(stop);
        }
        steps.push(*step);
        Ok(())
    };
    let python_callbacks = matches!(force, Force::Python(_)) || stop_fn.is_some();
    let mut local_axes = None;
    let result = match &graph_frame {
        Some((graph, name)) => {
            let state = graph.get().read()?;
            let g = &state.graph;
            if !g.is_inertial() {
                return Err(graph_error(GraphError::NotInertial { root: g.root().to_string() }));
            }
            let frame_id = g.id(name).map_err(graph_error)?;
            let path = g.find_path(0, frame_id).map_err(graph_error)?;
            if path.edges().any(|f| state.functions.iter().any(|(id, _)| *id == f)) {
                return Err(RotaframeError::new_err(format!(
                    "frame {name:?} hangs below a Python function edge, which propagate does not evaluate: give a callable frame_motion instead"
                )));
            }
            local_axes = g.local_axes_of(frame_id);
            let earth = match stop_height {
                Some(_) => Some(g.earth_frame().ok_or_else(|| {
                    RotaframeError::new_err("`stop_height` needs an Earth-fixed frame (one added with add_earth) in the graph")
                })?),
                None => None,
            };
            let run = GraphRun { settings: &settings, graph: g, frame: frame_id, earth, stop_height, span, r0, v0, budget };
            let (out, graph_failure) = match force {
                _ if python_callbacks => run.go(call_force, stop_fn.is_some().then_some(call_stop), record),
                Force::Drag(d) => {
                    py.detach(|| run.go(|_, r: &Vector3<f64>, v: &Vector3<f64>| Ok(d.acceleration(r, v)), None::<NoStop>, record))
                }
                _ => py.detach(|| run.go(|_, _: &Vector3<f64>, _: &Vector3<f64>| Ok(Vector3::zeros()), None::<NoStop>, record)),
            };
            if let Some(e) = graph_failure {
                return Err(graph_error(e));
            }
            out
        }
        None => {
            if stop_height.is_some() {
                return Err(RotaframeError::new_err(
                    "`stop_height` needs the Earth-fixed frame, which a callable frame_motion does not give: pass (FrameGraph, frame name), or use stop_fn",
                ));
            }
            let frame = |t: f64| -> rotaframe::Result<Motion> {
                let out = frame_motion.call1((t,)).map_err(&keep)?;
                let m = out
                    .cast::<PyFrameMotion>()
                    .map_err(|_| rotaframe::Error::Invalid { quantity: "frame_motion", reason: "must return a FrameMotion" })?;
                let m = m.get();
                if m.motions.len() != 1 {
                    return Err(rotaframe::Error::Invalid {
                        quantity: "frame_motion",
                        reason: "must return one motion for a float time",
                    });
                }
                rotaframe::motion::FrameMotion::from_parts(m.motions.get(0).parts())
            };
            rp::propagate(
                &settings,
                frame,
                call_force,
                stop_fn.is_some().then_some(call_stop),
                span.0,
                span.1,
                r0,
                v0,
                budget,
                record,
            )
        }
    };
    if let Some(e) = raised.borrow_mut().take() {
        return Err(e);
    }
    match kept_all {
        Err(StepsNotKept::Cap) => {
            return Err(RotaframeError::new_err(format!(
                "the run took more than {MAX_KEPT_STEPS} steps, whose dense output is propagate's memory cap of {} MiB: raise `max_step`, loosen `rtol`/`atol`, shorten `t_span` or split the run",
                MAX_DENSE_BYTES >> 20
            )));
        }
        Err(StepsNotKept::Memory) => {
            return Err(pyo3::exceptions::PyMemoryError::new_err(format!(
                "propagate: no memory for the dense output after {} steps: raise `max_step`, shorten `t_span` or split the run",
                steps.len()
            )));
        }
        Ok(()) => {}
    }
    // The core's `event` is this function's `stop_height` or `stop_fn`.
    let event_name = if stop_height.is_some() { "stop_height" } else { "stop_fn" };
    let outcome =
        result.map_err(|e| if e.quantity() == "event" { e.with_quantity(event_name) } else { e }).map_err(|e| to_py(&e, ""))?;
    // At an event the last step reaches past the end of the run; `end` bounds its use (its
    // dense output stays that of the whole step).
    let state = |t: f64, r: &Vector3<f64>, v: &Vector3<f64>| [t, r.x, r.y, r.z, v.x, v.y, v.z];
    Ok(PyPropagation {
        steps,
        start: state(span.0, &r0, &v0),
        end: state(outcome.time, &outcome.position, &outcome.velocity),
        event_time: outcome.event_time,
        budget: outcome.budget,
        local_axes,
        evaluations: outcome.evaluations,
    })
}
