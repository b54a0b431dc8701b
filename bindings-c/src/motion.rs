//! Frame motions, point mapping and apparent accelerations.

use rotaframe::apparent::{FrameDynamics, apparent_acceleration, apparent_terms};
use rotaframe::frames::{AnyFrame, FreeVector};
use rotaframe::motion::FrameMotion;

use rotaframe::limits::{MAX_ACCELERATION, MAX_ANGULAR_ACCELERATION, MAX_ANGULAR_VELOCITY, MAX_POSITION, MAX_VELOCITY, within};

use crate::status::{boundary, disjoint, distinct_outputs, out, read, region, rf_status, slice, slice_mut};
use crate::types::{rf_apparent_terms, rf_frame_motion, rf_point_kinematics, rf_vec3};

rotaframe::frame!(
    /// The inertial parent of a motion passed to `rf_apparent_of_motion` (the caller vouches).
    Inertial: inertial
);

/// Writes the identity motion (child coincides with parent, at rest).
///
/// Returns `RF_STATUS_NULL_POINTER` if `out_motion` is NULL.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_identity(out_motion: *mut rf_frame_motion) -> rf_status {
    boundary(|| {
        *unsafe { out(out_motion) }? = (&FrameMotion::<AnyFrame, AnyFrame>::identity()).into();
        Ok(())
    })
}

/// Rotation about a fixed axis through the parent's origin: the child is the parent turned by
/// `angle` (rad) about `axis` (normalised here), turning at `angular_rate` (rad/s) and speeding
/// up at `angular_acceleration` (rad/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_about_axis(
    axis: *const rf_vec3,
    angle: f64,
    angular_rate: f64,
    angular_acceleration: f64,
    out_motion: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let axis = unsafe { read(axis) }?;
        let out_motion = unsafe { out(out_motion) }?;
        let m = FrameMotion::<AnyFrame, AnyFrame>::about_axis(axis.into(), angle, angular_rate, angular_acceleration)?;
        *out_motion = (&m).into();
        Ok(())
    })
}

/// Composes `first` (C relative to P) with `second` (D relative to C) into D relative to P.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_compose(
    first: *const rf_frame_motion,
    second: *const rf_frame_motion,
    out_motion: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let (a, b) = (unsafe { read(first) }?.to_core()?, unsafe { read(second) }?.to_core()?);
        *unsafe { out(out_motion) }? = (&a.then(&b)).into();
        Ok(())
    })
}

/// The motion of the parent relative to the child (resolved in the child).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_inverse(motion: *const rf_frame_motion, out_motion: *mut rf_frame_motion) -> rf_status {
    boundary(|| {
        let m = unsafe { read(motion) }?.to_core()?;
        *unsafe { out(out_motion) }? = (&m.inverse()).into();
        Ok(())
    })
}

/// Maps a point given relative to the child (resolved in the child) to the parent, by the
/// transport theorem.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_map_point(
    motion: *const rf_frame_motion,
    point: *const rf_point_kinematics,
    out_point: *mut rf_point_kinematics,
) -> rf_status {
    boundary(|| {
        let motion = unsafe { read(motion) }?;
        let m = motion.to_core_rotation_checked()?;
        let point = unsafe { read(point) }?;
        let out_point = unsafe { out(out_point) }?;
        let p = rotaframe::frames::PointKinematics::<AnyFrame>::new(
            point.position.into(),
            point.velocity.into(),
            point.acceleration.into(),
        );
        // Every part within its supported range (branch-free; as the core's checked
        // constructors require), else name the bad part; inside the ranges nothing overflows.
        let parts = m.parts();
        let good = within(&parts.position, MAX_POSITION)
            & within(&parts.velocity, MAX_VELOCITY)
            & within(&parts.acceleration, MAX_ACCELERATION)
            & within(&parts.angular_velocity, MAX_ANGULAR_VELOCITY)
            & within(&parts.angular_acceleration, MAX_ANGULAR_ACCELERATION)
            & within(&p.position, MAX_POSITION)
            & within(&p.velocity, MAX_VELOCITY)
            & within(&p.acceleration, MAX_ACCELERATION);
        if !good {
            motion.to_core()?;
            point.to_core()?;
        }
        let mapped = m.map_point(&p);
        *out_point = (&mapped).into();
        Ok(())
    })
}

