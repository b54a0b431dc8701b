//! Invariants of the Earth models: geodetic round trips over dense grids, orthonormal
//! local-level rotations, and the vehicle-carried NED frame against finite differences.

use nalgebra::{Matrix3, Vector3};
use proptest::prelude::*;
use rotaframe::Error;
use rotaframe::earth::*;
use rotaframe::nalgebra;
use rotaframe_tests::*;

const DEG: f64 = core::f64::consts::PI / 180.0;

/// North, east and up round-trip distances (m) from `start` through ECEF and back.
fn round_trip(model: &EarthModel, start: &Geodetic) -> [f64; 3] {
    let back = ecef_to_geodetic(model, &geodetic_to_ecef(model, start).unwrap()).unwrap();
    let r = model.semi_major_axis() + start.height;
    let mut dl = back.longitude - start.longitude;
    dl -= core::f64::consts::TAU * (dl / core::f64::consts::TAU).round();
    [(back.latitude - start.latitude) * r, dl * r * start.latitude.cos(), back.height - start.height]
}

/// A dense grid: latitudes every 0.25° (with an irregular offset so that grid lines do not fall
/// on special values only) including both poles, 72 longitudes, and the given heights.
fn dense_grid(heights: &[f64]) -> impl Iterator<Item = Geodetic> + '_ {
    heights.iter().flat_map(|&h| {
        (0..=720).flat_map(move |i| {
            let lat = (-90.0 + 0.25 * f64::from(i) + 0.0371 * f64::from((i * 7) % 5)).min(90.0) * DEG;
            (0..72).map(move |j| Geodetic::new(lat, (-180.0 + 5.0 * f64::from(j) + 1.234_567) * DEG, h))
        })
    })
}

#[test]
fn geodetic_round_trip_is_within_a_nanometre_near_the_ellipsoid() {
    // Goal: 1 nm for heights −10 km to +10 km, on 2.1 million grid points. Measured when
    // written: 0.71 nm north and east (half the spacing of f64 latitudes above 1 rad), 0.66 nm
    // up. An ECEF coordinate near the surface is itself only resolved to 0.93 nm.
    let heights: Vec<f64> = (0..=40).map(|k| -10_000.0 + 500.0 * f64::from(k)).collect();
    let mut worst = [0.0f64; 3];
    for g in dense_grid(&heights) {
        for (w, e) in worst.iter_mut().zip(round_trip(&WGS84, &g)) {
            *w = w.max(e.abs());
        }
    }
    assert!(worst.iter().all(|&w| w <= 1e-9), "north/east/up worst {worst:?} m");
}

#[test]
fn geodetic_round_trip_is_within_ten_nanometres_out_to_40000_km() {
    // Goal: 10 nm out to 40 000 km altitude. Measured when written: 5.2 nm north and east,
    // 7.45 nm up — one unit in the last place of an f64 height of 4e7 m.
    let heights: Vec<f64> = (0..60).map(|k| 1.0e4 * 4000f64.powf(f64::from(k) / 59.0)).collect();
    let mut worst = [0.0f64; 3];
    for g in dense_grid(&heights) {
        for (w, e) in worst.iter_mut().zip(round_trip(&WGS84, &g)) {
            *w = w.max(e.abs());
        }
    }
    assert!(worst.iter().all(|&w| w <= 1e-8), "north/east/up worst {worst:?} m");
}

#[test]
fn ecef_round_trip_returns_each_coordinate_within_a_nanometre() {
    // Starting from ECEF: every coordinate comes back within 1 nm for points within 10 km of
    // the ellipsoid. Measured when written: 0.93 nm, one unit in the last place of a coordinate.
    let heights = [-10_000.0, -1234.5, 0.0, 777.0, 10_000.0];
    let mut worst: f64 = 0.0;
    for g in dense_grid(&heights) {
        let x = geodetic_to_ecef(&WGS84, &g).unwrap();
        let again = geodetic_to_ecef(&WGS84, &ecef_to_geodetic(&WGS84, &x).unwrap()).unwrap();
        worst = worst.max((again - x).amax());
    }
    assert!(worst <= 1e-9, "worst {worst:e} m");
}

#[test]
fn poles_have_defined_coordinates() {
    // On the polar axis latitude is ±π/2 exactly and longitude is 0 (documented convention).
    for z in [WGS84.semi_minor_axis(), -WGS84.semi_minor_axis() - 250.0, 3.0e7] {
        let g = ecef_to_geodetic(&WGS84, &Vector3::new(0.0, 0.0, z)).unwrap();
        assert_eq!(g.latitude, core::f64::consts::FRAC_PI_2.copysign(z));
        assert_eq!(g.longitude, 0.0);
        // Tolerance 1 nm: the height is |z| − b.
        assert!((g.height - (z.abs() - WGS84.semi_minor_axis())).abs() < 1e-9, "{g:?}");
    }
}

