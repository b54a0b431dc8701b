//! Jacobians beside values, the inertial error-state model, its discrete form and covariance
//! prediction (the core's `linearise`).
//!
//! Every matrix is caller storage, **row-major** (`m[row * columns + column]`), of the size
//! each function states. Rotations are perturbed on the parent side by a small-angle vector
//! (`R' = exp([δθ×]) R`); a frame motion has 18 parts in the order δθ, position, velocity,
//! acceleration, angular velocity, angular acceleration; a point's state has 9 (position,
//! velocity, acceleration). The error states are the README's "Linearisation" table (15, or
//! 21 with scale factors). Outputs are untouched on error.

use rotaframe::apparent::FrameDynamics;
use rotaframe::earth::Geodetic;
use rotaframe::frames::{AnyFrame, PointKinematics};
use rotaframe::linearise::{self, inertial};
use rotaframe::nalgebra::{SMatrix, SVector, Vector3};
use rotaframe::nav::ImuIncrement;
use rotaframe::rotation::EulerZyx;

use crate::earth::core_model;
use crate::nav::{error_model_of, rf_imu_error_model, rf_imu_increment, rf_strapdown};
use crate::status::{
    Fallible, RF_STATUS_INVALID_ARGUMENT, RF_STATUS_NULL_POINTER, boundary, disjoint, distinct_outputs, out, read, region,
    rf_status, slice, slice_mut,
};
use crate::types::{
    put_row_major, rf_earth_model, rf_euler, rf_frame_motion, rf_geodetic, rf_point_kinematics, rf_quat, rf_vec3,
};

/// `n` output values at `p`.
unsafe fn matrix_out<'a>(p: *mut f64, n: usize) -> Fallible<&'a mut [f64]> {
    unsafe { slice_mut(p, n) }
}

/// ECEF position (m) of a geodetic position and its Jacobian `out_jacobian[9]` (rows x, y, z;
/// columns latitude, longitude (m/rad), height).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_geodetic_to_ecef_jacobian(
    model: *const rf_earth_model,
    position: *const rf_geodetic,
    out_ecef: *mut rf_vec3,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let p: Geodetic = unsafe { read(position) }?.into();
        let (x, j) = linearise::geodetic_to_ecef_jacobian(&m, &p)?;
        distinct_outputs(&[region(out_ecef, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_ecef) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = x.into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// Geodetic position of an ECEF point and its Jacobian `out_jacobian[9]` (rows latitude,
/// longitude (rad/m), height; columns x, y, z). `RF_STATUS_NEAR_POLE` near the poles.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_ecef_to_geodetic_jacobian(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    out_position: *mut rf_geodetic,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let x: Vector3<f64> = unsafe { read(ecef) }?.into();
        let (g, j) = linearise::ecef_to_geodetic_jacobian(&m, &x)?;
        distinct_outputs(&[region(out_position, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_position) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = g.into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// The rotation of the local-level axes (NED or ENU) relative to ECEF per unit latitude and
/// longitude: `out_jacobian[6]`, 3×2 (rows: the small-angle vector resolved in ECEF).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_local_level_rotation_jacobian(latitude: f64, longitude: f64, out_jacobian: *mut f64) -> rf_status {
    boundary(|| {
        let j = linearise::local_level_rotation_jacobian(latitude, longitude)?;
        put_row_major(unsafe { matrix_out(out_jacobian, 6) }?, &j);
        Ok(())
    })
}

/// Normal gravity (m/s²) and its gradient `out_gradient[2]`: ∂γ/∂latitude (m/s² per rad),
/// ∂γ/∂height (s⁻²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_normal_gravity_jacobian(
    model: *const rf_earth_model,
    latitude: f64,
    height: f64,
    out_gravity: *mut f64,
    out_gradient: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let (g, (per_latitude, per_height)) = linearise::normal_gravity_jacobian(&m, latitude, height)?;
        distinct_outputs(&[region(out_gravity, 1), region(out_gradient, 2)])?;
        let (o, oj) = (unsafe { out(out_gravity) }?, unsafe { matrix_out(out_gradient, 2) }?);
        *o = g;
        oj.copy_from_slice(&[per_latitude, per_height]);
        Ok(())
    })
}

