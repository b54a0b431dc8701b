//! Invariants of frame motions under random frames and points (proptest).
//!
//! Each property states a fact of kinematics that holds whatever the frames are; the
//! tolerances are rounding bounds explained in `rotaframe_tests::KINEMATIC_REL_TOL` or beside
//! the assertion.

use nalgebra::{Matrix3, UnitQuaternion, Vector3};
use proptest::prelude::*;
use rotaframe::apparent::apparent_acceleration;
use rotaframe::frames::PointKinematics;
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra;
use rotaframe_tests::*;

rotaframe::frame!(Inertial: inertial);
rotaframe::frame!(A);
rotaframe::frame!(B);
rotaframe::frame!(C);

fn assert_points_close<F: rotaframe::frames::Frame>(what: &str, got: &PointKinematics<F>, want: &PointKinematics<F>, scale: f64) {
    assert_close(&format!("{what} position"), &got.position, &want.position, KINEMATIC_REL_TOL, scale);
    assert_close(&format!("{what} velocity"), &got.velocity, &want.velocity, KINEMATIC_REL_TOL, scale);
    assert_close(&format!("{what} acceleration"), &got.acceleration, &want.acceleration, KINEMATIC_REL_TOL, scale);
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn motion_composed_with_its_inverse_is_identity(m in frame_motion::<A, B>()) {
        let scale = kinematic_scale(&m, &PointKinematics::at_rest(Vector3::zeros()));
        for id in [m.then(&m.inverse()).erase_frames(), m.inverse().then(&m).erase_frames()] {
            let p = id.parts();
            prop_assert!(p.rotation.angle() < 1e-14, "rotation {:?}", p.rotation);
            for (name, v) in [("position", p.position), ("velocity", p.velocity), ("acceleration", p.acceleration),
                              ("angular_velocity", p.angular_velocity), ("angular_acceleration", p.angular_acceleration)] {
                assert_close(name, &v, &Vector3::zeros(), KINEMATIC_REL_TOL, scale);
            }
        }
    }

    #[test]
    fn mapping_through_motion_and_inverse_returns_every_point(m in frame_motion::<A, B>(), pt in point::<B>()) {
        let there = m.map_point(&pt);
        let back = m.inverse().map_point(&there);
        assert_points_close("round trip", &back, &pt, kinematic_scale(&m, &pt) * (1.0 + m.angular_velocity().norm()));
    }

    #[test]
    fn composition_is_associative(m1 in frame_motion::<A, B>(), m2 in frame_motion::<B, C>(), m3 in frame_motion::<C, Inertial>()) {
        let left = m1.then(&m2).then(&m3).parts();
        let right = m1.then(&m2.then(&m3)).parts();
        // Scale: three motions stacked, each term bounded by the product of their scales.
        let s = kinematic_scale(&m1, &PointKinematics::at_rest(m2.position()))
            * (1.0 + m2.angular_velocity().norm() + m3.angular_velocity().norm()).powi(2);
        prop_assert!(left.rotation.angle_to(&right.rotation) < 1e-14);
        assert_close("position", &left.position, &right.position, KINEMATIC_REL_TOL, s);
        assert_close("velocity", &left.velocity, &right.velocity, KINEMATIC_REL_TOL, s);
        assert_close("acceleration", &left.acceleration, &right.acceleration, KINEMATIC_REL_TOL, s);
        assert_close("angular_velocity", &left.angular_velocity, &right.angular_velocity, KINEMATIC_REL_TOL, s);
        assert_close("angular_acceleration", &left.angular_acceleration, &right.angular_acceleration, KINEMATIC_REL_TOL, s);
    }

    #[test]
    fn mapping_through_a_composition_equals_mapping_step_by_step(m1 in frame_motion::<A, B>(), m2 in frame_motion::<B, C>(), pt in point::<C>()) {
        let direct = m1.then(&m2).map_point(&pt);
        let stepwise = m1.map_point(&m2.map_point(&pt));
        let s = kinematic_scale(&m1, &m2.map_point(&pt)) * (1.0 + m2.angular_velocity().norm()).powi(2);
        assert_points_close("composed", &direct, &stepwise, s);
    }

    #[test]
    fn newtons_law_holds_in_the_moving_frame_once_apparent_terms_are_added(m in frame_motion::<Inertial, B>(), pt in point::<B>()) {
        // The point's true acceleration, from mapping its motion in B into the inertial frame.
        let inertial = m.map_point(&pt);
        let terms = apparent_acceleration(&m, &pt);
        // Seen in B: rotated inertial acceleration plus the apparent terms (which include −a₀).
        let seen_in_b = m.rotation().inverse_transform_vector(&inertial.acceleration) + terms.total;
        assert_close("acceleration seen in B", &seen_in_b, &pt.acceleration, KINEMATIC_REL_TOL, kinematic_scale(&m, &pt));
        // The total is the sum of its parts.
        let sum = terms.translational + terms.coriolis + terms.centrifugal + terms.euler;
        assert_close("total", &terms.total, &sum, 1e-15, 1.0 + terms.total.norm() + sum.norm());
    }
}

