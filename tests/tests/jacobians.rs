//! Every analytic Jacobian of `rotaframe::linearise` against central finite differences of the
//! nonlinear function itself, over the whole domain (property tests; common practice for
//! verifying derivatives, e.g. Nocedal and Wright, *Numerical Optimization*, 2nd ed., §8.1).
//!
//! Steps and tolerance. A central difference with step `h` has truncation error
//! `h² |f'''| / 6` and rounding error about `ε |f| / h`. Each argument's step is chosen from its
//! scale `s` as `h = 1e-5 s` (angles: `h = 1e-5` rad; positions and rates: `1e-5` of their
//! magnitude or of 1 unit, whichever is larger; heights: `1e-5 (|h| + a)`, since gravity
//! varies on the scale of the Earth's radius `a`): truncation ~1e-10 and rounding ~1e-11 of the derivative's scale,
//! both far inside the 1e-7 relative tolerance of the issue. Rotations are perturbed as the
//! module does (`exp([δθ×]) R`) and rotation results differenced through the logarithm. An
//! entry passes when `|J − J_fd| ≤ 1e-7 · max(largest entry of its row, largest of its column)`
//! (the rows and columns carry different units), or than the difference quotient's rounding
//! floor (see `numeric`).

use nalgebra::{DMatrix, DVector, Matrix3, UnitQuaternion, Vector3};
use proptest::prelude::*;
use rotaframe::apparent::{FrameDynamics, apparent_terms};
use rotaframe::earth::{self, Geodetic, GravityModel, WGS84};
use rotaframe::frames::{AnyFrame, PointKinematics};
use rotaframe::linearise::{self as lin};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra;
use rotaframe::rotation::EulerZyx;
use rotaframe_tests::config;

type Motion = FrameMotion<AnyFrame, AnyFrame>;

const TOLERANCE: f64 = 1e-7;

/// Central differences of `f` at `x` with steps `h`, column by column, and each column's
/// rounding floor: a difference quotient cannot resolve less than about `ε |f| / h`, so
/// entries below 100 times that (zero in exact arithmetic, such as the east gravity component
/// of an axisymmetric field) are compared to the floor instead.
fn numeric(f: &dyn Fn(&DVector<f64>) -> DVector<f64>, x: &DVector<f64>, h: &[f64]) -> (DMatrix<f64>, Vec<f64>) {
    let f0 = f(x);
    let m = f0.len();
    let mut j = DMatrix::zeros(m, x.len());
    let mut floor = Vec::with_capacity(x.len());
    for k in 0..x.len() {
        let (mut plus, mut minus) = (x.clone(), x.clone());
        plus[k] += h[k];
        minus[k] -= h[k];
        let (fp, fm) = (f(&plus), f(&minus));
        floor.push(100.0 * f64::EPSILON * fp.amax().max(fm.amax()).max(f0.amax()) / h[k]);
        j.set_column(k, &((fp - fm) / (2.0 * h[k])));
    }
    (j, floor)
}

fn compare(what: &str, analytic: &DMatrix<f64>, (numeric, floor): &(DMatrix<f64>, Vec<f64>)) {
    assert_eq!(analytic.shape(), numeric.shape(), "{what}: shape");
    for i in 0..analytic.nrows() {
        for k in 0..analytic.ncols() {
            let scale =
                numeric.row(i).amax().max(numeric.column(k).amax()).max(analytic.row(i).amax()).max(analytic.column(k).amax());
            let d = (analytic[(i, k)] - numeric[(i, k)]).abs();
            assert!(
                d <= (TOLERANCE * scale).max(floor[k]),
                "{what}: entry ({i}, {k}) analytic {} numeric {} (scale {scale:e})",
                analytic[(i, k)],
                numeric[(i, k)]
            );
        }
    }
}

