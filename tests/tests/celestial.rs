//! The IERS celestial-to-terrestrial transformation in Rust (`earth::celestial`, the frame
//! graph's `IersEarth` edge): the motion's structure (IERS Conventions 2010, eq. 5.1: the CIP
//! is the ITRS pole when polar motion is zero), the graph edge against the function it wraps,
//! its declaration in a configuration file, and inertial-frame physics — a satellite-like free
//! body propagated in GCRS and mapped to ITRS agrees with the same body propagated in ITRS with
//! the full motion (the definition of the apparent accelerations; Goldstein, Classical
//! Mechanics, 3rd ed., §4.10). The comparison with the reference library is in
//! `tests/python/test_celestial.py`.

use nalgebra::Vector3;
use rotaframe::earth::celestial::{PoleCoordinates, celestial_to_terrestrial, cip_coordinates, itrs_motion};
use rotaframe::graph::{FrameGraph, IersEarth};
use rotaframe::nalgebra;
use rotaframe::propagate::{self, Gravitation, Motion, Settings, map_from_inertial};
use rotaframe::time::{EarthOrientation, JulianDate};

/// Invented daily Earth orientation rows around 2024-03-01 (MJD 60370): UT1 − UTC drifting by
/// 0.5 ms a day, the pole wandering by a few milliarcseconds, dX and dY of a tenth of one.
fn table() -> EarthOrientation {
    let mjd: Vec<f64> = (60_360..60_381).map(f64::from).collect();
    let mas = std::f64::consts::PI / 648_000.0 / 1000.0;
    let days = |k: usize| k as f64;
    let dut1: Vec<f64> = (0..mjd.len()).map(|k| 0.0132 - 0.0005 * days(k)).collect();
    let xp: Vec<f64> = (0..mjd.len()).map(|k| (25.0 + 1.3 * days(k).sin()) * mas).collect();
    let yp: Vec<f64> = (0..mjd.len()).map(|k| (330.0 + 0.8 * days(k).cos()) * mas).collect();
    let offsets = vec![0.1 * mas; mjd.len()];
    EarthOrientation::new(&mjd, &dut1, &xp, &yp, Some((&offsets, &offsets))).unwrap()
}

#[test]
fn without_polar_motion_the_itrs_pole_is_the_cip() {
    // IERS Conventions 2010 eq. 5.1: with W = I (xp = yp = 0, s′ dropped, below 1e-11 rad over
    // a century) the third row of the GCRS → ITRS matrix is the CIP (X, Y, √(1 − X² − Y²)).
    let tt = JulianDate::new(2_460_370.5, 0.3).unwrap();
    let ut1 = JulianDate::new(2_460_370.5, 0.3 - 69.0 / 86_400.0).unwrap();
    let m = celestial_to_terrestrial(tt, ut1, &PoleCoordinates::default()).unwrap();
    let c = cip_coordinates(tt).unwrap();
    let cip = Vector3::new(c.x, c.y, (1.0 - c.x * c.x - c.y * c.y).sqrt());
    assert!((m.row(2).transpose() - cip).amax() < 1e-12);
    assert!((m * m.transpose() - nalgebra::Matrix3::identity()).amax() < 1e-15);
}

#[test]
fn the_graph_edge_is_the_motion_at_tt_seconds_after_its_epoch_and_saves_as_declared() {
    let eop = table();
    let epoch = JulianDate::new(2_460_370.5, 0.25).unwrap();
    let mut g = FrameGraph::new("gcrs", true);
    g.add_earth_iers("itrs", "gcrs", IersEarth::new(epoch, eop.clone()).unwrap()).unwrap();
    for t in [0.0, 3_600.0, -7_200.0, 86_400.0] {
        let from_graph = g.motion("gcrs", "itrs", t).unwrap();
        let direct = itrs_motion(JulianDate { jd: epoch.jd, fraction: epoch.fraction + t / 86_400.0 }, &eop.view()).unwrap();
        assert_eq!(from_graph.rotation(), direct.rotation());
        assert_eq!(from_graph.angular_velocity(), direct.angular_velocity());
    }
    // A configuration file cannot hold the table: the frame is declared, and attaches again.
    let text = g.to_toml();
    assert!(text.contains("kind = \"function\""), "{text}");
    let mut loaded = FrameGraph::from_toml(&text).unwrap();
    loaded.add_earth_iers("itrs", "gcrs", IersEarth::new(epoch, eop).unwrap()).unwrap();
    assert_eq!(loaded.motion("gcrs", "itrs", 10.0).unwrap().rotation(), g.motion("gcrs", "itrs", 10.0).unwrap().rotation());
    // Outside the table: refused when built.
    assert!(IersEarth::new(JulianDate::new(2_460_500.5, 0.0).unwrap(), table()).is_err());
}

#[test]
fn a_free_body_propagated_in_gcrs_and_in_itrs_with_the_full_motion_agrees() {
    // A low orbit (7,000 km, 7.5 km/s) for 90 minutes under point-mass gravitation (symmetric,
    // so it applies in either frame's axes): the ITRS run, with the Coriolis, centrifugal and
    // Euler terms of the full motion (precession-nutation, UT1 rate, polar motion), mapped to
    // GCRS must agree with Newton in GCRS. Goal: 1e-9 relative, the integration tolerance's
    // size (the inertial check of `propagate`'s module documentation).
    let eop = table();
    let epoch = JulianDate::new(2_460_370.5, 0.1).unwrap();
    let earth = IersEarth::new(epoch, eop).unwrap();
    let frame = |t: f64| earth.motion_at(t);
    let settings = Settings { gravitation: Gravitation::PointMass, ..Settings::default() };
    let r_gcrs = Vector3::new(7.0e6, 0.0, 0.0);
    let v_gcrs = Vector3::new(0.0, 5.3e3, 5.3e3);
    let no_force = |_: f64, _: &Vector3<f64>, _: &Vector3<f64>| Ok(Vector3::zeros());
    type NoEvent = fn(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<f64>;
    let span = 5_400.0;
    let inertial = propagate::propagate(
        &settings,
        |_| Ok(Motion::identity()),
        no_force,
        None::<NoEvent>,
        0.0,
        span,
        r_gcrs,
        v_gcrs,
        false,
        |_| Ok(()),
    )
    .unwrap();
    let (r0, v0) = map_from_inertial(&frame(0.0).unwrap(), &r_gcrs, &v_gcrs);
    let rotating =
        propagate::propagate(&settings, frame, no_force, None::<NoEvent>, 0.0, span, r0, v0, false, |_| Ok(())).unwrap();
    let (r, v) = map_from_inertial(&earth.motion_at(span).unwrap(), &inertial.position, &inertial.velocity);
    let rel = (r - rotating.position).norm() / r.norm();
    println!("90 minutes in ITRS vs GCRS: {rel:e} relative, {} steps", rotating.steps);
    assert!(rel < 1e-9 && (v - rotating.velocity).norm() / v.norm() < 1e-9);
}
