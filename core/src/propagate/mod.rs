//! Free-body trajectories seen from a moving frame, and the deflection each apparent term
//! causes.
//!
//! # Equations of motion
//!
//! A point mass moves relative to a frame B (position `r`, velocity `v`, both relative to and
//! resolved in B) whose motion relative to an Earth-centred inertial frame I is known at every
//! time (`M_IB(t)`: rotation `R`, origin `p₀`, and B's rates). Its acceleration relative to B,
//! resolved in B, is Newton's law in I rotated into B plus B's apparent accelerations
//! ([`apparent`](crate::apparent)):
//!
//! ```text
//! a_B = Rᵀ g(p₀ + R r) + f(t, r, v) − a₀ − 2 ω × v − ω × (ω × r) − α × r
//!       └── gravitation ┘  └ user ┘  └transl.┘ └Coriolis┘ └centrifugal┘ └Euler┘
//! ```
//!
//! with `g` the Earth's gravitation at the inertial position (point mass `−GM x/|x|³`, or with
//! `J₂`, [`earth::gravitation_ecef`](crate::earth::gravitation_ecef); both are symmetric about
//! the polar axis, so they apply in I's axes), `f` the user's force per unit mass resolved in
//! B (drag, thrust), and `a₀`, `ω`, `α` B's origin acceleration, angular velocity and angular
//! acceleration relative to I, resolved in B. Each term comes from the existing modules; no
//! formula is written again here. The state `(r, v)` is integrated by DOP853 ([`dop853`]) with
//! dense output; an event (a height above the ellipsoid, or any function of the state) stops
//! the run at its zero crossing, located on the dense output to 1e-9 s.
//!
//! # Deflection budget
//!
//! The displacement caused by apparent term `k` (the difference between the trajectory with
//! all terms and without term `k`) is, to first order, the solution `δ_k` of the variational
//! equations along the trajectory, forced by the term itself:
//!
//! ```text
//! δr' = δv,   δv' = (∂a/∂r) δr + (∂a/∂v) δv + A_k(t, r, v),   δ_k(t₀) = 0
//! ```
//!
//! where `∂a/∂r`, `∂a/∂v` are the Jacobians of the full right-hand side (taken by central
//! differences with steps of 1e-6 of the state's scale; their error is far below the
//! tolerance of the budget). The four `δ_k` are integrated beside the trajectory (a 30-number
//! state) and reported at the end. When an event stops the run, each term also shifts the
//! event's time, by `δt = −∇g·δ / (dg/dt)` for the event function `g(t, r, v)` (gradient by
//! central differences), and the budget is the first-order displacement of the event state,
//! `δ + ẏ δt`: for a height event, where the body lands. Their sum is the first-order part of
//! the difference between runs with and without all apparent terms; the rest is second order
//! in the terms (the tests measure both against full runs).
//!
//! # Checking your own case
//!
//! Propagate the same initial state in the inertial frame (a `frame` that is the identity
//! motion) and map the result back with `M_IB(t)`; it must agree with the run in B to the
//! integration tolerance ([`map_from_inertial`] does the mapping).
//!
//! Not certified for safety-of-life, range-safety or weapons use: defer to the standards and
//! licensed practice that apply to you.

pub mod dop853;
mod dop853_tables;
pub mod drag;

use nalgebra::Vector3;

use crate::apparent::{ApparentAcceleration, FrameDynamics, apparent_terms};
use crate::earth::EarthModel;
use crate::error::{Error, Result};
use crate::frames::{AnyFrame, PointKinematics};
use crate::limits;
use crate::motion::FrameMotion;
pub use dop853::{Control, DenseStep, Summary, Tolerances, locate_root};
pub use drag::{AirDensity, Drag};

/// A motion between frames tracked at run time.
pub type Motion = FrameMotion<AnyFrame, AnyFrame>;

/// The gravitation acting on the body.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Gravitation {
    /// None (a laboratory frame, a rate table in free space).
    None,
    /// The Earth's point mass: `−GM x/|x|³`.
    #[default]
    PointMass,
    /// The Earth's point mass and its J₂ term.
    J2,
}

/// Which apparent terms enter the equations of motion (all, unless a study removes one).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ApparentTerms {
    /// `−a₀`.
    pub translational: bool,
    /// `−2 ω × v`.
    pub coriolis: bool,
    /// `−ω × (ω × r)`.
    pub centrifugal: bool,
    /// `−α × r`.
    pub euler: bool,
}