/// J₂ gravitation (`with_centrifugal` = 0) or gravity (J₂ plus centrifugal, non-zero) at an
/// ECEF position and its gradient `out_jacobian[9]` (s⁻²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_gravity_ecef_jacobian(
    model: *const rf_earth_model,
    ecef: *const rf_vec3,
    with_centrifugal: i32,
    out_gravity: *mut rf_vec3,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { core_model(model) }?;
        let x: Vector3<f64> = unsafe { read(ecef) }?.into();
        let (g, j) = if with_centrifugal != 0 {
            linearise::gravity_ecef_jacobian(&m, &x)?
        } else {
            linearise::gravitation_jacobian(&m, &x)?
        };
        distinct_outputs(&[region(out_gravity, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_gravity) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = g.into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// Body-to-local-level quaternion of z-y-x Euler angles (rad) and its Jacobian
/// `out_jacobian[9]` (rows δθ in local-level axes; columns yaw, pitch, roll).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_from_euler_jacobian(
    angles: *const rf_euler,
    out_quat: *mut rf_quat,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let a = unsafe { read(angles) }?;
        let e = EulerZyx::new(a.yaw, a.pitch, a.roll);
        e.validate("angles")?;
        let (q, j) = linearise::quaternion_from_euler_jacobian(&e);
        distinct_outputs(&[region(out_quat, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_quat) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = (&q).into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// z-y-x Euler angles of a unit quaternion and their Jacobian `out_jacobian[9]` (rows yaw,
/// pitch, roll; columns δθ). `RF_STATUS_INVALID_ARGUMENT` within 1e-9 rad of ±90° pitch.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_euler_from_quat_jacobian(
    quat: *const rf_quat,
    out_angles: *mut rf_euler,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let q = unsafe { read(quat) }?.to_core("quat")?;
        let (e, j) = linearise::euler_from_quaternion_jacobian(&q)?;
        distinct_outputs(&[region(out_angles, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_angles) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = rf_euler { yaw: e.yaw, pitch: e.pitch, roll: e.roll };
        put_row_major(oj, &j);
        Ok(())
    })
}

/// Unit quaternion of a rotation vector (rad) and its Jacobian `out_jacobian[9]` (the left
/// Jacobian: rows δθ, columns the rotation vector's components).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_from_rotvec_jacobian(
    rotvec: *const rf_vec3,
    out_quat: *mut rf_quat,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let v: Vector3<f64> = unsafe { read(rotvec) }?.into();
        let (q, j) = linearise::quaternion_from_rotation_vector_jacobian(&v)?;
        distinct_outputs(&[region(out_quat, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_quat) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = (&q).into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// Rotation vector of a unit quaternion and its Jacobian `out_jacobian[9]` (rows the rotation
/// vector, columns δθ). `RF_STATUS_INVALID_ARGUMENT` within 1e-6 rad of a half turn.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_quat_to_rotvec_jacobian(
    quat: *const rf_quat,
    out_rotvec: *mut rf_vec3,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let q = unsafe { read(quat) }?.to_core("quat")?;
        let (v, j) = linearise::rotation_vector_from_quaternion_jacobian(&q)?;
        distinct_outputs(&[region(out_rotvec, 1), region(out_jacobian, 9)])?;
        let (o, oj) = (unsafe { out(out_rotvec) }?, unsafe { matrix_out(out_jacobian, 9) }?);
        *o = v.into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// `rf_motion_map_point` and its Jacobians: `out_jacobian_point[81]` (9×9, with respect to the
/// point's state) and `out_jacobian_motion[162]` (9×18, with respect to the motion's parts).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_map_point_jacobian(
    motion: *const rf_frame_motion,
    point: *const rf_point_kinematics,
    out_point: *mut rf_point_kinematics,
    out_jacobian_point: *mut f64,
    out_jacobian_motion: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(motion) }?.to_core()?;
        let p: PointKinematics<AnyFrame> = unsafe { read(point) }?.to_core()?;
        let (mapped, jp, jm) = linearise::map_point_jacobian(&m, &p);
        distinct_outputs(&[region(out_point, 1), region(out_jacobian_point, 81), region(out_jacobian_motion, 162)])?;
        let o = unsafe { out(out_point) }?;
        let (op, om) = (unsafe { matrix_out(out_jacobian_point, 81) }?, unsafe { matrix_out(out_jacobian_motion, 162) }?);
        *o = (&mapped).into();
        put_row_major(op, &jp);
        put_row_major(om, &jm);
        Ok(())
    })
}

/// `rf_motion_compose` and its Jacobians `out_jacobian_first[324]`, `out_jacobian_second[324]`
/// (18×18: the composition's parts with respect to each motion's parts).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_compose_jacobian(
    first: *const rf_frame_motion,
    second: *const rf_frame_motion,
    out_motion: *mut rf_frame_motion,
    out_jacobian_first: *mut f64,
    out_jacobian_second: *mut f64,
) -> rf_status {
    boundary(|| {
        let (a, b) = (unsafe { read(first) }?.to_core()?, unsafe { read(second) }?.to_core()?);
        let (composed, j1, j2) = linearise::then_jacobian(&a, &b);
        distinct_outputs(&[region(out_motion, 1), region(out_jacobian_first, 324), region(out_jacobian_second, 324)])?;
        let o = unsafe { out(out_motion) }?;
        let (o1, o2) = (unsafe { matrix_out(out_jacobian_first, 324) }?, unsafe { matrix_out(out_jacobian_second, 324) }?);
        *o = (&composed).into();
        put_row_major(o1, &j1);
        put_row_major(o2, &j2);
        Ok(())
    })
}

