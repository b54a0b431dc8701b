//! `rf_propagate`: free-body trajectories in moving frames (the core's `propagate` module),
//! with the frame's motion, the force and the stopping event given by callbacks, and the
//! built-in drag force `rf_drag_force`. Conversion, validation and error mapping only.

use core::cell::Cell;
use core::ffi::c_void;

use rotaframe::nalgebra::Vector3;
use rotaframe::propagate::{self as rp, AirDensity, ApparentTerms, DenseStep, Drag, Gravitation, Motion, Settings, Tolerances};

use crate::graph::rf_edge_motion_fn;
use crate::status::{
    Fallible, RF_STATUS_INVALID_ARGUMENT, RF_STATUS_NULL_POINTER, RF_STATUS_OK, boundary, disjoint, out, read, region, rf_status,
    slice_mut,
};
use crate::types::{rf_earth_model, rf_frame_motion, rf_vec3};

/// The gravitation of a propagation. Zero (the default of a zero-initialised config) is the
/// Earth's point mass.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_gravitation {
    /// `−GM x/|x|³`.
    RF_GRAVITATION_POINT_MASS = 0,
    /// Point mass and the J₂ term.
    RF_GRAVITATION_J2 = 1,
    /// None (a laboratory frame, free space).
    RF_GRAVITATION_NONE = 2,
}

crate::enums::c_enum!(rf_gravitation { RF_GRAVITATION_POINT_MASS, RF_GRAVITATION_J2, RF_GRAVITATION_NONE });

/// Bits of `rf_propagate_config.omit_terms`: apparent terms left out of the equations of
/// motion (for with/without studies). Zero keeps them all.
pub const RF_OMIT_TRANSLATIONAL: u32 = 1;
/// Leave out the Coriolis term.
pub const RF_OMIT_CORIOLIS: u32 = 2;
/// Leave out the centrifugal term.
pub const RF_OMIT_CENTRIFUGAL: u32 = 4;
/// Leave out the Euler term.
pub const RF_OMIT_EULER: u32 = 8;

/// Settings of `rf_propagate`. Zero-initialised (`= {0}`): WGS 84, point-mass gravitation,
/// every apparent term, rtol 1e-10, atol 1e-9, no step bound, at most a million steps, no
/// budget.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_propagate_config {
    /// Earth model (all zero: WGS 84).
    pub model: rf_earth_model,
    /// An `rf_gravitation` value.
    pub gravitation: u32,
    /// `RF_OMIT_*` bits: apparent terms to leave out.
    pub omit_terms: u32,
    /// Relative tolerance (0: 1e-10).
    pub rtol: f64,
    /// Absolute tolerance in m and m/s (0: 1e-9).
    pub atol: f64,
    /// Largest step (s; 0: none).
    pub max_step: f64,
    /// Most integration steps before `RF_STATUS_INVALID_ARGUMENT` (0: 1 000 000).
    pub max_steps: u64,
    /// Nonzero: also integrate the deflection budget of the four apparent terms.
    pub budget: u32,
}

/// The user's force per unit mass on the body at `time`, `position[3]`, `velocity[3]`
/// (relative to and resolved in the propagation frame), written to `out_force[3]` (m/s²).
/// Return `RF_STATUS_OK`, or any other status to abort the run with it.
pub type rf_force_fn = Option<
    unsafe extern "C" fn(
        context: *mut c_void,
        time: f64,
        position: *const f64,
        velocity: *const f64,
        out_force: *mut f64,
    ) -> rf_status,
>;

/// A stopping function of the state: the run ends where the value written to `out_value`
/// crosses zero (located to 1e-9 s on the dense output).
pub type rf_event_fn = Option<
    unsafe extern "C" fn(
        context: *mut c_void,
        time: f64,
        position: *const f64,
        velocity: *const f64,
        out_value: *mut f64,
    ) -> rf_status,
>;

/// A state of the body at a time: position (m) and velocity (m/s) relative to and resolved in
/// the propagation frame.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_propagated_state {
    /// Time (s).
    pub time: f64,
    /// Position (m).
    pub position: rf_vec3,
    /// Velocity (m/s).
    pub velocity: rf_vec3,
}