fn dm<const R: usize, const C: usize>(m: &nalgebra::SMatrix<f64, R, C>) -> DMatrix<f64> {
    DMatrix::from_iterator(R, C, m.iter().copied())
}

fn exp(v: &Vector3<f64>) -> UnitQuaternion<f64> {
    UnitQuaternion::from_scaled_axis(*v)
}

/// The difference of two rotations as a parent-side small-angle vector: `log(a b⁻¹)`.
fn rotation_difference(a: &UnitQuaternion<f64>, b: &UnitQuaternion<f64>) -> Vector3<f64> {
    (a * b.inverse()).scaled_axis()
}

fn geodetic() -> impl Strategy<Value = Geodetic> {
    (-1.55..1.55f64, -3.1..3.1f64, -5000.0..3.0e7f64).prop_map(|(lat, lon, h)| Geodetic::new(lat, lon, h))
}

/// A motion as (rotation, 15 numbers) and back.
fn motion_from(rotation: UnitQuaternion<f64>, x: &[f64]) -> Motion {
    let v = |k: usize| Vector3::new(x[3 * k], x[3 * k + 1], x[3 * k + 2]);
    FrameMotion::from_parts_unchecked(MotionParts {
        rotation,
        position: v(0),
        velocity: v(1),
        acceleration: v(2),
        angular_velocity: v(3),
        angular_acceleration: v(4),
    })
}

fn motion_numbers(m: &Motion) -> Vec<f64> {
    let mut out = Vec::new();
    for v in [m.position(), m.velocity(), m.acceleration(), m.angular_velocity(), m.angular_acceleration()] {
        out.extend_from_slice(v.as_slice());
    }
    out
}

/// The 18-column numeric Jacobian of `f(motion)` (rotation columns first).
fn by_motion(f: &dyn Fn(&Motion) -> DVector<f64>, m: &Motion) -> (DMatrix<f64>, Vec<f64>) {
    let x = motion_numbers(m);
    let rotation = m.rotation();
    let scales: Vec<f64> = x.chunks(3).map(|c| Vector3::new(c[0], c[1], c[2]).norm().max(1.0)).collect();
    let mut h = vec![1e-5; 3];
    for s in &scales {
        h.extend([1e-5 * s; 3]);
    }
    let mut full = DVector::zeros(18);
    full.rows_mut(3, 15).copy_from_slice(&x);
    let g = |y: &DVector<f64>| f(&motion_from(exp(&Vector3::new(y[0], y[1], y[2])) * rotation, &y.as_slice()[3..]));
    numeric(&g, &full, &h)
}

/// A motion's 18 parts as a vector relative to a reference rotation (for motion results).
fn motion_result(m: &Motion, reference: &UnitQuaternion<f64>) -> DVector<f64> {
    let mut v = DVector::zeros(18);
    v.rows_mut(0, 3).copy_from(&rotation_difference(&m.rotation(), reference));
    v.rows_mut(3, 15).copy_from_slice(&motion_numbers(m));
    v
}