impl Default for ApparentTerms {
    fn default() -> Self {
        Self::ALL
    }
}

impl ApparentTerms {
    /// Every term.
    pub const ALL: Self = Self { translational: true, coriolis: true, centrifugal: true, euler: true };
    /// No apparent term (the body moves as if the frame were inertial).
    pub const NONE: Self = Self { translational: false, coriolis: false, centrifugal: false, euler: false };

    fn sum(&self, t: &ApparentAcceleration<AnyFrame>) -> Vector3<f64> {
        let pick = |on: bool, v: Vector3<f64>| if on { v } else { Vector3::zeros() };
        pick(self.translational, t.translational)
            + pick(self.coriolis, t.coriolis)
            + pick(self.centrifugal, t.centrifugal)
            + pick(self.euler, t.euler)
    }
}

/// Settings of a propagation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// The Earth model (GM, J₂).
    pub model: EarthModel,
    /// The gravitation.
    pub gravitation: Gravitation,
    /// The apparent terms in the equations of motion.
    pub apparent: ApparentTerms,
    /// Tolerances and limits of the integrator.
    pub tolerances: Tolerances,
}

impl Default for Settings {
    /// WGS 84, point-mass gravitation, every apparent term, the integrator's default tolerances.
    fn default() -> Self {
        Self {
            model: crate::earth::WGS84,
            gravitation: Gravitation::PointMass,
            apparent: ApparentTerms::ALL,
            tolerances: Tolerances::default(),
        }
    }
}

/// The first-order displacement and velocity change each apparent term causes, resolved in
/// the propagation frame (m, m/s), at the end of the run.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DeflectionBudget {
    /// Caused by the translational term.
    pub translational: [Vector3<f64>; 2],
    /// Caused by the Coriolis term.
    pub coriolis: [Vector3<f64>; 2],
    /// Caused by the centrifugal term.
    pub centrifugal: [Vector3<f64>; 2],
    /// Caused by the Euler term.
    pub euler: [Vector3<f64>; 2],
}

impl DeflectionBudget {
    /// The four displacements summed (the first-order effect of all apparent terms).
    #[must_use]
    pub fn total_displacement(&self) -> Vector3<f64> {
        self.translational[0] + self.coriolis[0] + self.centrifugal[0] + self.euler[0]
    }

    /// The same budget resolved in other axes: every vector multiplied by `rotation` (which
    /// maps the propagation frame's coordinates to the new axes; for a local-level ENU frame,
    /// [`ENU_FROM_NED`](crate::earth::ENU_FROM_NED) gives north/east/down).
    ///
    /// ```
    /// use nalgebra::{Matrix3, Vector3};
    /// use rotaframe::earth::ENU_FROM_NED;
    /// use rotaframe::propagate::DeflectionBudget;
    /// let mut enu = DeflectionBudget::default();
    /// enu.coriolis[0] = Vector3::new(0.2, 0.0, 0.0); // 0.2 m east
    /// let ned = enu.resolved_in(&ENU_FROM_NED);
    /// assert_eq!(ned.coriolis[0], Vector3::new(0.0, 0.2, 0.0));
    /// ```
    #[must_use]
    pub fn resolved_in(&self, rotation: &nalgebra::Matrix3<f64>) -> Self {
        let turn = |pair: [Vector3<f64>; 2]| pair.map(|v| rotation * v);
        Self {
            translational: turn(self.translational),
            coriolis: turn(self.coriolis),
            centrifugal: turn(self.centrifugal),
            euler: turn(self.euler),
        }
    }
}

/// How a propagation ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome {
    /// Time reached (s): the end of the span, or the event.
    pub time: f64,
    /// Position relative to the frame at `time` (m).
    pub position: Vector3<f64>,
    /// Velocity relative to the frame at `time` (m/s).
    pub velocity: Vector3<f64>,
    /// The event's time, if an event stopped the run.
    pub event_time: Option<f64>,
    /// Accepted integration steps.
    pub steps: usize,
    /// Right-hand-side evaluations.
    pub evaluations: usize,
    /// The deflection budget, if asked for.
    pub budget: Option<DeflectionBudget>,
}