/// A motion defined for all time: rotation about a fixed axis with constant angular
/// acceleration, and a cubic origin path. Its exact derivatives are known, so the library's
/// mapping can be compared with finite differences of mapped positions.
#[derive(Debug, Clone, Copy)]
struct TimedMotion {
    axis: Vector3<f64>,
    angle0: f64,
    rate0: f64,
    angular_acceleration: f64,
    p: [Vector3<f64>; 4],
    base: UnitQuaternion<f64>,
}

impl TimedMotion {
    fn at<P: rotaframe::frames::Frame, Q: rotaframe::frames::Frame>(&self, t: f64) -> FrameMotion<P, Q> {
        let spin = FrameMotion::<P, Q>::about_axis(
            self.axis,
            self.angle0 + self.rate0 * t + 0.5 * self.angular_acceleration * t * t,
            self.rate0 + self.angular_acceleration * t,
            self.angular_acceleration,
        )
        .unwrap()
        .parts();
        let [p0, p1, p2, p3] = self.p;
        FrameMotion::from_parts(MotionParts {
            // A fixed offset rotation applied in the child makes the axis general in both frames.
            rotation: spin.rotation * self.base,
            position: p0 + p1 * t + p2 * t * t + p3 * t * t * t,
            velocity: p1 + p2 * (2.0 * t) + p3 * (3.0 * t * t),
            acceleration: p2 * 2.0 + p3 * (6.0 * t),
            ..spin
        })
        .unwrap()
    }
}

fn timed_motion() -> impl Strategy<Value = TimedMotion> {
    (unit_vector(), -3.0..3.0f64, -2.0..2.0f64, -2.0..2.0f64, prop::array::uniform4(vector(10.0)), unit_quaternion()).prop_map(
        |(axis, angle0, rate0, angular_acceleration, p, base)| TimedMotion { axis, angle0, rate0, angular_acceleration, p, base },
    )
}

/// Finite-difference step and tolerance. With h = 1e-2 s and rates ≤ 2 rad/s (4 rad/s²·s at
/// most over the stencil), derivatives of mapped positions of size ≤ 10 m have truncation errors
/// of order h⁴·|f⁽⁵⁾|/30 ≈ 1e-8·(4⁵·10)/30 ≈ 3e-6 m/s in the worst case and much less
/// typically; rounding adds about ε·10/h² ≈ 2e-11. 1e-5 relative to the scale of the motion
/// sits above both while a missing Coriolis, Euler or centripetal term (order 1-100) fails.
const FD_STEP: f64 = 1e-2;
const FD_REL_TOL: f64 = 1e-5;