/// The first-order displacement (m) and velocity change (m/s) each apparent term caused by
/// the end of a run, resolved in the propagation frame.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_deflection_budget {
    /// Displacement caused by the translational term.
    pub translational: rf_vec3,
    /// Displacement caused by the Coriolis term.
    pub coriolis: rf_vec3,
    /// Displacement caused by the centrifugal term.
    pub centrifugal: rf_vec3,
    /// Displacement caused by the Euler term.
    pub euler: rf_vec3,
    /// Velocity change caused by the translational term.
    pub translational_velocity: rf_vec3,
    /// Velocity change caused by the Coriolis term.
    pub coriolis_velocity: rf_vec3,
    /// Velocity change caused by the centrifugal term.
    pub centrifugal_velocity: rf_vec3,
    /// Velocity change caused by the Euler term.
    pub euler_velocity: rf_vec3,
}

/// How a propagation ended.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_propagation_result {
    /// The end state: at the end of the span, or at the event.
    pub end: rf_propagated_state,
    /// Nonzero when the event stopped the run (at `end.time`).
    pub event_found: u32,
    /// Accepted integration steps; the trajectory has `steps + 1` states.
    pub steps: u64,
    /// Right-hand-side evaluations.
    pub evaluations: u64,
    /// The deflection budget (zero unless the config asked for it).
    pub budget: rf_deflection_budget,
}

/// Quadratic aerodynamic drag for `rf_drag_force`: ballistic coefficient `m / (C_D A)`
/// (kg/m²), air `density` (kg/m³; at the frame's origin when `scale_height` > 0, for the
/// exponential atmosphere `density · exp(−(up · r) / scale_height)`, `up` the upward
/// direction in the propagation frame), `wind` the air's velocity relative to the frame (m/s).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_drag {
    /// Ballistic coefficient (kg/m²).
    pub ballistic_coefficient: f64,
    /// Air density (kg/m³).
    pub density: f64,
    /// Scale height (m); 0 for a constant density.
    pub scale_height: f64,
    /// Upward direction (used with a scale height).
    pub up: rf_vec3,
    /// Wind (m/s).
    pub wind: rf_vec3,
}

impl rf_drag {
    fn to_core(self) -> Fallible<Drag> {
        let density = if self.scale_height == 0.0 {
            AirDensity::Constant(self.density)
        } else {
            AirDensity::Exponential { at_origin: self.density, scale_height: self.scale_height, up: self.up.into() }
        };
        Ok(Drag::new(self.ballistic_coefficient, density, self.wind.into())?)
    }
}

/// The drag acceleration of the `rf_drag` at `context` on a body at `position[3]` moving at
/// `velocity[3]`, written to `out_force[3]` (m/s²). Its signature is `rf_force_fn`'s: pass it
/// to `rf_propagate` with a pointer to an `rf_drag` as the force context.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_drag_force(
    context: *mut c_void,
    _time: f64,
    position: *const f64,
    velocity: *const f64,
    out_force: *mut f64,
) -> rf_status {
    boundary(|| {
        let drag = unsafe { read(context.cast::<rf_drag>().cast_const()) }?.to_core()?;
        let (r, v) = unsafe { (read_vec3(position)?, read_vec3(velocity)?) };
        let out_force = unsafe { out(out_force.cast::<[f64; 3]>()) }?;
        let f = drag.acceleration(&r, &v);
        *out_force = [f.x, f.y, f.z];
        Ok(())
    })
}

/// Reads three doubles.
unsafe fn read_vec3(p: *const f64) -> Fallible<Vector3<f64>> {
    let v = unsafe { read(p.cast::<[f64; 3]>()) }?;
    Ok(Vector3::new(v[0], v[1], v[2]))
}

impl rf_propagate_config {
    fn to_core(self) -> Fallible<(Settings, bool)> {
        let gravitation = match rf_gravitation::from_u32(self.gravitation).ok_or(RF_STATUS_INVALID_ARGUMENT)? {
            rf_gravitation::RF_GRAVITATION_POINT_MASS => Gravitation::PointMass,
            rf_gravitation::RF_GRAVITATION_J2 => Gravitation::J2,
            rf_gravitation::RF_GRAVITATION_NONE => Gravitation::None,
        };
        if self.omit_terms & !15 != 0 {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        let keep = |bit: u32| self.omit_terms & bit == 0;
        let apparent = ApparentTerms {
            translational: keep(RF_OMIT_TRANSLATIONAL),
            coriolis: keep(RF_OMIT_CORIOLIS),
            centrifugal: keep(RF_OMIT_CENTRIFUGAL),
            euler: keep(RF_OMIT_EULER),
        };
        let or = |value: f64, default: f64| if value == 0.0 { default } else { value };
        let defaults = Tolerances::default();
        let tolerances = Tolerances {
            rtol: or(self.rtol, defaults.rtol),
            atol: or(self.atol, defaults.atol),
            max_step: or(self.max_step, f64::INFINITY),
            max_steps: if self.max_steps == 0 {
                defaults.max_steps
            } else {
                usize::try_from(self.max_steps).unwrap_or(usize::MAX)
            },
        };
        tolerances.validate()?;
        Ok((Settings { model: self.model.to_core()?, gravitation, apparent, tolerances }, self.budget != 0))
    }
}

/// The callbacks of one run, with the first failing status they returned.
struct Callbacks {
    frame: unsafe extern "C" fn(*mut c_void, f64, *mut rf_frame_motion) -> rf_status,
    frame_context: *mut c_void,
    force: rf_force_fn,
    force_context: *mut c_void,
    event: rf_event_fn,
    event_context: *mut c_void,
    failure: Cell<Option<rf_status>>,
}

impl Callbacks {
    /// A callback's status as a core error (kept, so the run returns it).
    fn fail(&self, status: rf_status) -> rotaframe::Error {
        if self.failure.get().is_none() {
            self.failure.set(Some(status));
        }
        rotaframe::Error::Invalid { quantity: "callback", reason: "a callback returned an error status" }
    }

