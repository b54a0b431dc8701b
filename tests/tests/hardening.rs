//! The bad-input cases of the hardening review, through the Rust API: each is refused with an
//! error that names the rejected quantity (or, for finite input, gives a finite answer).

use nalgebra::{UnitQuaternion, Vector3};
use rotaframe::earth::{self, EarthModel, Geodetic, WGS84};
use rotaframe::frames::{AnyFrame, PointKinematics};
use rotaframe::nalgebra;
use rotaframe::nav::{
    ImuErrorGenerator, ImuErrorModel, MechanizationState, NavState, SensorErrorModel, StepMemory, Strapdown, StrapdownConfig,
    VerticalChannel,
};
use rotaframe::{Error, limits};

#[test]
fn an_ecef_point_1e155_m_out_is_refused_not_nan() {
    let e = earth::ecef_to_geodetic(&WGS84, &Vector3::new(1e155, 0.0, 0.0)).unwrap_err();
    assert_eq!(e.to_string(), "`ecef` magnitude 1e155 m is beyond the supported range (at most 1e10 m)");
}

#[test]
fn a_height_of_1e160_m_is_refused_so_the_round_trip_cannot_break() {
    let e = earth::geodetic_to_ecef(&WGS84, &Geodetic::new(0.5, 0.1, 1e160)).unwrap_err();
    assert_eq!(e.quantity(), "height");
    // Up to the outer limit the round trip holds (to the nanometre goal scaled by distance).
    let h = limits::max_height(&WGS84);
    let xyz = earth::geodetic_to_ecef(&WGS84, &Geodetic::new(0.5, 0.1, h)).unwrap();
    let back = earth::ecef_to_geodetic(&WGS84, &xyz).unwrap();
    // Tolerance: a few ulps of 1e10 m (2e-6 m each).
    assert!((back.height - h).abs() < 1e-5 && (back.latitude - 0.5).abs() < 1e-15);
}

#[test]
fn points_and_rates_near_1e200_are_refused_by_the_checked_constructors() {
    let e =
        PointKinematics::<AnyFrame>::try_new(Vector3::new(1e200, 1e200, 0.0), Vector3::zeros(), Vector3::zeros()).unwrap_err();
    assert!(matches!(e, Error::BeyondLimit { quantity: "position", .. }));
    let e = rotaframe::motion::FrameMotion::<AnyFrame, AnyFrame>::spin(Vector3::z(), 1e200, 0.0).unwrap_err();
    assert_eq!(e.quantity(), "angular_rate");
}

#[test]
fn a_sensor_with_a_bias_of_1e300_is_refused() {
    let gyro =
        SensorErrorModel { bias: Vector3::repeat(1e300), scale_factor: Vector3::repeat(1e300), ..SensorErrorModel::default() };
    let e = ImuErrorGenerator::new(ImuErrorModel { gyro, ..ImuErrorModel::default() }, 1).unwrap_err();
    assert_eq!(e.quantity(), "gyro_bias");
    assert!(e.to_string().contains("rad/s"), "{e}");
}

#[test]
fn a_level_ellipsoid_spinning_at_1_rad_per_s_is_refused() {
    // Its equatorial normal gravity would be -9.6e6 m/s².
    let e = EarthModel::from_defining_constants(6.4e6, 0.003, 3.9e14, 1.0).unwrap_err();
    assert_eq!(e.quantity(), "rotation_rate");
    let mut c = WGS84.constants();
    c.semi_major_axis = 1.0;
    assert_eq!(EarthModel::from_constants(&c).unwrap_err().quantity(), "semi_major_axis");
    // Constants that describe another body than their geometry are refused: J2 = 0.05.
    let e = EarthModel::custom(6378137.0, 1.0 / 298.257223563, 3.986004418e14, 7.292115e-5, 9.7803253359, 9.8321849378, 0.05)
        .unwrap_err();
    assert_eq!(e.quantity(), "j2");
}

#[test]
fn heights_below_the_inner_limit_are_refused() {
    assert_eq!(earth::normal_gravity_at_height(&WGS84, 0.8, -7e6).unwrap_err().quantity(), "height");
    let start = NavState::new(Geodetic::new(0.8, 0.1, -7e6), Vector3::zeros(), UnitQuaternion::identity());
    assert_eq!(Strapdown::new(StrapdownConfig::default(), &start).unwrap_err().quantity(), "height");
}

#[test]
fn an_aided_vertical_channel_beyond_its_stable_range_is_refused_with_the_limit() {
    let config = StrapdownConfig { vertical: VerticalChannel::Aided { time_constant: 1e6 }, ..StrapdownConfig::default() };
    assert_eq!(config.validate().unwrap_err().to_string(), "`time_constant` = 1e6 is outside [0, 568.5]");
}

#[test]
fn a_resumed_stepper_with_negative_elapsed_time_is_refused() {
    let start = NavState::new(Geodetic::new(0.8, 0.1, 10.0), Vector3::zeros(), UnitQuaternion::identity());
    let (config, state, memory) = Strapdown::new(StrapdownConfig::default(), &start).unwrap().parts();
    assert!(matches!(state, MechanizationState::Ned { .. }));
    let e = Strapdown::from_parts(config, state, StepMemory { elapsed: -5.0, ..memory }).unwrap_err();
    assert_eq!(e.quantity(), "elapsed");
}

#[test]
fn messages_print_numbers_in_shortest_round_trip_form() {
    let e = EarthModel::from_defining_constants(6378137.0, f64::MIN_POSITIVE, 3.986004418e14, 7.292115e-5).unwrap_err();
    assert_eq!(e.to_string(), "`flattening` = 2.2250738585072014e-308 is outside [1e-4, 0.1]");
}