fn fd_scale(v: &Vector3<f64>) -> f64 {
    10.0 + v.norm()
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn mapped_velocity_and_acceleration_match_finite_differences_of_position(
        frame in timed_motion(), point in timed_motion(), t in -1.0..1.0f64,
    ) {
        // The point moves along a cubic path in the child frame; its own "rotation" is unused.
        let point_at = |s: f64| {
            let m = point.at::<B, C>(s);
            PointKinematics::<B>::new(m.position(), m.velocity(), m.acceleration())
        };
        let mapped_position = |s: f64| frame.at::<A, B>(s).map_point(&point_at(s)).position;
        let mapped = frame.at::<A, B>(t).map_point(&point_at(t));
        let fd_v = central_first(mapped_position, t, FD_STEP);
        let fd_a = central_second(mapped_position, t, FD_STEP);
        assert_close("velocity", &mapped.velocity, &fd_v, FD_REL_TOL, fd_scale(&mapped.velocity));
        assert_close("acceleration", &mapped.acceleration, &fd_a, FD_REL_TOL, fd_scale(&mapped.acceleration));
    }

    #[test]
    fn composed_and_inverted_rates_match_finite_differences_of_rotation(f1 in timed_motion(), f2 in timed_motion(), t in -1.0..1.0f64) {
        let composed = |s: f64| f1.at::<A, B>(s).then(&f2.at::<B, C>(s));
        let inverted = |s: f64| f1.at::<A, B>(s).inverse();
        let rot = |m: FrameMotion<A, C>| m.rotation_matrix();
        // ω from R: [ω×] = Ṙ Rᵀ; α as the derivative of ω.
        let omega_fd = |s: f64| vee(&(central_first(|u| rot(composed(u)), s, FD_STEP) * rot(composed(s)).transpose()));
        let m = composed(t);
        assert_close("composed angular_velocity", &m.angular_velocity(), &omega_fd(t), FD_REL_TOL, fd_scale(&m.angular_velocity()));
        let alpha_fd = central_first(|s| composed(s).angular_velocity(), t, FD_STEP);
        assert_close("composed angular_acceleration", &m.angular_acceleration(), &alpha_fd, FD_REL_TOL, fd_scale(&m.angular_acceleration()));
        // Origin of the composed frame: its velocity and acceleration are derivatives of its position.
        let v_fd = central_first(|s| composed(s).position(), t, FD_STEP);
        let a_fd = central_second(|s| composed(s).position(), t, FD_STEP);
        assert_close("composed velocity", &m.velocity(), &v_fd, FD_REL_TOL, fd_scale(&m.velocity()));
        assert_close("composed acceleration", &m.acceleration(), &a_fd, FD_REL_TOL, fd_scale(&m.acceleration()));
        // Inverse: same checks on P relative to C.
        let inv = inverted(t);
        let r_inv = |s: f64| -> Matrix3<f64> { inverted(s).rotation_matrix() };
        let w_inv_fd = vee(&(central_first(r_inv, t, FD_STEP) * r_inv(t).transpose()));
        assert_close("inverse angular_velocity", &inv.angular_velocity(), &w_inv_fd, FD_REL_TOL, fd_scale(&inv.angular_velocity()));
        let v_inv_fd = central_first(|s| inverted(s).position(), t, FD_STEP);
        let a_inv_fd = central_second(|s| inverted(s).position(), t, FD_STEP);
        assert_close("inverse velocity", &inv.velocity(), &v_inv_fd, FD_REL_TOL, fd_scale(&inv.velocity()));
        assert_close("inverse acceleration", &inv.acceleration(), &a_inv_fd, FD_REL_TOL, fd_scale(&inv.acceleration()));
        let al_inv_fd = central_first(|s| inverted(s).angular_velocity(), t, FD_STEP);
        assert_close("inverse angular_acceleration", &inv.angular_acceleration(), &al_inv_fd, FD_REL_TOL, fd_scale(&inv.angular_acceleration()));
    }
}