#[test]
fn bad_geodetic_input_is_rejected_with_the_argument_named() {
    let err = geodetic_to_ecef(&WGS84, &Geodetic::new(1.6, 0.0, 0.0)).unwrap_err();
    assert!(matches!(err, Error::OutOfRange { quantity: "latitude", .. }), "{err}");
    let err = geodetic_to_ecef(&WGS84, &Geodetic::new(0.1, f64::INFINITY, 0.0)).unwrap_err();
    assert_eq!(err, Error::NonFinite { quantity: "longitude" });
    let err = ecef_to_geodetic(&WGS84, &Vector3::new(1000.0, -2000.0, 30_000.0)).unwrap_err();
    assert!(matches!(err, Error::NearEarthCentre { quantity: "ecef", .. }), "{err}");
    assert!(err.to_string().contains("42841"), "names the radius: {err}");
    let mut out = [[7.0; 3]; 3];
    let err = geodetic_to_ecef_slices(&WGS84, &[0.0, 0.1, 2.0], &[0.0; 3], &[0.0; 3], &mut out).unwrap_err();
    assert_eq!(err.index, 2);
    assert_eq!(out, [[7.0; 3]; 3], "nothing written on error");
    let err = transport_rate_ned(&WGS84, 90.0 * DEG - 1e-7, 0.0, &Vector3::new(1.0, 1.0, 0.0)).unwrap_err();
    assert!(matches!(err, Error::NearPole { quantity: "latitude", .. }), "{err}");
    // Just outside the exclusion the rates are finite.
    assert!(
        transport_rate_ned(&WGS84, 90.0 * DEG - 2e-6, 0.0, &Vector3::new(1.0, 1.0, 0.0)).unwrap().iter().all(|v| v.is_finite())
    );
}

#[test]
fn batch_and_single_conversions_agree_bit_for_bit() {
    // The batch loop is vectorised; it must compute exactly what the single call computes, so
    // that Rust, Python and C agree to the last bit.
    let lat: Vec<f64> = (0..1001).map(|i| (f64::from(i) * 0.179 - 89.5).clamp(-90.0, 90.0) * DEG).collect();
    let lon: Vec<f64> = (0..1001).map(|i| f64::from(i) * 3.7 - 1800.0).collect();
    let h: Vec<f64> = (0..1001).map(|i| f64::from(i) * 37.0 - 9000.0).collect();
    let mut xyz = vec![[0.0; 3]; lat.len()];
    geodetic_to_ecef_slices(&WGS84, &lat, &lon, &h, &mut xyz).unwrap();
    let (mut la, mut lo, mut hh) = (vec![0.0; 1001], vec![0.0; 1001], vec![0.0; 1001]);
    ecef_to_geodetic_slices(&WGS84, &xyz, &mut la, &mut lo, &mut hh).unwrap();
    for i in 0..lat.len() {
        let single = geodetic_to_ecef(&WGS84, &Geodetic::new(lat[i], lon[i], h[i])).unwrap();
        assert_eq!(xyz[i], [single.x, single.y, single.z], "forward {i}");
        let g = ecef_to_geodetic(&WGS84, &single).unwrap();
        assert_eq!([la[i], lo[i], hh[i]], [g.latitude, g.longitude, g.height], "inverse {i}");
    }
    // Longitudes beyond the fast range take the wrapped path and still round-trip.
    let far = geodetic_to_ecef(&WGS84, &Geodetic::new(0.3, 2.0e6, 10.0)).unwrap();
    let near = geodetic_to_ecef(&WGS84, &Geodetic::new(0.3, 2.0e6 % core::f64::consts::TAU, 10.0)).unwrap();
    assert!((far - near).norm() < 1e-6);
}

fn is_rotation(m: &Matrix3<f64>) -> bool {
    // Orthonormal to a few ulps, determinant +1.
    (m.transpose() * m - Matrix3::identity()).amax() < 4.0 * f64::EPSILON && (m.determinant() - 1.0).abs() < 4.0 * f64::EPSILON
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn round_trip_anywhere_from_minus_10_km_to_40000_km(lat in -90.0..=90.0f64, lon in -720.0..720.0f64, h in -10_000.0..4.0e7f64) {
        let limit = if h.abs() <= 10_000.0 { 1e-9 } else { 1e-8 };
        let e = round_trip(&WGS84, &Geodetic::new(lat * DEG, lon * DEG, h));
        prop_assert!(e.iter().all(|v| v.abs() <= limit), "{e:?}");
    }

    #[test]
    fn round_trip_for_custom_ellipsoids_up_to_the_largest_flattening(inv_f in 10.0..1000.0f64, lat in -90.0..=90.0f64, h in -10_000.0..1.0e6f64) {
        // Other ellipsoids (down to f = 0.1, the largest accepted) keep the same algorithm
        // working to the nanometre near the surface: Bowring's iteration converges
        // cubically in f, and two steps suffice for f ≤ 0.1 (measured: ≤ 1 nm).
        let model = EarthModel::from_defining_constants(6.0e6, 1.0 / inv_f, 4.0e14, 7.0e-5).unwrap();
        let e = round_trip(&model, &Geodetic::new(lat * DEG, 0.4, h));
        let limit = if h.abs() <= 10_000.0 { 1e-9 } else { 1e-8 };
        prop_assert!(e.iter().all(|v| v.abs() <= limit), "{e:?}");
    }

    #[test]
    fn local_level_rotations_are_orthonormal_and_consistent(lat in -90.0..=90.0f64, lon in -400.0..400.0f64) {
        let (lat, lon) = (lat * DEG, lon * DEG);
        let ned = ned_from_ecef(lat, lon).unwrap();
        let enu = enu_from_ecef(lat, lon).unwrap();
        prop_assert!(is_rotation(&ned) && is_rotation(&enu));
        // The quaternion form maps NED to ECEF: it is the transpose of C_e^n.
        let q = ecef_from_ned_quaternion(lat, lon).unwrap().to_rotation_matrix().into_inner();
        prop_assert!((q - ned.transpose()).amax() < 4.0 * f64::EPSILON);
        // Down is minus the ellipsoidal normal: it points from the surface point to the axis side.
        let x = geodetic_to_ecef(&WGS84, &Geodetic::new(lat, lon, 0.0)).unwrap();
        let down = ned.row(2).transpose();
        prop_assert!(down.dot(&x) < 0.0);
    }
}