/// The acceleration of the body relative to frame B (resolved in B) and B's apparent terms at
/// the body, from B's motion relative to the inertial frame.
///
/// # Errors
/// Any error of the user force, or of the gravitation (the body inside the Earth's core).
#[inline]
pub fn acceleration(
    settings: &Settings,
    frame: &Motion,
    position: &Vector3<f64>,
    velocity: &Vector3<f64>,
    force: &Vector3<f64>,
) -> Result<(Vector3<f64>, ApparentAcceleration<AnyFrame>)> {
    let inertial = frame.position() + frame.rotation() * position;
    let g = match settings.gravitation {
        Gravitation::None => Vector3::zeros(),
        Gravitation::PointMass => crate::earth::point_mass_gravitation(&settings.model, &inertial)?,
        Gravitation::J2 => crate::earth::gravitation_ecef(&settings.model, &inertial).map_err(|e| e.with_quantity("position"))?,
    };
    let dynamics = FrameDynamics::of_motion(&frame.assume_frames::<crate::frames::Eci, AnyFrame>());
    let terms = apparent_terms(&dynamics, position, velocity);
    let a = frame.rotation().inverse() * g + force + settings.apparent.sum(&terms);
    Ok((a, terms))
}

/// Maps a point relative to the inertial frame (resolved in it) into frame B at a time with
/// B's motion `frame` relative to the inertial frame: `(r_B, v_B)`.
#[must_use]
pub fn map_from_inertial(frame: &Motion, position: &Vector3<f64>, velocity: &Vector3<f64>) -> (Vector3<f64>, Vector3<f64>) {
    let p = frame.inverse().map_point(&PointKinematics::new(*position, *velocity, Vector3::zeros()));
    (p.position, p.velocity)
}

/// The ellipsoidal height (m) of a point at `position` in frame B, given B's motion relative
/// to the Earth-fixed frame (for height events).
///
/// # Errors
/// As [`ecef_to_geodetic`](crate::earth::ecef_to_geodetic).
pub fn height_in(model: &EarthModel, frame_in_ecef: &Motion, position: &Vector3<f64>) -> Result<f64> {
    let p = frame_in_ecef.map_point(&PointKinematics::at_rest(*position)).position;
    Ok(crate::earth::ecef_to_geodetic(model, &p).map_err(|e| e.with_quantity("position"))?.height)
}

/// The state's first six numbers: position and velocity.
#[inline(always)]
fn split(y: &[f64]) -> (Vector3<f64>, Vector3<f64>) {
    (Vector3::new(y[0], y[1], y[2]), Vector3::new(y[3], y[4], y[5]))
}