fn motion() -> impl Strategy<Value = Motion> {
    rotaframe_tests::frame_motion::<AnyFrame, AnyFrame>()
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn geodetic_to_ecef_jacobian_matches_finite_differences(p in geodetic()) {
        let (x, j) = lin::geodetic_to_ecef_jacobian(&WGS84, &p).unwrap();
        prop_assert_eq!(x, earth::geodetic_to_ecef(&WGS84, &p).unwrap());
        let f = |y: &DVector<f64>| DVector::from_column_slice(earth::geodetic_to_ecef(&WGS84, &Geodetic::new(y[0], y[1], y[2])).unwrap().as_slice());
        let h = [1e-5, 1e-5, 1e-5 * p.height.abs().max(1.0)];
        compare("geodetic_to_ecef", &dm(&j), &numeric(&f, &DVector::from_vec(vec![p.latitude, p.longitude, p.height]), &h));
    }

    #[test]
    fn ecef_to_geodetic_jacobian_matches_finite_differences_away_from_the_poles(p in geodetic()) {
        let x = earth::geodetic_to_ecef(&WGS84, &p).unwrap();
        match lin::ecef_to_geodetic_jacobian(&WGS84, &x) {
            Ok((_, j)) => {
                let f = |y: &DVector<f64>| {
                    let g = earth::ecef_to_geodetic(&WGS84, &Vector3::new(y[0], y[1], y[2])).unwrap();
                    DVector::from_vec(vec![g.latitude, g.longitude, g.height])
                };
                let h = [1e-5 * x.norm(); 3];
                compare("ecef_to_geodetic", &dm(&j), &numeric(&f, &DVector::from_column_slice(x.as_slice()), &h));
            }
            Err(e) => prop_assert!(p.latitude.abs() > earth::POLE_EXCLUSION.min(1.55) - 1e-3 || e.to_string().contains("pole"), "{e}"),
        }
    }

    #[test]
    fn local_level_rotation_jacobian_matches_finite_differences(lat in -1.55..1.55f64, lon in -3.1..3.1f64) {
        let j = lin::local_level_rotation_jacobian(lat, lon).unwrap();
        let q = |la: f64, lo: f64| earth::ecef_from_ned_quaternion(la, lo).unwrap();
        let reference = q(lat, lon);
        let f = |y: &DVector<f64>| DVector::from_column_slice(rotation_difference(&q(y[0], y[1]), &reference).as_slice());
        compare("local_level_rotation", &dm(&j), &numeric(&f, &DVector::from_vec(vec![lat, lon]), &[1e-5, 1e-5]));
    }

    #[test]
    fn map_point_jacobians_match_finite_differences(m in motion(), p in rotaframe_tests::point::<AnyFrame>()) {
        let (mapped, jp, jm) = lin::map_point_jacobian(&m, &p);
        prop_assert_eq!(mapped, m.map_point(&p));
        let numbers = |k: &PointKinematics<AnyFrame>| {
            let mut v = DVector::zeros(9);
            v.rows_mut(0, 3).copy_from(&k.position);
            v.rows_mut(3, 3).copy_from(&k.velocity);
            v.rows_mut(6, 3).copy_from(&k.acceleration);
            v
        };
        let x = numbers(&p);
        let of_point = |y: &DVector<f64>| {
            numbers(&m.map_point(&PointKinematics::new(Vector3::new(y[0], y[1], y[2]), Vector3::new(y[3], y[4], y[5]), Vector3::new(y[6], y[7], y[8]))))
        };
        let h: Vec<f64> = (0..9).map(|k| 1e-5 * x.rows(3 * (k / 3), 3).norm().max(1.0)).collect();
        compare("map_point (point)", &dm(&jp), &numeric(&of_point, &x, &h));
        compare("map_point (motion)", &dm(&jm), &by_motion(&|mm| numbers(&mm.map_point(&p)), &m));
    }

    #[test]
    fn then_and_inverse_jacobians_match_finite_differences(a in motion(), b in motion()) {
        let (c, ja, jb) = lin::then_jacobian(&a, &b);
        prop_assert_eq!(c, a.then(&b));
        let reference = c.rotation();
        compare("then (first)", &dm(&ja), &by_motion(&|x| motion_result(&x.then(&b), &reference), &a));
        compare("then (second)", &dm(&jb), &by_motion(&|x| motion_result(&a.then(x), &reference), &b));
        let (inv, ji) = lin::inverse_jacobian(&a);
        let reference = inv.rotation();
        compare("inverse", &dm(&ji), &by_motion(&|x| motion_result(&x.inverse(), &reference), &a));
    }

    #[test]
    fn euler_angle_jacobians_match_finite_differences_away_from_gimbal_lock(yaw in -3.1..3.1f64, pitch in -1.5..1.5f64, roll in -3.1..3.1f64) {
        let e = EulerZyx::new(yaw, pitch, roll);
        let (q, j) = lin::quaternion_from_euler_jacobian(&e);
        let f = |y: &DVector<f64>| DVector::from_column_slice(rotation_difference(&EulerZyx::new(y[0], y[1], y[2]).to_quaternion(), &q).as_slice());
        compare("quaternion_from_euler", &dm(&j), &numeric(&f, &DVector::from_vec(vec![yaw, pitch, roll]), &[1e-5; 3]));
        let (back, ji) = lin::euler_from_quaternion_jacobian(&q).unwrap();
        let g = |y: &DVector<f64>| {
            let b = EulerZyx::from_quaternion(&(exp(&Vector3::new(y[0], y[1], y[2])) * q));
            // Unwrap the angles next to the unperturbed ones (yaw and roll are periodic).
            let near = |x: f64, to: f64| to + (x - to + std::f64::consts::PI).rem_euclid(2.0 * std::f64::consts::PI) - std::f64::consts::PI;
            DVector::from_vec(vec![near(b.yaw, back.yaw), b.pitch, near(b.roll, back.roll)])
        };
        compare("euler_from_quaternion", &dm(&ji), &numeric(&g, &DVector::zeros(3), &[1e-6; 3]));
        prop_assert!((dm(&(ji * j)) - DMatrix::<f64>::identity(3, 3)).amax() < 1e-9);
    }

    #[test]
    fn rotation_vector_jacobians_match_finite_differences(axis in rotaframe_tests::unit_vector(), angle in 0.0..3.1f64) {
        let phi = axis * angle;
        let (q, j) = lin::quaternion_from_rotation_vector_jacobian(&phi).unwrap();
        let f = |y: &DVector<f64>| DVector::from_column_slice(rotation_difference(&exp(&Vector3::new(y[0], y[1], y[2])), &q).as_slice());
        compare("quaternion_from_rotation_vector", &dm(&j), &numeric(&f, &DVector::from_column_slice(phi.as_slice()), &[1e-5; 3]));
        let (back, ji) = lin::rotation_vector_from_quaternion_jacobian(&q).unwrap();
        let g = |y: &DVector<f64>| DVector::from_column_slice((exp(&Vector3::new(y[0], y[1], y[2])) * q).scaled_axis().as_slice());
        compare("rotation_vector_from_quaternion", &dm(&ji), &numeric(&g, &DVector::zeros(3), &[1e-6; 3]));
        prop_assert!((back - phi).norm() < 1e-12);
    }

    #[test]
    fn apparent_term_jacobians_match_finite_differences(w in rotaframe_tests::vector(10.0), al in rotaframe_tests::vector(10.0), a0 in rotaframe_tests::vector(50.0), r in rotaframe_tests::vector(1e4), v in rotaframe_tests::vector(1e3)) {
        let dynamics = FrameDynamics { angular_velocity: w, angular_acceleration: al, origin_acceleration: a0 };
        let (_, j) = lin::apparent_terms_jacobian(&dynamics, &r, &v);
        let total = |d: &FrameDynamics, r: &Vector3<f64>, v: &Vector3<f64>| DVector::from_column_slice(apparent_terms(d, r, v).total.as_slice());
        let x = DVector::from_iterator(15, r.iter().chain(v.iter()).chain(a0.iter()).chain(w.iter()).chain(al.iter()).copied());
        let f = |y: &DVector<f64>| {
            let p = |k: usize| Vector3::new(y[3 * k], y[3 * k + 1], y[3 * k + 2]);
            total(&FrameDynamics { origin_acceleration: p(2), angular_velocity: p(3), angular_acceleration: p(4) }, &p(0), &p(1))
        };
        let h: Vec<f64> = (0..15).map(|k| 1e-5 * x.rows(3 * (k / 3), 3).norm().max(1.0)).collect();
        let mut analytic = DMatrix::zeros(3, 15);
        for (k, block) in [j.position, j.velocity, j.origin_acceleration, j.angular_velocity, j.angular_acceleration].iter().enumerate() {
            analytic.view_mut((0, 3 * k), (3, 3)).copy_from(block);
        }
        compare("apparent terms", &analytic, &numeric(&f, &x, &h));
    }

    #[test]
    fn gravity_jacobians_match_finite_differences(p in geodetic()) {
        let (_, (dlat, dh)) = lin::normal_gravity_jacobian(&WGS84, p.latitude, p.height.min(9.0e6)).unwrap();
        let gamma = |y: &DVector<f64>| DVector::from_element(1, earth::normal_gravity_at_height(&WGS84, y[0], y[1]).unwrap());
        compare("normal_gravity", &DMatrix::from_row_slice(1, 2, &[dlat, dh]), &numeric(&gamma, &DVector::from_vec(vec![p.latitude, p.height.min(9.0e6)]), &[1e-5, 1e-5 * (p.height.abs().min(9.0e6) + 6.4e6)]));
        let x = earth::geodetic_to_ecef(&WGS84, &p).unwrap();
        let hx = [1e-5 * x.norm(); 3];
        let at = |y: &DVector<f64>| Vector3::new(y[0], y[1], y[2]);
        let xs = DVector::from_column_slice(x.as_slice());
        let (_, jg) = lin::gravitation_jacobian(&WGS84, &x).unwrap();
        compare("gravitation", &dm(&jg), &numeric(&|y| DVector::from_column_slice(earth::gravitation_ecef(&WGS84, &at(y)).unwrap().as_slice()), &xs, &hx));
        for model in [GravityModel::Normal, GravityModel::J2] {
            if let Ok((_, je)) = lin::gravity_model_ecef_jacobian(&WGS84, model, &x) {
                compare("gravity_ecef", &dm(&je), &numeric(&|y| DVector::from_column_slice(model.gravity_ecef(&WGS84, &at(y)).unwrap().as_slice()), &xs, &hx));
            }
            let (_, jn) = lin::gravity_ned_jacobian(&WGS84, model, &p).unwrap();
            let f = |y: &DVector<f64>| DVector::from_column_slice(model.gravity_ned(&WGS84, &Geodetic::new(y[0], y[1], y[2])).unwrap().as_slice());
            compare("gravity_ned", &dm(&jn), &numeric(&f, &DVector::from_vec(vec![p.latitude, p.longitude, p.height]), &[1e-5, 1e-5, 1e-5 * (p.height.abs() + 6.4e6)]));
        }
    }
}