/// A vehicle path given in ECEF as a cubic polynomial near the surface, from which the exact
/// NED velocity and Earth-relative acceleration follow.
#[derive(Debug, Clone, Copy)]
struct EcefPath {
    c: [Vector3<f64>; 4],
}

impl EcefPath {
    fn position(&self, t: f64) -> Vector3<f64> {
        self.c[0] + self.c[1] * t + self.c[2] * (t * t) + self.c[3] * (t * t * t)
    }
    fn velocity(&self, t: f64) -> Vector3<f64> {
        self.c[1] + self.c[2] * (2.0 * t) + self.c[3] * (3.0 * t * t)
    }
    fn acceleration(&self, t: f64) -> Vector3<f64> {
        self.c[2] * 2.0 + self.c[3] * (6.0 * t)
    }
    fn ned_motion(&self, t: f64) -> rotaframe::motion::FrameMotion<rotaframe::frames::Ecef, rotaframe::frames::Ned> {
        let g = ecef_to_geodetic(&WGS84, &self.position(t)).unwrap();
        let c = ned_from_ecef(g.latitude, g.longitude).unwrap();
        local_level_motion(&WGS84, &g, &(c * self.velocity(t)), &(c * self.acceleration(t))).unwrap()
    }
}

fn ecef_path() -> impl Strategy<Value = EcefPath> {
    (-80.0..80.0f64, -180.0..180.0f64, -1000.0..12_000.0f64, vector(300.0), vector(5.0), vector(0.05)).prop_map(
        |(lat, lon, h, v, a, j)| {
            let p0 = geodetic_to_ecef(&WGS84, &Geodetic::new(lat * DEG, lon * DEG, h)).unwrap();
            EcefPath { c: [p0, v, a * 0.5, j / 6.0] }
        },
    )
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn vehicle_ned_frame_rates_match_finite_differences(path in ecef_path(), t in -5.0..5.0f64) {
        // The transport rate (angular velocity of NED relative to ECEF) and its derivative
        // against 5-point finite differences of the frame's rotation and rate along an exact
        // path. Step 0.5 s: the rates change on time scales of R/v > 2e4 s, so truncation is
        // ~(0.5/2e4)⁴ ≈ 4e-19 relative. Rounding: each rotation matrix carries ~1e-16 rad of
        // noise (it is rebuilt from an inverse geodetic conversion), which the stencil turns
        // into up to ~2e-15 rad/s; the rates themselves are good to 1e-16 relative, so the
        // angular-acceleration stencil sees ~1e-20 rad/s of noise over 0.5 s. Tolerances: 1e-9
        // of the rate plus 1e-14 rad/s, and 1e-7 of the acceleration plus 1e-15 rad/s²; a wrong
        // term in either is of the order of the quantity itself.
        let h = 0.5;
        let m = path.ned_motion(t);
        assert_close("position", &m.position(), &path.position(t), 1e-15, path.position(t).norm());
        // NED velocity rotated back with an independently built rotation: a few ulps each way.
        assert_close("velocity", &m.velocity(), &path.velocity(t), 1e-14, path.velocity(t).norm() + 1.0);
        assert_close("acceleration", &m.acceleration(), &path.acceleration(t), 1e-14, path.acceleration(t).norm() + 1.0);
        let r = |s: f64| path.ned_motion(s).rotation_matrix();
        let omega_fd = vee(&(central_first(r, t, h) * r(t).transpose()));
        assert_close("angular_velocity", &m.angular_velocity(), &omega_fd, 1e-9, m.angular_velocity().norm() + 1e-5);
        let alpha_fd = central_first(|s| path.ned_motion(s).angular_velocity(), t, h);
        assert_close("angular_acceleration", &m.angular_acceleration(), &alpha_fd, 1e-7, m.angular_acceleration().norm() + 1e-8);
    }
}
