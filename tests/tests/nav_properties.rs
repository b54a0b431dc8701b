//! Frame-invariance properties of the IMU synthesis and the strapdown mechanizations.

use proptest::prelude::*;
use rotaframe::earth::{Geodetic, GravityModel, WGS84, earth_motion, local_level_motion};
use rotaframe::frames::{Body, Ned};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{UnitQuaternion, Vector3};
use rotaframe::nav::{ImuIncrement, NavFrame, NavState, Strapdown, StrapdownConfig, ideal_imu, sensor_mount};
use rotaframe_tests::trajectories::state_errors;
use rotaframe_tests::{config, unit_quaternion, vector};

rotaframe::frame!(Sensor);

/// Position, NED velocity and acceleration, attitude, body rate and angular acceleration
/// relative to NED.
type Vehicle = (Geodetic, Vector3<f64>, Vector3<f64>, UnitQuaternion<f64>, Vector3<f64>, Vector3<f64>);

/// A vehicle somewhere below 80° latitude, up to 10 km high, moving and turning.
fn vehicle() -> impl Strategy<Value = Vehicle> {
    (
        (-80.0..80.0f64, -180.0..180.0f64, -100.0..10_000.0f64),
        vector(300.0),
        vector(20.0),
        unit_quaternion(),
        vector(2.0),
        vector(5.0),
    )
        .prop_map(|((lat, lon, h), v, a, q, w, alpha)| (Geodetic::from_degrees(lat, lon, h), v, a, q, w, alpha))
}