/// Maps `count` points through one motion. Every input is validated before anything is
/// written; `points` and `out_points` must not overlap (`RF_STATUS_OVERLAPPING_BUFFERS`; NULL
/// allowed when `count` is 0).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_map_points(
    motion: *const rf_frame_motion,
    points: *const rf_point_kinematics,
    count: usize,
    out_points: *mut rf_point_kinematics,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(motion) }?.to_core()?;
        let points = unsafe { slice(points, count) }?;
        disjoint(region(out_points, count), &[region(points.as_ptr(), count)])?;
        let outs = unsafe { slice_mut(out_points, count) }?;
        for p in points {
            p.to_core()?;
        }
        for (o, p) in outs.iter_mut().zip(points) {
            *o = (&m.map_point(&p.to_core()?)).into();
        }
        Ok(())
    })
}

/// Rotates a free vector from child axes into parent axes (no translation terms).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_map_vector(
    motion: *const rf_frame_motion,
    vector: *const rf_vec3,
    out_vector: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(motion) }?.to_core()?;
        let v = FreeVector::<AnyFrame>::try_from_vector(unsafe { read(vector) }?.into(), "vector")?;
        *unsafe { out(out_vector) }? = m.map_vector(&v).vector.into();
        Ok(())
    })
}

/// Angular velocity and angular acceleration of the child relative to the parent, resolved in
/// the child. Either output may be NULL to skip it (not both).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_rates_in_child(
    motion: *const rf_frame_motion,
    out_angular_velocity: *mut rf_vec3,
    out_angular_acceleration: *mut rf_vec3,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(motion) }?.to_core()?;
        distinct_outputs(&[region(out_angular_velocity, 1), region(out_angular_acceleration, 1)])?;
        // SAFETY: the caller guarantees each pointer is NULL or writable; they do not overlap.
        let (w, a) = unsafe { (out_angular_velocity.as_mut(), out_angular_acceleration.as_mut()) };
        if w.is_none() && a.is_none() {
            return Err(rf_status::RF_STATUS_NULL_POINTER);
        }
        if let Some(w) = w {
            *w = m.angular_velocity_in_child().into();
        }
        if let Some(a) = a {
            *a = m.angular_acceleration_in_child().into();
        }
        Ok(())
    })
}

/// The apparent accelerations on a point at `position` moving at `velocity` relative to a frame
/// that turns at `angular_velocity` with `angular_acceleration` and whose origin accelerates at
/// `origin_acceleration`; all relative to an inertial frame and resolved in the moving frame.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_apparent_terms_compute(
    angular_velocity: *const rf_vec3,
    angular_acceleration: *const rf_vec3,
    origin_acceleration: *const rf_vec3,
    position: *const rf_vec3,
    velocity: *const rf_vec3,
    out_terms: *mut rf_apparent_terms,
) -> rf_status {
    boundary(|| {
        // One test for the six pointers (this function is short enough for it to matter).
        let any_null = angular_velocity.is_null()
            | angular_acceleration.is_null()
            | origin_acceleration.is_null()
            | position.is_null()
            | velocity.is_null()
            | out_terms.is_null();
        if any_null {
            return Err(rf_status::RF_STATUS_NULL_POINTER);
        }
        // SAFETY: none is NULL, and the caller guarantees they are valid.
        let (w, al, a0, r, v, out_terms) =
            unsafe { (*angular_velocity, *angular_acceleration, *origin_acceleration, *position, *velocity, &mut *out_terms) };
        let dynamics =
            FrameDynamics { angular_velocity: w.into(), angular_acceleration: al.into(), origin_acceleration: a0.into() };
        let (r, v) = (r.into(), v.into());
        // Every input within its supported range (branch-free), else name the bad one (reading
        // the inputs again keeps the naming out of the fast path).
        let good = within(&dynamics.angular_velocity, MAX_ANGULAR_VELOCITY)
            & within(&dynamics.angular_acceleration, MAX_ANGULAR_ACCELERATION)
            & within(&dynamics.origin_acceleration, MAX_ACCELERATION)
            & within(&r, MAX_POSITION)
            & within(&v, MAX_VELOCITY);
        if !good {
            unsafe { validate_apparent_inputs(angular_velocity, angular_acceleration, origin_acceleration, position, velocity) }?;
        }
        let terms = apparent_terms(&dynamics, &r, &v);
        *out_terms = (&terms).into();
        Ok(())
    })
}