/// Propagates a body from `(position, velocity)` relative to frame B at `t0` to `t1`.
///
/// * `frame(t)`: B's motion relative to an inertial frame whose origin is the Earth's centre;
/// * `force(t, r, v)`: the user's force per unit mass, resolved in B (zero for a free body);
/// * `event(t, r, v)`: stops the run where it crosses zero (`None` for no event);
/// * `budget`: also integrate the variational equations of the four apparent terms;
/// * `on_step(step)`: sees every accepted step with its dense output over `(r, v)`.
///
/// # Errors
/// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming `position` or `velocity`; as
/// [`dop853::integrate`] (the step limit, a time span of zero); [`Error::NonFinite`] or
/// [`Error::BeyondLimit`] naming `force`; any error of `frame`, `force`, `event` or `on_step`.
#[allow(clippy::too_many_arguments)]
pub fn propagate<M, F, E>(
    settings: &Settings,
    mut frame: M,
    mut force: F,
    mut event: Option<E>,
    t0: f64,
    t1: f64,
    position: Vector3<f64>,
    velocity: Vector3<f64>,
    budget: bool,
    mut on_step: impl FnMut(&DenseStep<6>) -> Result<()>,
) -> Result<Outcome>
where
    M: FnMut(f64) -> Result<Motion>,
    F: FnMut(f64, &Vector3<f64>, &Vector3<f64>) -> Result<Vector3<f64>>,
    E: FnMut(f64, &Vector3<f64>, &Vector3<f64>) -> Result<f64>,
{
    limits::check_vector(&position, limits::MAX_POSITION, "m", "position")?;
    limits::check_vector(&velocity, limits::MAX_VELOCITY, "m/s", "velocity")?;
    let mut y0 = [0.0; 6];
    y0[..3].copy_from_slice(position.as_slice());
    y0[3..].copy_from_slice(velocity.as_slice());
    // The acceleration and apparent terms at a state, with the frame's motion already known.
    let mut accel =
        |t: f64, m: &Motion, r: &Vector3<f64>, v: &Vector3<f64>| -> Result<(Vector3<f64>, ApparentAcceleration<AnyFrame>)> {
            limits::check_vector(r, limits::MAX_POSITION, "m", "position")?;
            limits::check_vector(v, limits::MAX_VELOCITY, "m/s", "velocity")?;
            let user = force(t, r, v)?;
            limits::check_vector(&user, limits::MAX_ACCELERATION, "m/s²", "force")?;
            acceleration(settings, m, r, v, &user)
        };
    if !budget {
        let rhs = |t: f64, y: &[f64; 6]| -> Result<[f64; 6]> {
            let (r, v) = split(y);
            let (a, _) = accel(t, &frame(t)?, &r, &v)?;
            Ok([v.x, v.y, v.z, a.x, a.y, a.z])
        };
        let (time, state, event_time, summary) = drive(rhs, y0, t0, t1, &settings.tolerances, &mut event, &mut on_step)?;
        return Ok(outcome(time, &state, event_time, &summary, None));
    }
    let mut y = [0.0; 30];
    y[..6].copy_from_slice(&y0);
    let apparent = settings.apparent;
    let rhs = |t: f64, y: &[f64; 30]| -> Result<[f64; 30]> {
        let (r, v) = split(y);
        let m = frame(t)?;
        let (a, terms) = accel(t, &m, &r, &v)?;
        // Jacobians of the full acceleration by central differences (steps 1e-6 of the scale,
        // at least 1 mm and 1 mm/s).
        let (hr, hv) = (1e-6 * r.norm().max(1e3), 1e-6 * v.norm().max(1e3));
        let mut jr = nalgebra::Matrix3::zeros();
        let mut jv = nalgebra::Matrix3::zeros();
        for axis in 0..3 {
            let mut e = Vector3::zeros();
            e[axis] = hr;
            let (ap, _) = accel(t, &m, &(r + e), &v)?;
            let (am, _) = accel(t, &m, &(r - e), &v)?;
            jr.set_column(axis, &((ap - am) / (2.0 * hr)));
            e[axis] = hv;
            let (ap, _) = accel(t, &m, &r, &(v + e))?;
            let (am, _) = accel(t, &m, &r, &(v - e))?;
            jv.set_column(axis, &((ap - am) / (2.0 * hv)));
        }
        let mut out = [0.0; 30];
        out[..6].copy_from_slice(&[v.x, v.y, v.z, a.x, a.y, a.z]);
        let forcing = [
            (apparent.translational, terms.translational),
            (apparent.coriolis, terms.coriolis),
            (apparent.centrifugal, terms.centrifugal),
            (apparent.euler, terms.euler),
        ];
        for (k, (on, term)) in forcing.iter().enumerate() {
            let (dr, dv) = split(&y[6 + 6 * k..12 + 6 * k]);
            let ddv = jr * dr + jv * dv + if *on { *term } else { Vector3::zeros() };
            out[6 + 6 * k..12 + 6 * k].copy_from_slice(&[dv.x, dv.y, dv.z, ddv.x, ddv.y, ddv.z]);
        }
        Ok(out)
    };
    let mut rhs = rhs;
    let (time, state, event_time, summary) = drive(&mut rhs, y, t0, t1, &settings.tolerances, &mut event, &mut on_step)?;
    let rate = rhs(time, &state)?;
    // At an event, each term also moves the event's time: δt = −∇g·δ / (dg/dt), and the
    // event state moves by δ + ẏ δt (first order).
    let gradient = match (event_time, event.as_mut()) {
        (Some(_), Some(g)) => event_gradient(g, time, &state, &rate)?,
        _ => None,
    };
    let part = |k: usize| {
        let (mut dr, mut dv) = split(&state[6 + 6 * k..12 + 6 * k]);
        if let Some((grad_r, grad_v, g_dot)) = gradient {
            let shift = -(grad_r.dot(&dr) + grad_v.dot(&dv)) / g_dot;
            dr += Vector3::new(rate[0], rate[1], rate[2]) * shift;
            dv += Vector3::new(rate[3], rate[4], rate[5]) * shift;
        }
        [dr, dv]
    };
    let budget = DeflectionBudget { translational: part(0), coriolis: part(1), centrifugal: part(2), euler: part(3) };
    Ok(outcome(time, &state, event_time, &summary, Some(budget)))
}

