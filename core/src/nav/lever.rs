//! Lever arms: points and sensors at a body-fixed offset from the navigation reference point.
//!
//! A point fixed in the body at offset `l` (resolved in the body) moves, relative to a parent
//! frame P, by the transport theorem ([`FrameMotion::map_point`]):
//!
//! ```text
//! r = r_b + C_b^p l
//! v = v_b + ω × (C_b^p l)
//! a = a_b + α × (C_b^p l) + ω × (ω × (C_b^p l))
//! ```
//!
//! so a GNSS antenna's position and velocity ([`lever_arm_state`]) and the acceleration an
//! off-centre accelerometer sees ([`lever_arm_kinematics`], or [`ideal_imu`](super::ideal_imu)
//! on the chain extended by [`sensor_mount`]) all come from the frame machinery
//! (Groves 2013, §2.5.5 and §14.2).

use nalgebra::{UnitQuaternion, Vector3};

use super::strapdown::NavState;
use crate::earth::local::{earth_rate_ned_unchecked, transport_rate_unchecked};
use crate::earth::{EarthModel, Geodetic, ecef_to_geodetic, local_level_motion, ned_from_ecef};
use crate::error::Result;
use crate::frames::{Body, Frame, Ned, PointKinematics};
use crate::limits;
use crate::motion::{FrameMotion, MotionParts};

/// The fixed frame of a sensor mounted on body B at `lever_arm` (m, resolved in B) with
/// orientation `sensor_to_body` (maps sensor coordinates to body coordinates). Append it to a
/// body motion with [`then`](FrameMotion::then) to get the sensor's motion.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) naming `lever_arm` or `rotation`.
///
/// # Example
/// An accelerometer 0.2 m ahead of the reference point of a yawing car feels the centripetal
/// acceleration `ω² l` towards the axis:
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::frames::Body;
/// use rotaframe::motion::FrameMotion;
/// use rotaframe::nav::sensor_mount;
/// rotaframe::frame!(Road: inertial);
/// rotaframe::frame!(Accel);
/// let car = FrameMotion::<Road, Body>::spin(Vector3::z(), 0.5, 0.0).unwrap();
/// let sensor = car.then(&sensor_mount::<Body, Accel>(&Vector3::new(0.2, 0.0, 0.0), &UnitQuaternion::identity()).unwrap());
/// assert_relative_eq!(sensor.acceleration(), Vector3::new(-0.25 * 0.2, 0.0, 0.0), epsilon = 1e-15);
/// ```
pub fn sensor_mount<B: Frame, S: Frame>(
    lever_arm: &Vector3<f64>,
    sensor_to_body: &UnitQuaternion<f64>,
) -> Result<FrameMotion<B, S>> {
    FrameMotion::from_parts(MotionParts { rotation: *sensor_to_body, position: *lever_arm, ..MotionParts::default() }).map_err(
        |e| match e.quantity() {
            "position" => e.with_quantity("lever_arm"),
            "rotation" => e.with_quantity("sensor_to_body"),
            _ => e,
        },
    )
}

/// Position, velocity and acceleration relative to P (resolved in P) of the point fixed at
/// `lever_arm` (m, resolved in the body) on a body whose motion relative to P is `body`.
///
/// # Errors
/// [`Error::NonFinite`](crate::Error::NonFinite) naming `lever_arm`.
///
/// ```
/// use approx::assert_relative_eq;
/// use nalgebra::Vector3;
/// use rotaframe::frames::{Body, Ecef};
/// use rotaframe::motion::FrameMotion;
/// use rotaframe::nav::lever_arm_kinematics;
/// let hull = FrameMotion::<Ecef, Body>::spin(Vector3::x(), 0.1, 0.0).unwrap(); // rolling at 0.1 rad/s
/// let mast_top = lever_arm_kinematics(&hull, &Vector3::new(0.0, 0.0, -20.0)).unwrap();
/// assert_relative_eq!(mast_top.velocity, Vector3::new(0.0, 2.0, 0.0), epsilon = 1e-15);
/// ```
pub fn lever_arm_kinematics<P: Frame, B: Frame>(
    body: &FrameMotion<P, B>,
    lever_arm: &Vector3<f64>,
) -> Result<PointKinematics<P>> {
    limits::check_vector(lever_arm, limits::MAX_POSITION, "m", "lever_arm")?;
    Ok(body.map_point(&PointKinematics::at_rest(*lever_arm)))
}

/// Geodetic position and NED velocity (relative to the Earth, resolved in NED at the point) of
/// the point at `lever_arm` (m, resolved in the body) on a vehicle whose navigation state is
/// `state` and whose gyros read `angular_rate` (`ω_ib^b`, rad/s). The body's rate relative
/// to the Earth is `ω_eb^b = ω_ib^b − C_n^b (ω_ie^n + ω_en^n)`.
///
/// # Errors
/// [`Error::NearPole`](crate::Error::NearPole) within
/// [`POLE_EXCLUSION`](crate::earth::POLE_EXCLUSION) of a pole (the state is NED-based);
/// [`Error::NonFinite`](crate::Error::NonFinite) naming the bad argument.
///
/// # Example
/// A GNSS antenna 1.5 m above the IMU of a level, stationary vehicle sits 1.5 m higher:
/// ```
/// use approx::assert_abs_diff_eq;
/// use nalgebra::{UnitQuaternion, Vector3};
/// use rotaframe::earth::{earth_rate_ned, Geodetic, WGS84};
/// use rotaframe::nav::{lever_arm_state, NavState};
/// let state = NavState::new(Geodetic::from_degrees(51.0, -1.0, 80.0), Vector3::zeros(), UnitQuaternion::identity());
/// let rate = earth_rate_ned(&WGS84, state.position.latitude).unwrap(); // body = NED axes
/// let (antenna, v) = lever_arm_state(&WGS84, &state, &rate, &Vector3::new(0.0, 0.0, -1.5)).unwrap();
/// assert_abs_diff_eq!(antenna.height, 81.5, epsilon = 1e-9);
/// assert_abs_diff_eq!(v.norm(), 0.0, epsilon = 1e-12);
/// ```
pub fn lever_arm_state(
    model: &EarthModel,
    state: &NavState,
    angular_rate: &Vector3<f64>,
    lever_arm: &Vector3<f64>,
) -> Result<(Geodetic, Vector3<f64>)> {
    state.validate_for(model)?;
    limits::check_vector(angular_rate, limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate")?;
    // A lever arm on a vehicle: no longer than the Earth is wide, so that the point stays in
    // the range of geodetic coordinates.
    limits::check_vector(lever_arm, model.semi_minor_axis() / 4.0, "m", "lever_arm")?;
    let ned = local_level_motion(model, &state.position, &state.velocity_ned, &Vector3::zeros())?;
    let (s, c) = crate::math::sin_cos(state.position.latitude);
    let radii = crate::earth::local::radii_unchecked(model, s);
    let frame_rate = earth_rate_ned_unchecked(model, s, c)
        + transport_rate_unchecked(&radii, s, c, state.position.height, &state.velocity_ned);
    let body_rate_ned = state.attitude * angular_rate - frame_rate;
    let body = FrameMotion::<Ned, Body>::from_parts(MotionParts {
        rotation: state.attitude,
        angular_velocity: body_rate_ned,
        ..MotionParts::default()
    })?;
    let point = ned.then(&body).map_point(&PointKinematics::at_rest(*lever_arm));
    let position = ecef_to_geodetic(model, &point.position)?;
    let velocity_ned = ned_from_ecef(position.latitude, position.longitude)? * point.velocity;
    Ok((position, velocity_ned))
}