/// The vehicle's body motion relative to the inertial frame at Earth rotation angle `angle`.
fn body_in_inertial(angle: f64, (position, v, a, q, w, alpha): &Vehicle) -> FrameMotion<rotaframe::frames::Eci, Body> {
    let ned = local_level_motion(&WGS84, position, v, a).unwrap();
    let body = FrameMotion::<Ned, Body>::from_parts(MotionParts {
        rotation: *q,
        angular_velocity: *w,
        angular_acceleration: *alpha,
        ..MotionParts::default()
    })
    .unwrap();
    earth_motion(&WGS84, 0.0, angle).unwrap().then(&ned).then(&body)
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn ideal_imu_does_not_depend_on_the_earth_rotation_angle(vehicle in vehicle(), angle in -10.0..10.0f64, gravity in prop::bool::ANY) {
        // Both gravity models are symmetric about the polar axis, and the IMU senses only
        // motion relative to inertial space resolved in the body: where the Earth happens to
        // be in its rotation cannot change the readings (common practice; it is why the
        // inertial frame's epoch does not matter to an INS). Tolerance: 1e-12 rad/s and
        // 1e-10 m/s² absolute, rounding in positions of 6.4e6 m rotated through 10 rad.
        let gravity = if gravity { GravityModel::J2 } else { GravityModel::Normal };
        let a = ideal_imu(&WGS84, gravity, &body_in_inertial(0.0, &vehicle)).unwrap();
        let b = ideal_imu(&WGS84, gravity, &body_in_inertial(angle, &vehicle)).unwrap();
        prop_assert!((a.angular_rate - b.angular_rate).norm() < 1e-12);
        prop_assert!((a.specific_force - b.specific_force).norm() < 1e-10);
    }

    #[test]
    fn a_sensor_mounted_with_a_rotation_reads_the_body_values_rotated(vehicle in vehicle(), mount in unit_quaternion()) {
        // Changing the axes a triad is resolved in rotates its readings and nothing else:
        // with no lever arm, ω_s = C_b^s ω_b and f_s = C_b^s f_b. Tolerance: rounding, 1e-14
        // rad/s on rates up to a few rad/s and 1e-12 m/s² on forces up to tens of m/s².
        let body = body_in_inertial(0.3, &vehicle);
        let at_body = ideal_imu(&WGS84, GravityModel::Normal, &body).unwrap();
        let sensor = body.then(&sensor_mount::<Body, Sensor>(&Vector3::zeros(), &mount).unwrap());
        let at_sensor = ideal_imu(&WGS84, GravityModel::Normal, &sensor).unwrap();
        prop_assert!((at_sensor.angular_rate - mount.inverse() * at_body.angular_rate).norm() < 1e-14);
        prop_assert!((at_sensor.specific_force - mount.inverse() * at_body.specific_force).norm() < 1e-12);
    }

    #[test]
    fn navigation_does_not_depend_on_how_the_imu_axes_are_labelled(
        lat in -70.0..70.0f64, lon in -180.0..180.0f64, v in vector(100.0), q in unit_quaternion(), relabel in unit_quaternion(),
        rates in prop::collection::vec((vector(0.02), vector(0.3)), 20), frame in prop::bool::ANY,
    ) {
        // The same motion measured by a triad whose axes are rotated by R (increments R^T Δθ,
        // R^T Δv; attitude q R) must give the same position and velocity, and an attitude
        // that differs by exactly R: the mechanization is covariant under a change of body
        // axes. Random increments (up to 0.02 rad and 0.3 m/s per 10 ms on top of the
        // stationary values) over 20 steps. Tolerance: 1e-9 m, 1e-11 m/s, 1e-13 rad, rounding
        // of 20 steps at positions of 6.4e6 m.
        let frame = if frame { NavFrame::Ecef } else { NavFrame::Ned };
        let cfg = StrapdownConfig { frame, ..StrapdownConfig::default() };
        let start = NavState::new(Geodetic::from_degrees(lat, lon, 500.0), v, q);
        let relabelled = NavState { attitude: q * relabel, ..start };
        let mut a = Strapdown::new(cfg, &start).unwrap();
        let mut b = Strapdown::new(cfg, &relabelled).unwrap();
        let gravity = -9.8 * 0.01 * (q.inverse() * Vector3::z());
        for (dtheta, dv) in &rates {
            let inc = ImuIncrement::new(*dtheta, dv + gravity, 0.01);
            a.step(&inc).unwrap();
            b.step(&ImuIncrement::new(relabel.inverse() * inc.delta_angle, relabel.inverse() * inc.delta_velocity, 0.01)).unwrap();
        }
        let (sa, sb) = (a.state(), b.state());
        let (p, v, _) = state_errors(&WGS84, &sa, &sb);
        prop_assert!(p < 1e-9 && v < 1e-11, "{p} {v}");
        prop_assert!((sa.attitude * relabel).angle_to(&sb.attitude) < 1e-13);
    }

    #[test]
    fn ned_and_ecef_mechanizations_agree_on_random_increments(
        lat in -85.0..85.0f64, lon in -180.0..180.0f64, h in -100.0..8000.0f64, v in vector(250.0), q in unit_quaternion(),
        rates in prop::collection::vec((vector(0.02), vector(0.3)), 50),
    ) {
        // Two coordinate systems for one set of equations: on the same 50 random increments
        // (0.5 s at 100 Hz, vehicle speeds to 430 m/s) the reported states must agree to well
        // below either mechanization's own discretisation error. Tolerance: 2e-6 m, 1e-8 m/s,
        // 1e-11 rad (the second-order terms in which the two forms differ, ~(v T)² / R per
        // step, summed).
        let start = NavState::new(Geodetic::from_degrees(lat, lon, h), v, q);
        let mut ned = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
        let mut ecef = Strapdown::new(StrapdownConfig { frame: NavFrame::Ecef, ..StrapdownConfig::default() }, &start).unwrap();
        let gravity = -9.8 * 0.01 * (q.inverse() * Vector3::z());
        for (dtheta, dv) in &rates {
            let inc = ImuIncrement::new(*dtheta, dv + gravity, 0.01);
            ned.step(&inc).unwrap();
            ecef.step(&inc).unwrap();
        }
        let (p, v, a) = state_errors(&WGS84, &ned.state(), &ecef.state());
        prop_assert!(p < 2e-6 && v < 1e-8 && a < 1e-11, "{p} {v} {a}");
    }
}