#[test]
fn singular_points_are_named_errors() {
    // ±90° pitch, a half turn, and the poles: documented errors, not infinities.
    let locked = EulerZyx::new(0.3, std::f64::consts::FRAC_PI_2, 0.1).to_quaternion();
    assert_eq!(lin::euler_from_quaternion_jacobian(&locked).unwrap_err().quantity(), "q");
    let half = UnitQuaternion::from_scaled_axis(Vector3::new(0.0, 0.0, std::f64::consts::PI));
    assert_eq!(lin::rotation_vector_from_quaternion_jacobian(&half).unwrap_err().quantity(), "q");
    let pole = earth::geodetic_to_ecef(&WGS84, &Geodetic::new(std::f64::consts::FRAC_PI_2, 0.0, 0.0)).unwrap();
    assert!(lin::ecef_to_geodetic_jacobian(&WGS84, &pole).is_err());
    // The forward geodetic Jacobian is regular at the pole (its longitude column is zero).
    let (_, j) = lin::geodetic_to_ecef_jacobian(&WGS84, &Geodetic::new(std::f64::consts::FRAC_PI_2, 0.4, 0.0)).unwrap();
    assert!(j.column(1).norm() < 1e-6 && j.column(0).norm() > 6e6);
    let _ = Matrix3::<f64>::identity();
}