/// `rf_motion_inverse` and its Jacobian `out_jacobian[324]` (18×18).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_motion_inverse_jacobian(
    motion: *const rf_frame_motion,
    out_motion: *mut rf_frame_motion,
    out_jacobian: *mut f64,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(motion) }?.to_core()?;
        let (inverse, j) = linearise::inverse_jacobian(&m);
        distinct_outputs(&[region(out_motion, 1), region(out_jacobian, 324)])?;
        let (o, oj) = (unsafe { out(out_motion) }?, unsafe { matrix_out(out_jacobian, 324) }?);
        *o = (&inverse).into();
        put_row_major(oj, &j);
        Ok(())
    })
}

/// The Jacobians of the total apparent acceleration (see `rf_apparent_terms_compute`), each
/// 3×3 in `out_jacobians[45]`: with respect to the point's position, its velocity, the
/// frame's origin acceleration, angular velocity and angular acceleration, in that order.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_apparent_terms_jacobian(
    angular_velocity: *const rf_vec3,
    angular_acceleration: *const rf_vec3,
    origin_acceleration: *const rf_vec3,
    position: *const rf_vec3,
    velocity: *const rf_vec3,
    out_jacobians: *mut f64,
) -> rf_status {
    boundary(|| {
        let dynamics = FrameDynamics {
            angular_velocity: unsafe { read(angular_velocity) }?.into(),
            angular_acceleration: unsafe { read(angular_acceleration) }?.into(),
            origin_acceleration: unsafe { read(origin_acceleration) }?.into(),
        };
        dynamics.validate()?;
        let point = PointKinematics::<AnyFrame>::try_new(
            unsafe { read(position) }?.into(),
            unsafe { read(velocity) }?.into(),
            Vector3::zeros(),
        )?;
        let (_, j) = linearise::apparent_terms_jacobian(&dynamics, &point.position, &point.velocity);
        let o = unsafe { matrix_out(out_jacobians, 45) }?;
        for (k, m) in
            [j.position, j.velocity, j.origin_acceleration, j.angular_velocity, j.angular_acceleration].iter().enumerate()
        {
            put_row_major(&mut o[9 * k..9 * (k + 1)], m);
        }
        Ok(())
    })
}

/// The 12 noise spectral densities of an IMU error model, in the order of the noise inputs
/// of `G`: accelerometer white noise² (m²/s³) ×3, gyro white noise² (rad²/s) ×3, accelerometer
/// and gyro bias drives 2σ²/τ ×3 each.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_noise_psd(model: *const rf_imu_error_model, out_psd: *mut f64) -> rf_status {
    boundary(|| {
        let m = unsafe { error_model_of(model) }?;
        unsafe { matrix_out(out_psd, 12) }?.copy_from_slice(inertial::noise_psd(&m).as_slice());
        Ok(())
    })
}