    fn frame(&self, time: f64) -> rotaframe::Result<Motion> {
        let mut m = rf_frame_motion::default();
        // SAFETY: the caller registered the callback with this context and vouches for both.
        let status = unsafe { (self.frame)(self.frame_context, time, &mut m) };
        if status != RF_STATUS_OK {
            return Err(self.fail(status));
        }
        m.to_core().map_err(|s| self.fail(s))
    }

    fn force(&self, time: f64, r: &Vector3<f64>, v: &Vector3<f64>) -> rotaframe::Result<Vector3<f64>> {
        let Some(f) = self.force else { return Ok(Vector3::zeros()) };
        let mut out = [0.0; 3];
        // SAFETY: as for the frame callback; the arrays live across the call.
        let status = unsafe { f(self.force_context, time, r.as_ptr(), v.as_ptr(), out.as_mut_ptr()) };
        if status != RF_STATUS_OK {
            return Err(self.fail(status));
        }
        Ok(Vector3::new(out[0], out[1], out[2]))
    }

    fn event(&self, time: f64, r: &Vector3<f64>, v: &Vector3<f64>) -> rotaframe::Result<f64> {
        let Some(f) = self.event else { return Ok(1.0) };
        let mut out = 0.0;
        // SAFETY: as for the frame callback.
        let status = unsafe { f(self.event_context, time, r.as_ptr(), v.as_ptr(), &mut out) };
        if status != RF_STATUS_OK {
            return Err(self.fail(status));
        }
        Ok(out)
    }
}

/// Propagates a body from `position`, `velocity` (relative to and resolved in the propagation
/// frame B) at `t0` to `t1` (> `t0`, s).
///
/// * `frame_motion(frame_context, t, out)`: B's motion relative to an inertial frame whose
///   origin is the Earth's centre (the callback type of a graph function edge; a graph query
///   such as `rf_graph_motion` inside it gives a graph frame);
/// * `force` (may be NULL: no force): the user's force per unit mass; `rf_drag_force` with an
///   `rf_drag` context is built in;
/// * `event` (may be NULL: no event): stops the run where its value crosses zero.
///
/// The trajectory (the start, then the end of each accepted step, the event state last) goes
/// to `out_states` when it is not NULL: `capacity` states at most, the count to `out_count`
/// (may be NULL). Without `out_states` only `out_result` is written; its `steps + 1` is the
/// count a second call needs. When states are written the run is made twice (once to check,
/// once to write), so the callbacks must give the same answers at the same arguments (should
/// one fail only on the second run, the states written before it stay written).
///
/// Errors: `RF_STATUS_INVALID_ARGUMENT` for the step limit, a bad config or a `capacity` too
/// small; `RF_STATUS_NOT_POSITIVE` for `t1 ≤ t0`; `RF_STATUS_NON_FINITE` /
/// `RF_STATUS_OUT_OF_RANGE` for a non-finite or out-of-range state or force; a callback's own
/// status when it returns one. Nothing is written on error.
///
/// Not certified for safety-of-life, range-safety or weapons use.
#[unsafe(no_mangle)]
#[allow(clippy::too_many_arguments)]
pub unsafe extern "C" fn rf_propagate(
    config: *const rf_propagate_config,
    frame_motion: rf_edge_motion_fn,
    frame_context: *mut c_void,
    force: rf_force_fn,
    force_context: *mut c_void,
    event: rf_event_fn,
    event_context: *mut c_void,
    t0: f64,
    t1: f64,
    position: *const rf_vec3,
    velocity: *const rf_vec3,
    out_states: *mut rf_propagated_state,
    capacity: usize,
    out_count: *mut usize,
    out_result: *mut rf_propagation_result,
) -> rf_status {
    boundary(|| {
        let (settings, budget) = unsafe { read(config) }?.to_core()?;
        let frame = frame_motion.ok_or(RF_STATUS_NULL_POINTER)?;
        let (r0, v0): (Vector3<f64>, Vector3<f64>) = (unsafe { read(position) }?.into(), unsafe { read(velocity) }?.into());
        // Every output (the states, the count, the result) apart from the inputs and from
        // each other, checked on the addresses before any reference to them is formed.
        let outputs = [
            region(out_states.cast_const(), if out_states.is_null() { 0 } else { capacity }),
            region(out_count.cast_const(), usize::from(!out_count.is_null())),
            region(out_result.cast_const(), 1),
        ];
        let inputs = [region(config, 1), region(position, 1), region(velocity, 1)];
        for (k, &o) in outputs.iter().enumerate() {
            disjoint(o, &inputs)?;
            disjoint(o, &outputs[k + 1..])?;
        }
        let out_result = unsafe { out(out_result) }?;
        let out_count = unsafe { out_count.as_mut() };
        let callbacks = Callbacks { frame, frame_context, force, force_context, event, event_context, failure: Cell::new(None) };
        let run = |on_step: &mut dyn FnMut(&DenseStep<6>)| -> Fallible<rp::Outcome> {
            callbacks.failure.set(None);
            let result = rp::propagate(
                &settings,
                |t| callbacks.frame(t),
                |t, r: &Vector3<f64>, v: &Vector3<f64>| callbacks.force(t, r, v),
                event.is_some().then_some(|t, r: &Vector3<f64>, v: &Vector3<f64>| callbacks.event(t, r, v)),
                t0,
                t1,
                r0,
                v0,
                budget,
                |step| {
                    on_step(step);
                    Ok(())
                },
            );
            match (result, callbacks.failure.get()) {
                (Err(_), Some(status)) => Err(status),
                (Err(e), None) => Err(e.into()),
                (Ok(outcome), _) => Ok(outcome),
            }
        };
        let outcome = run(&mut |_| {})?;
        let count = outcome.steps.saturating_add(1);
        if !out_states.is_null() {
            if count > capacity {
                return Err(RF_STATUS_INVALID_ARGUMENT);
            }
            let states = unsafe { slice_mut(out_states, capacity) }?;
            let state = |time: f64, y: &[f64; 6]| rf_propagated_state {
                time,
                position: rf_vec3 { x: y[0], y: y[1], z: y[2] },
                velocity: rf_vec3 { x: y[3], y: y[4], z: y[5] },
            };
            // The second run writes straight into the caller's array, which the first run
            // proved large enough.
            let mut written = 0;
            let second = run(&mut |step| {
                if written == 0 {
                    states[0] = state(step.t0, &step.y0);
                    written = 1;
                }
                if written < capacity {
                    states[written] = state(step.t1, &step.y1);
                    written += 1;
                }
            })?;
            if second.steps != outcome.steps {
                // The callbacks answered differently the second time.
                return Err(RF_STATUS_INVALID_ARGUMENT);
            }
            if written == 0 {
                states[0] = state(t0, &[r0.x, r0.y, r0.z, v0.x, v0.y, v0.z]);
                written = 1;
            }
            // At an event the last step's end is the event state.
            let end = [
                outcome.position.x,
                outcome.position.y,
                outcome.position.z,
                outcome.velocity.x,
                outcome.velocity.y,
                outcome.velocity.z,
            ];
            states[written - 1] = state(outcome.time, &end);
        }
        let budget = outcome.budget.unwrap_or_default();
        *out_result = rf_propagation_result {
            end: rf_propagated_state { time: outcome.time, position: outcome.position.into(), velocity: outcome.velocity.into() },
            event_found: u32::from(outcome.event_time.is_some()),
            steps: outcome.steps as u64,
            evaluations: outcome.evaluations as u64,
            budget: rf_deflection_budget {
                translational: budget.translational[0].into(),
                coriolis: budget.coriolis[0].into(),
                centrifugal: budget.centrifugal[0].into(),
                euler: budget.euler[0].into(),
                translational_velocity: budget.translational[1].into(),
                coriolis_velocity: budget.coriolis[1].into(),
                centrifugal_velocity: budget.centrifugal[1].into(),
                euler_velocity: budget.euler[1].into(),
            },
        };
        if let Some(n) = out_count {
            *n = if out_states.is_null() { 0 } else { count };
        }
        Ok(())
    })
}