/// The outcome of a run from its end state (whose first six numbers are position and
/// velocity).
fn outcome<const N: usize>(
    time: f64,
    state: &[f64; N],
    event_time: Option<f64>,
    summary: &Summary<N>,
    budget: Option<DeflectionBudget>,
) -> Outcome {
    let (position, velocity) = split(state);
    Outcome { time, position, velocity, event_time, steps: summary.accepted, evaluations: summary.evaluations, budget }
}

/// The event function's gradient at the event state, `(∂g/∂r, ∂g/∂v, dg/dt)`, by central
/// differences (steps of 1e-7 of the state's scale; `g` is smooth near a located crossing),
/// `None` where the trajectory grazes the event surface (`dg/dt` zero or not finite).
#[allow(clippy::type_complexity)]
fn event_gradient<const N: usize, E>(
    g: &mut E,
    t: f64,
    state: &[f64; N],
    rate: &[f64; N],
) -> Result<Option<(Vector3<f64>, Vector3<f64>, f64)>>
where
    E: FnMut(f64, &Vector3<f64>, &Vector3<f64>) -> Result<f64>,
{
    let (r, v) = split(state);
    let (hr, hv) = (1e-7 * r.norm().max(1.0), 1e-7 * v.norm().max(1.0));
    let ht = 1e-7 * t.abs().max(1.0);
    let mut grad_r = Vector3::zeros();
    let mut grad_v = Vector3::zeros();
    for axis in 0..3 {
        let mut e = Vector3::zeros();
        e[axis] = hr;
        grad_r[axis] = (g(t, &(r + e), &v)? - g(t, &(r - e), &v)?) / (2.0 * hr);
        e[axis] = hv;
        grad_v[axis] = (g(t, &r, &(v + e))? - g(t, &r, &(v - e))?) / (2.0 * hv);
    }
    let partial_t = (g(t + ht, &r, &v)? - g(t - ht, &r, &v)?) / (2.0 * ht);
    let (rate_r, rate_v) = split(rate);
    let g_dot = partial_t + grad_r.dot(&rate_r) + grad_v.dot(&rate_v);
    Ok((g_dot != 0.0 && g_dot.is_finite()).then_some((grad_r, grad_v, g_dot)))
}

/// Integrates and watches the event: `(time reached, state there, event time, summary)`. The
/// event sees the first six numbers of the state; at a zero crossing the run stops and the
/// state is the dense output at the crossing.
#[allow(clippy::type_complexity)]
fn drive<const N: usize, E>(
    rhs: impl FnMut(f64, &[f64; N]) -> Result<[f64; N]>,
    y0: [f64; N],
    t0: f64,
    t1: f64,
    tolerances: &Tolerances,
    event: &mut Option<E>,
    on_step: &mut impl FnMut(&DenseStep<6>) -> Result<()>,
) -> Result<(f64, [f64; N], Option<f64>, Summary<N>)>
where
    E: FnMut(f64, &Vector3<f64>, &Vector3<f64>) -> Result<f64>,
{
    let mut previous: Option<f64> = None;
    let mut stop: Option<(f64, [f64; N])> = None;
    let summary = dop853::integrate(rhs, t0, y0, t1, tolerances, |step| {
        on_step(&step.head::<6>())?;
        let Some(g) = event.as_mut() else { return Ok(Control::Continue) };
        let mut value = |t: f64| -> Result<f64> {
            let (r, v) = split(&step.at(t));
            let x = g(t, &r, &v)?;
            if x.is_finite() { Ok(x) } else { Err(Error::NonFinite { quantity: "event" }) }
        };
        let g0 = match previous {
            Some(x) => x,
            None => value(step.t0)?,
        };
        let g1 = value(step.t1)?;
        previous = Some(g1);
        let crossed = g1 == 0.0 || (g0 != 0.0 && (g0 < 0.0) != (g1 < 0.0));
        if !crossed {
            return Ok(Control::Continue);
        }
        let root = if g1 == 0.0 { step.t1 } else { locate_root(&mut value, step.t0, step.t1, g0, g1, 1e-9)? };
        stop = Some((root, step.at(root)));
        Ok(Control::Stop)
    })?;
    Ok(match stop {
        Some((t, y)) => (t, y, Some(t), summary),
        None => (summary.t, summary.y, None, summary),
    })
}