fn states_ok(states: usize) -> Fallible<()> {
    if states == 15 || states == 21 { Ok(()) } else { Err(RF_STATUS_INVALID_ARGUMENT) }
}

/// The continuous error-state model at the stepper's current state: `out_f[states²]` and
/// `out_g[states·12]`, `states` 15 or 21, with the measured `specific_force` (m/s²) and
/// `angular_rate` (rad/s) in body axes; bias correlation times from `errors` (NULL: random
/// constants).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_strapdown_error_model(
    strapdown: *const rf_strapdown,
    specific_force: *const rf_vec3,
    angular_rate: *const rf_vec3,
    errors: *const rf_imu_error_model,
    states: usize,
    out_f: *mut f64,
    out_g: *mut f64,
) -> rf_status {
    boundary(|| {
        states_ok(states)?;
        let stepper = unsafe { read(strapdown) }?.to_core()?;
        let (f, w): (Vector3<f64>, Vector3<f64>) =
            (unsafe { read(specific_force) }?.into(), unsafe { read(angular_rate) }?.into());
        let model = unsafe { error_model_of(errors) }?;
        let (config, state, _) = stepper.parts();
        let times = (&model.accelerometer.markov_time, &model.gyro.markov_time);
        distinct_outputs(&[region(out_f, states * states), region(out_g, states * 12)])?;
        let (of, og) = (unsafe { matrix_out(out_f, states * states) }?, unsafe { matrix_out(out_g, states * 12) }?);
        if states == 15 {
            let (fm, gm) = inertial::error_model::<15>(&config, &state, &f, &w, times)?;
            put_row_major(of, &fm);
            put_row_major(og, &gm);
        } else {
            let (fm, gm) = inertial::error_model::<21>(&config, &state, &f, &w, times)?;
            put_row_major(of, &fm);
            put_row_major(og, &gm);
        }
        Ok(())
    })
}

fn square<const N: usize>(values: &[f64]) -> SMatrix<f64, N, N> {
    SMatrix::from_row_slice(values)
}

/// `Φ` and `Q_d` (`out_phi[states²]`, `out_qd[states²]`) over `interval` (s) of `f[states²]`,
/// `g[states·12]` and the 12 densities `psd` (see `rf_noise_psd`): the series summed to
/// rounding.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_discrete_error_model(
    states: usize,
    f: *const f64,
    g: *const f64,
    psd: *const f64,
    interval: f64,
    out_phi: *mut f64,
    out_qd: *mut f64,
) -> rf_status {
    // SAFETY: the caller's pointers, as documented; checked by `discrete`.
    unsafe { discrete(states, [f, g, psd], interval, [out_phi, out_qd], false) }
}

/// As `rf_discrete_error_model`, truncated at second order: `Φ = I + F T + F² T²/2`,
/// `Q_d = Q_c T + (F Q_c + Q_c Fᵀ) T²/2` (what real-time filters use at IMU rates; each entry's
/// error is of order `(‖F T‖∞)³` of the largest, see the core's `linearise::inertial`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_discrete_error_model_second_order(
    states: usize,
    f: *const f64,
    g: *const f64,
    psd: *const f64,
    interval: f64,
    out_phi: *mut f64,
    out_qd: *mut f64,
) -> rf_status {
    // SAFETY: the caller's pointers, as documented; checked by `discrete`.
    unsafe { discrete(states, [f, g, psd], interval, [out_phi, out_qd], true) }
}

