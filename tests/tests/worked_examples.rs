//! Worked examples of moving-frame kinematics checked against outside facts. The source of
//! each expected value is named beside the check.

use approx::assert_relative_eq;
use nalgebra::Vector3;
use rotaframe::apparent::{FrameDynamics, apparent_acceleration, apparent_terms};
use rotaframe::frames::{Ecef, Eci, PointKinematics};
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra;

rotaframe::frame!(Lab: inertial);
rotaframe::frame!(Turntable);

/// WGS 84 semi-major axis and rotation rate (NIMA TR8350.2, 3rd ed., Table 3.1, defining).
const WGS84_A: f64 = 6_378_137.0;
const WGS84_OMEGA: f64 = 7.292_115e-5;
/// Standard gravity, 9.80665 m/s² (CGPM 1901, the conventional value; common practice).
const STANDARD_GRAVITY: f64 = 9.806_65;

#[test]
fn centripetal_acceleration_at_the_equator_is_a_third_of_a_percent_of_g() {
    let earth = FrameMotion::<Eci, Ecef>::spin(Vector3::z(), WGS84_OMEGA, 1234.5).unwrap();
    let equator = PointKinematics::<Ecef>::at_rest(Vector3::new(WGS84_A, 0.0, 0.0));
    // Seen from inertial space the point accelerates towards the axis: ω² a (common practice).
    let inertial = earth.map_point(&equator);
    let expected = WGS84_OMEGA * WGS84_OMEGA * WGS84_A;
    // 0.0339157 m/s² computed from the TR8350.2 constants (shared reference table); the printed
    // digits are 6 significant, so compare to 1e-6 relative.
    assert_relative_eq!(expected, 0.033_915_7, max_relative = 2e-6);
    // Tolerance: the mapping is one rotation and two cross products, a few ulps of ω²a.
    assert_relative_eq!(inertial.acceleration.norm(), expected, max_relative = 1e-14);
    assert!(inertial.acceleration.dot(&inertial.position) < 0.0, "centripetal: points to the axis");
    // Seen on the Earth: the centrifugal term, outward, the same size.
    let terms = apparent_acceleration(&earth, &equator);
    assert_relative_eq!(terms.centrifugal, Vector3::new(expected, 0.0, 0.0), max_relative = 1e-14);
    // About a third of a percent of g (common practice: "0.34 % of g").
    let fraction = expected / STANDARD_GRAVITY;
    assert!((0.0033..0.0035).contains(&fraction), "fraction of g {fraction}");
}

#[test]
fn point_at_rest_on_a_spinning_turntable_moves_in_a_circle() {
    // Uniform circular motion (common practice): speed ω r tangential, acceleration ω² r inward.
    let (rate, radius) = (3.0, 0.25);
    for t in [0.0, 0.4, 1.7] {
        let table = FrameMotion::<Lab, Turntable>::spin(Vector3::z(), rate, t).unwrap();
        let p = table.map_point(&PointKinematics::at_rest(Vector3::new(radius, 0.0, 0.0)));
        let (s, c) = (rate * t).sin_cos();
        // Tolerance: rounding of one rotation of a 0.25 m vector, well under 1e-15 m.
        assert_relative_eq!(p.position, Vector3::new(radius * c, radius * s, 0.0), epsilon = 1e-15);
        assert_relative_eq!(p.velocity, Vector3::new(-rate * radius * s, rate * radius * c, 0.0), epsilon = 1e-14);
        assert_relative_eq!(p.acceleration, -rate * rate * p.position, epsilon = 1e-14);
        // In the table frame it feels only the centrifugal term, ω² r outward.
        let terms = apparent_acceleration(&table, &PointKinematics::at_rest(Vector3::new(radius, 0.0, 0.0)));
        assert_relative_eq!(terms.total, Vector3::new(rate * rate * radius, 0.0, 0.0), epsilon = 1e-14);
    }
}

#[test]
fn ball_rolled_inward_on_a_counter_clockwise_turntable_veers_right() {
    // A turntable turning counter-clockwise seen from above (ω along +z, z up) deflects a body
    // moving across it to the right of its velocity (common practice; the northern-hemisphere
    // rule for winds and projectiles is the same fact with ω = Earth rate).
    let table = FrameDynamics {
        angular_velocity: Vector3::new(0.0, 0.0, 0.8),
        angular_acceleration: Vector3::zeros(),
        origin_acceleration: Vector3::zeros(),
    };
    for heading in [0.0f64, 1.0, 2.5, -2.0] {
        let position = Vector3::new(heading.cos(), heading.sin(), 0.0) * 0.6;
        let inward = -position.normalize() * 0.3;
        let terms = apparent_terms(&table, &position, &inward);
        // "Right of the velocity" with z up is the direction velocity × z.
        let right = inward.cross(&Vector3::z()).normalize();
        assert!(terms.coriolis.dot(&right) > 0.0, "heading {heading}: {:?}", terms.coriolis);
        // Magnitude 2 ω v (common practice), to rounding.
        assert_relative_eq!(terms.coriolis.norm(), 2.0 * 0.8 * 0.3, max_relative = 1e-15);
        // Perpendicular to the velocity: the Coriolis term does no work.
        assert!(terms.coriolis.dot(&inward).abs() < 1e-16);
    }
}

#[test]
fn euler_term_opposes_spin_up_on_a_rim() {
    // A table spinning up at α about +z pushes a rim point backwards, −α × r (common practice:
    // passengers lean back as a carousel starts).
    let table = FrameMotion::<Lab, Turntable>::about_axis(Vector3::z(), 0.0, 0.0, 2.0).unwrap();
    let terms = apparent_acceleration(&table, &PointKinematics::at_rest(Vector3::new(0.5, 0.0, 0.0)));
    assert_relative_eq!(terms.euler, Vector3::new(0.0, -1.0, 0.0), epsilon = 1e-15);
    assert_eq!(terms.coriolis, Vector3::zeros());
    assert_eq!(terms.centrifugal, Vector3::zeros());
}