/// The detailed check behind `rf_apparent_terms_compute`'s fast path.
///
/// # Safety
/// Every pointer is valid (they were read once already).
#[cold]
#[inline(never)]
unsafe fn validate_apparent_inputs(
    angular_velocity: *const rf_vec3,
    angular_acceleration: *const rf_vec3,
    origin_acceleration: *const rf_vec3,
    position: *const rf_vec3,
    velocity: *const rf_vec3,
) -> crate::status::Fallible<()> {
    let dynamics = FrameDynamics {
        angular_velocity: unsafe { read(angular_velocity) }?.into(),
        angular_acceleration: unsafe { read(angular_acceleration) }?.into(),
        origin_acceleration: unsafe { read(origin_acceleration) }?.into(),
    };
    dynamics.validate()?;
    let (r, v) = (unsafe { read(position) }?.into(), unsafe { read(velocity) }?.into());
    rotaframe::frames::PointKinematics::<AnyFrame>::try_new(r, v, rotaframe::nalgebra::Vector3::zeros())?;
    Ok(())
}

/// The apparent accelerations for `count` points, with the frame's rates and origin
/// acceleration given per point (arrays of `count` each). Every input is validated before
/// anything is written; `out_terms` must not overlap the inputs
/// (`RF_STATUS_OVERLAPPING_BUFFERS`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_apparent_terms_batch(
    angular_velocity: *const rf_vec3,
    angular_acceleration: *const rf_vec3,
    origin_acceleration: *const rf_vec3,
    position: *const rf_vec3,
    velocity: *const rf_vec3,
    count: usize,
    out_terms: *mut rf_apparent_terms,
) -> rf_status {
    boundary(|| {
        let (w, al, a0, r, v) = unsafe {
            (
                slice(angular_velocity, count)?,
                slice(angular_acceleration, count)?,
                slice(origin_acceleration, count)?,
                slice(position, count)?,
                slice(velocity, count)?,
            )
        };
        let inputs = [w, al, a0, r, v].map(|s| region(s.as_ptr(), count));
        disjoint(region(out_terms, count), &inputs)?;
        let outs = unsafe { slice_mut(out_terms, count) }?;
        let elements = || w.iter().zip(al).zip(a0).zip(r).zip(v).map(|((((w, al), a0), r), v)| (*w, *al, *a0, *r, *v));
        let dynamics = |w: rf_vec3, al: rf_vec3, a0: rf_vec3| FrameDynamics {
            angular_velocity: w.into(),
            angular_acceleration: al.into(),
            origin_acceleration: a0.into(),
        };
        // Validate everything first: nothing is written for a bad batch.
        for (w, al, a0, r, v) in elements() {
            dynamics(w, al, a0).validate()?;
            rotaframe::frames::PointKinematics::<AnyFrame>::try_new(r.into(), v.into(), rotaframe::nalgebra::Vector3::zeros())?;
        }
        for (o, (w, al, a0, r, v)) in outs.iter_mut().zip(elements()) {
            *o = (&apparent_terms(&dynamics(w, al, a0), &r.into(), &v.into())).into();
        }
        Ok(())
    })
}

/// The apparent accelerations, resolved in the moving frame, on a point moving relative to it,
/// where `motion` is that frame's motion relative to an **inertial** frame (the caller vouches
/// for the parent being inertial).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_apparent_of_motion(
    motion: *const rf_frame_motion,
    point: *const rf_point_kinematics,
    out_terms: *mut rf_apparent_terms,
) -> rf_status {
    boundary(|| {
        let m: FrameMotion<Inertial, AnyFrame> = unsafe { read(motion) }?.to_core()?.assume_frames();
        let p = unsafe { read(point) }?.to_core()?;
        *unsafe { out(out_terms) }? = (&apparent_acceleration(&m, &p)).into();
        Ok(())
    })
}