/// The two discretisations behind one set of checks.
///
/// # Safety
/// `f`, `g` and `psd` hold `states²`, `12 states` and 12 values (or are NULL, refused);
/// `out_phi` and `out_qd` have room for `states²` values each (or are NULL, refused).
unsafe fn discrete(
    states: usize,
    [f, g, psd]: [*const f64; 3],
    interval: f64,
    [out_phi, out_qd]: [*mut f64; 2],
    second_order: bool,
) -> rf_status {
    boundary(|| {
        states_ok(states)?;
        let (fv, gv, qv) = (unsafe { slice(f, states * states) }?, unsafe { slice(g, states * 12) }?, unsafe { slice(psd, 12) }?);
        let q = SVector::<f64, 12>::from_column_slice(qv);
        let n2 = states * states;
        let inputs = [region(fv.as_ptr(), n2), region(gv.as_ptr(), states * 12), region(qv.as_ptr(), 12)];
        disjoint(region(out_phi, n2), &inputs)?;
        disjoint(region(out_qd, n2), &[inputs[0], inputs[1], inputs[2], region(out_phi, n2)])?;
        macro_rules! sized {
            ($n:literal) => {{
                let (fm, gm) = (square::<$n>(fv), SMatrix::<f64, $n, 12>::from_row_slice(gv));
                let (phi, qd) = if second_order {
                    inertial::discretise_second_order(&fm, &gm, &q, interval)?
                } else {
                    inertial::discretise(&fm, &gm, &q, interval)?
                };
                let (op, oq) = (unsafe { matrix_out(out_phi, n2) }?, unsafe { matrix_out(out_qd, n2) }?);
                put_row_major(op, &phi);
                put_row_major(oq, &qd);
            }};
        }
        if states == 15 {
            sized!(15)
        } else {
            sized!(21)
        }
        Ok(())
    })
}

/// The number of covariances `rf_predict_covariance` writes for `count` increments kept
/// every `every` steps: `count / every`, plus one when `count` is not a multiple (the last).
#[unsafe(no_mangle)]
pub extern "C" fn rf_covariance_count(count: usize, every: usize) -> usize {
    inertial::kept_count(count, every)
}

/// Predicts the error covariance along a strapdown run from `strapdown` (not changed) over
/// `count` increments (with optional per-step height references, NULL allowed), the error
/// model `errors` (NULL: perfect) and `p0[states²]` (symmetric): `P ← Φ P Φᵀ + Q_d` per step.
/// Writes `rf_covariance_count(count, every)` matrices (`states²` each) to `out_covariances`:
/// after every `every`-th step and after the last. Everything is checked by a first pass
/// (the stepper and the model at every step) before anything is written.
#[unsafe(no_mangle)]
#[allow(clippy::too_many_arguments)]
pub unsafe extern "C" fn rf_predict_covariance(
    strapdown: *const rf_strapdown,
    increments: *const rf_imu_increment,
    height_reference: *const f64,
    count: usize,
    errors: *const rf_imu_error_model,
    states: usize,
    p0: *const f64,
    every: usize,
    out_covariances: *mut f64,
) -> rf_status {
    boundary(|| {
        states_ok(states)?;
        let stepper = unsafe { read(strapdown) }?.to_core()?;
        let increments = unsafe { slice(increments.cast::<ImuIncrement>(), count) }?;
        let heights = if height_reference.is_null() { None } else { Some(unsafe { slice(height_reference, count) }?) };
        let model = unsafe { error_model_of(errors) }?;
        let n2 = states * states;
        let p0 = unsafe { slice(p0, n2) }?;
        if out_covariances.is_null() && count > 0 {
            return Err(RF_STATUS_NULL_POINTER);
        }
        let kept = inertial::kept_count(count, every);
        let inputs =
            [region(increments.as_ptr(), count), heights.map_or((0, 0), |h| region(h.as_ptr(), count)), region(p0.as_ptr(), n2)];
        disjoint(region(out_covariances, kept * n2), &inputs)?;
        let outputs = unsafe { matrix_out(out_covariances, kept * n2) }?;
        macro_rules! sized {
            ($n:literal) => {{
                // The core checks `every` and `p0`, runs a first pass over every step, and
                // only then writes.
                inertial::predict_covariance_kept::<$n>(
                    &stepper,
                    increments,
                    heights,
                    &model,
                    &square::<$n>(p0),
                    every,
                    true,
                    None,
                    outputs,
                )
                .map_err(|e| e.error)?;
            }};
        }
        if states == 15 {
            sized!(15)
        } else {
            sized!(21)
        }
        Ok(())
    })
}
