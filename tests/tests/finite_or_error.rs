//! Finite in, finite out or a named error: every public function, fed finite numbers from the
//! whole f64 range (subnormals to `f64::MAX`), either returns finite results or an error that
//! names one of its arguments. Nothing returns NaN or infinity for finite input (the contract
//! of `rotaframe::limits`; a hardening requirement, common practice for numerical libraries).

use nalgebra::{Matrix3, Quaternion, UnitQuaternion, Vector3};
use proptest::prelude::*;
use rotaframe::apparent::{FrameDynamics, apparent_terms};
use rotaframe::earth::{self, EarthModel, Geodetic, GravityModel, WGS84};
use rotaframe::frames::{AnyFrame, Eci, PointKinematics};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra;
use rotaframe::nav::{
    self, ImuErrorGenerator, ImuErrorModel, ImuIncrement, NavFrame, NavState, RecordedSlices, RecordedTrajectory,
    SensorErrorModel, Strapdown, StrapdownConfig, VerticalChannel,
};
use rotaframe::rotation::{EulerZyx, quaternion_from_matrix, quaternion_from_rotation_vector, quaternion_from_wxyz};
use rotaframe_tests::config;

/// Any finite f64, weighted so that every regime is drawn often: physical magnitudes (so that
/// the accepting paths run), the whole exponent range, and the edges (zero, subnormals, the
/// largest finite values, the supported limits and just beyond them).
fn finite() -> impl Strategy<Value = f64> {
    prop_oneof![
        3 => -1.0e7..1.0e7f64,
        1 => -2.0..2.0f64,
        3 => prop::num::f64::NORMAL | prop::num::f64::SUBNORMAL | prop::num::f64::ZERO,
        1 => prop::sample::select(vec![
            0.0, -0.0, f64::MIN_POSITIVE, 5e-324, f64::MAX, -f64::MAX, 1e15, -1e15, 1.0000001e15, 1e10, 1.0001e10, 1e9, 1e6,
            1e12, 1e100, -1e155, 1e155, 1e300, -1e300, 6378137.0, -3.2e6, core::f64::consts::FRAC_PI_2, -core::f64::consts::FRAC_PI_2,
        ]),
    ]
}

fn vec3() -> impl Strategy<Value = Vector3<f64>> {
    prop::array::uniform3(finite()).prop_map(Vector3::from)
}

fn quat4() -> impl Strategy<Value = [f64; 4]> {
    prop_oneof![prop::array::uniform4(finite()), rotaframe_tests::unit_quaternion().prop_map(|q| [q.w, q.i, q.j, q.k]),]
}

/// A rotation from finite numbers when they make one, else the identity.
fn rotation(q: [f64; 4]) -> UnitQuaternion<f64> {
    quaternion_from_wxyz(q, "q").unwrap_or_else(|_| UnitQuaternion::identity())
}

/// Asserts that a result is finite or an error naming a quantity.
fn check<T>(result: rotaframe::Result<T>, values: impl Fn(&T) -> Vec<f64>, what: &str) -> Option<T> {
    match result {
        Ok(v) => {
            let numbers = values(&v);
            assert!(numbers.iter().all(|x| x.is_finite()), "{what}: finite input gave non-finite output {numbers:?}");
            Some(v)
        }
        Err(e) => {
            assert!(!e.quantity().is_empty(), "{what}: an error must name its quantity");
            let message = e.to_string();
            assert!(message.contains(e.quantity()), "{what}: message {message:?} names the quantity");
            // Numbers print in shortest form: no run of 20 zeros from a positional f64.
            assert!(!message.contains("00000000000000000000"), "{what}: long decimal in {message:?}");
            None
        }
    }
}

fn v3(v: &Vector3<f64>) -> Vec<f64> {
    v.as_slice().to_vec()
}

fn motion_numbers<P: rotaframe::frames::Frame, C: rotaframe::frames::Frame>(m: &FrameMotion<P, C>) -> Vec<f64> {
    let p = m.parts();
    let q = p.rotation;
    [q.w, q.i, q.j, q.k]
        .into_iter()
        .chain(
            [p.position, p.velocity, p.acceleration, p.angular_velocity, p.angular_acceleration]
                .iter()
                .flat_map(|v| v.as_slice().to_vec()),
        )
        .collect()
}

fn geodetic_numbers(g: &Geodetic) -> Vec<f64> {
    vec![g.latitude, g.longitude, g.height]
}

fn nav_numbers(s: &NavState) -> Vec<f64> {
    let mut v = geodetic_numbers(&s.position);
    v.extend_from_slice(s.velocity_ned.as_slice());
    v.extend_from_slice(&[s.attitude.w, s.attitude.i, s.attitude.j, s.attitude.k]);
    v
}

/// A custom model from finite constants when they make one, else WGS 84.
fn model(constants: [f64; 4]) -> EarthModel {
    EarthModel::from_defining_constants(constants[0], constants[1], constants[2], constants[3]).unwrap_or(WGS84)
}

fn model_constants() -> impl Strategy<Value = [f64; 4]> {
    prop_oneof![
        prop::array::uniform4(finite()),
        (1e5..1e8f64, 0.0..0.1f64, 1e10..1e18f64, 0.0..1e-3f64).prop_map(|(a, f, gm, w)| [a, f, gm, w]),
    ]
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn earth_models_are_valid_or_refused(c in model_constants(), extra in prop::array::uniform3(finite())) {
        if let Some(m) = check(EarthModel::from_defining_constants(c[0], c[1], c[2], c[3]), |m| {
            let k = m.constants();
            vec![k.gamma_equator, k.gamma_pole, k.j2, k.somigliana_k, m.semi_minor_axis(), m.eccentricity_squared()]
        }, "from_defining_constants") {
            prop_assert!(m.gamma_equator() > 0.0 && m.gamma_pole() > 0.0, "normal gravity must be positive");
        }
        if let Some(m) = check(EarthModel::custom(c[0], c[1], c[2], c[3], extra[0], extra[1], extra[2]), |m| {
            vec![m.somigliana_k(), m.semi_minor_axis()]
        }, "custom") {
            prop_assert!(m.gamma_equator() > 0.0 && m.gamma_pole() > 0.0);
        }
        let k = rotaframe::earth::EarthModelConstants {
            semi_major_axis: c[0], flattening: c[1], gm: c[2], rotation_rate: c[3],
            gamma_equator: extra[0], gamma_pole: extra[1], j2: extra[2], somigliana_k: extra[0],
        };
        check(EarthModel::from_constants(&k), |m| vec![m.semi_minor_axis()], "from_constants");
        check(EarthModel::from_constants(&WGS84.constants()), |m| vec![m.semi_minor_axis()], "from_constants(WGS84)").unwrap();
    }

    #[test]
    fn geodetic_conversions_are_finite_or_refused(c in model_constants(), g in prop::array::uniform3(finite()), r in vec3()) {
        let m = model(c);
        let position = Geodetic::new(g[0], g[1], g[2]);
        if let Some(xyz) = check(earth::geodetic_to_ecef(&m, &position), v3, "geodetic_to_ecef") {
            // What the forward conversion returns, the inverse accepts (inside the documented shell).
            check(earth::ecef_to_geodetic(&m, &xyz), geodetic_numbers, "ecef_to_geodetic(forward)");
        }
        check(earth::ecef_to_geodetic(&m, &r), geodetic_numbers, "ecef_to_geodetic");
        let mut out = [[0.0; 3]; 1];
        let batch = earth::geodetic_to_ecef_slices(&m, &[g[0]], &[g[1]], &[g[2]], &mut out).map_err(|e| e.error);
        check(batch, |_| out[0].to_vec(), "geodetic_to_ecef_slices");
        let (mut a, mut b, mut h) = ([0.0], [0.0], [0.0]);
        let batch = earth::ecef_to_geodetic_slices(&m, &[[r.x, r.y, r.z]], &mut a, &mut b, &mut h).map_err(|e| e.error);
        check(batch, |_| vec![a[0], b[0], h[0]], "ecef_to_geodetic_slices");
    }

    #[test]
    fn local_level_functions_are_finite_or_refused(c in model_constants(), lat in finite(), lon in finite(), h in finite(), v in vec3(), acc in vec3()) {
        let m = model(c);
        check(earth::ned_from_ecef(lat, lon), |x| x.as_slice().to_vec(), "ned_from_ecef");
        check(earth::enu_from_ecef(lat, lon), |x| x.as_slice().to_vec(), "enu_from_ecef");
        check(earth::ecef_from_ned_quaternion(lat, lon), |q| vec![q.w, q.i, q.j, q.k], "ecef_from_ned_quaternion");
        check(earth::radii_of_curvature(&m, lat), |r| vec![r.meridian, r.prime_vertical], "radii_of_curvature");
        check(earth::earth_rate_ned(&m, lat), v3, "earth_rate_ned");
        check(earth::transport_rate_ned(&m, lat, h, &v), v3, "transport_rate_ned");
        check(earth::coriolis_ned(&m, lat, h, &v), v3, "coriolis_ned");
        check(earth::eotvos_correction(&m, lat, h, &v), |x| vec![*x], "eotvos_correction");
        check(earth::coriolis_parameter(&m, lat), |x| vec![*x], "coriolis_parameter");
        check(earth::local_level_motion(&m, &Geodetic::new(lat, lon, h), &v, &acc), motion_numbers, "local_level_motion");
    }

    #[test]
    fn gravity_functions_are_finite_or_refused(c in model_constants(), lat in finite(), lon in finite(), h in finite(), r in vec3()) {
        let m = model(c);
        check(earth::normal_gravity(&m, lat), |x| vec![*x], "normal_gravity");
        if let Some(g) = check(earth::normal_gravity_at_height(&m, lat, h), |x| vec![*x], "normal_gravity_at_height") {
            prop_assert!(g > 0.0, "normal gravity {g} at height {h} must be positive");
        }
        if let Some(t) = check(earth::schuler_period(&m, lat, h), |x| vec![*x], "schuler_period") {
            prop_assert!(t > 0.0, "Schuler period {t} at height {h} must be positive");
        }
        check(earth::gravity_ned(&m, lat, h), v3, "gravity_ned");
        check(earth::gravitation_ecef(&m, &r), v3, "gravitation_ecef");
        check(earth::gravity_ecef(&m, &r), v3, "gravity_ecef");
        check(earth::centripetal_acceleration_ecef(&m, &r), v3, "centripetal_acceleration_ecef");
        for gm in [GravityModel::Normal, GravityModel::J2] {
            check(gm.gravity_ned(&m, &Geodetic::new(lat, lon, h)), v3, "GravityModel::gravity_ned");
            check(gm.gravity_ecef(&m, &r), v3, "GravityModel::gravity_ecef");
            check(gm.gravitation(&m, &r), v3, "GravityModel::gravitation");
        }
    }

    #[test]
    fn earth_rotation_is_finite_or_refused(c in model_constants(), t in finite(), angle in finite(), jd in finite(), frac in finite()) {
        let m = model(c);
        check(earth::earth_motion(&m, t, angle), motion_numbers, "earth_motion");
        check(earth::earth_rotation_angle(jd, frac), |x| vec![*x], "earth_rotation_angle");
        check(earth::earth_motion_at_ut1(jd, frac), motion_numbers, "earth_motion_at_ut1");
    }

    #[test]
    fn time_scale_conversions_are_finite_or_refused(jd in finite(), frac in finite(), week in any::<i64>(), seconds in finite(), from in 0usize..4, to in 0usize..4) {
        use rotaframe::time::{self, JulianDate, LeapSeconds, TimeScale};
        let scales = [TimeScale::Utc, TimeScale::Tai, TimeScale::Tt, TimeScale::Gps];
        let date = JulianDate { jd, fraction: frac };
        let parts = |d: &JulianDate| vec![d.jd, d.fraction];
        check(time::convert_time(date, scales[from], scales[to], &LeapSeconds::BUILT_IN, None), parts, "convert_time");
        check(time::calendar_date(date, scales[from], &LeapSeconds::BUILT_IN), |c| vec![c.second], "calendar_date");
        check(time::gps_week_seconds(date), |t| vec![t.seconds], "gps_week_seconds");
        check(time::from_gps_week_seconds(week, seconds), parts, "from_gps_week_seconds");
    }

    #[test]
    fn rotation_conversions_are_finite_or_refused(q in quat4(), m in prop::array::uniform9(finite()), rv in vec3(), e in prop::array::uniform3(finite())) {
        if let Some(u) = check(quaternion_from_wxyz(q, "q"), |u| vec![u.w, u.i, u.j, u.k], "quaternion_from_wxyz") {
            let angles = EulerZyx::from_quaternion(&u);
            prop_assert!(angles.yaw.is_finite() && angles.pitch.is_finite() && angles.roll.is_finite());
            prop_assert!(rotaframe::rotation::rotation_vector_from_quaternion(&u).iter().all(|x| x.is_finite()));
        }
        check(quaternion_from_matrix(&Matrix3::from_row_slice(&m), "m"), |u| vec![u.w, u.i, u.j, u.k], "quaternion_from_matrix");
        check(quaternion_from_rotation_vector(&rv, "rv"), |u| vec![u.w, u.i, u.j, u.k], "quaternion_from_rotation_vector");
        let euler = EulerZyx::new(e[0], e[1], e[2]);
        if euler.validate("euler").is_ok() {
            let u = euler.to_quaternion();
            prop_assert!([u.w, u.i, u.j, u.k].iter().all(|x| x.is_finite()), "Euler {e:?} gave {u:?}");
        }
    }

    #[test]
    fn frame_motions_are_finite_or_refused(
        q1 in quat4(), parts1 in prop::array::uniform5(vec3()),
        q2 in quat4(), parts2 in prop::array::uniform5(vec3()),
        point in prop::array::uniform3(vec3()),
        axis in vec3(), angle in finite(), rate in finite(), accel in finite(),
    ) {
        let build = |q: [f64; 4], p: [Vector3<f64>; 5]| FrameMotion::<Eci, AnyFrame>::from_parts(MotionParts {
            rotation: UnitQuaternion::new_unchecked(Quaternion::new(q[0], q[1], q[2], q[3])),
            position: p[0], velocity: p[1], acceleration: p[2], angular_velocity: p[3], angular_acceleration: p[4],
        });
        let a = check(build(q1, parts1), motion_numbers, "from_parts");
        let b = check(build(q2, parts2), motion_numbers, "from_parts").map(|m| m.erase_frames());
        let p = check(PointKinematics::<AnyFrame>::try_new(point[0], point[1], point[2]), |p| {
            [p.position, p.velocity, p.acceleration].iter().flat_map(|v| v.as_slice().to_vec()).collect()
        }, "PointKinematics::try_new");
        if let Some(a) = &a {
            let inverse = a.inverse();
            prop_assert!(motion_numbers(&inverse).iter().all(|x| x.is_finite()), "inverse of {a:?}");
            if let Some(p) = &p {
                let mapped = a.map_point(p);
                let numbers: Vec<f64> = [mapped.position, mapped.velocity, mapped.acceleration].iter().flat_map(|v| v.as_slice().to_vec()).collect();
                prop_assert!(numbers.iter().all(|x| x.is_finite()), "map_point of {p:?} by {a:?}");
                let terms = rotaframe::apparent::apparent_acceleration(a, p);
                prop_assert!(terms.total.iter().chain(terms.coriolis.iter()).all(|x| x.is_finite()));
            }
            if let Some(b) = &b {
                let composed = a.then(&b.assume_frames::<AnyFrame, AnyFrame>());
                prop_assert!(motion_numbers(&composed).iter().all(|x| x.is_finite()), "then");
            }
        }
        let dynamics = FrameDynamics { angular_velocity: parts1[3], angular_acceleration: parts1[4], origin_acceleration: parts1[2] };
        if dynamics.validate().is_ok() && PointKinematics::<AnyFrame>::try_new(point[0], point[1], Vector3::zeros()).is_ok() {
            let t = apparent_terms(&dynamics, &point[0], &point[1]);
            prop_assert!(t.total.iter().all(|x| x.is_finite()));
        }
        check(FrameMotion::<Eci, AnyFrame>::about_axis(axis, angle, rate, accel), motion_numbers, "about_axis");
        check(FrameMotion::<Eci, AnyFrame>::spin(axis, rate, angle), motion_numbers, "spin");
    }

    #[test]
    fn navigation_is_finite_or_refused(
        g in prop::array::uniform3(finite()), v in vec3(), q in quat4(),
        dtheta in vec3(), dv in vec3(), dt in finite(), frame in 0..2u8, vertical in 0..3u8, tau in finite(), href in finite(),
    ) {
        let physical = (0.1 * g[0].tanh(), g[1], 1e3 * g[2].tanh());
        for start in [Geodetic::new(g[0], g[1], g[2]), Geodetic::new(physical.0, physical.1, physical.2)] {
            let vertical = match vertical { 0 => VerticalChannel::Free, 1 => VerticalChannel::Hold, _ => VerticalChannel::Aided { time_constant: tau } };
            let config = StrapdownConfig { frame: if frame == 0 { NavFrame::Ned } else { NavFrame::Ecef }, vertical, ..StrapdownConfig::default() };
            let state = NavState::new(start, v, rotation(q));
            let Some(mut ins) = check(Strapdown::new(config, &state), |s| nav_numbers(&s.state()), "Strapdown::new") else { continue };
            let _ = ins.set_height_reference(href);
            for increment in [ImuIncrement::new(dtheta, dv, dt), ImuIncrement::new(dtheta * 1e-9, dv * 1e-9, 0.01)] {
                for _ in 0..3 {
                    if check(ins.step(&increment), |_| nav_numbers(&ins.state()), "Strapdown::step").is_none() { break; }
                    prop_assert!(nav_numbers(&ins.state()).iter().all(|x| x.is_finite()));
                }
            }
            let mut sink = |_: usize, s: &Strapdown| assert!(nav_numbers(&s.state()).iter().all(|x| x.is_finite()));
            let _ = ins.run_each(&[ImuIncrement::new(dtheta, dv, dt)], None, &mut sink);
            check(nav::lever_arm_state(&WGS84, &state, &dtheta, &dv), |(p, vel)| {
                let mut n = geodetic_numbers(p);
                n.extend_from_slice(vel.as_slice());
                n
            }, "lever_arm_state");
        }
    }

    #[test]
    fn sensor_errors_are_finite_or_refused(fields in prop::array::uniform6(vec3()), misalignment in prop::array::uniform6(finite()), seed in any::<u64>(), dtheta in vec3(), dv in vec3(), dt in finite()) {
        let off = |m: [f64; 6]| Matrix3::new(0.0, m[0], m[1], m[2], 0.0, m[3], m[4], m[5], 0.0);
        let sensor = |k: usize| SensorErrorModel {
            bias: fields[k],
            scale_factor: fields[k + 1] * 1e-30,
            misalignment: off(misalignment) * 1e-30,
            noise_density: fields[k + 2].abs(),
            markov_sigma: fields[k].abs(),
            markov_time: fields[k + 1].abs(),
        };
        for model in [ImuErrorModel { gyro: sensor(0), accelerometer: sensor(3) }, ImuErrorModel {
            gyro: SensorErrorModel { bias: fields[0], scale_factor: fields[1], misalignment: off(misalignment), ..SensorErrorModel::default() },
            accelerometer: SensorErrorModel::default(),
        }] {
            let Some(mut generator) = check(ImuErrorGenerator::new(model, seed), |_| vec![], "ImuErrorGenerator::new") else { continue };
            for increment in [ImuIncrement::new(dtheta, dv, dt), ImuIncrement::new(dtheta.map(f64::tanh), dv.map(f64::tanh), 0.01)] {
                check(generator.corrupt(&increment), |m| {
                    m.delta_angle.iter().chain(m.delta_velocity.iter()).copied().collect()
                }, "ImuErrorGenerator::corrupt");
            }
        }
    }

    #[test]
    fn recorded_trajectories_are_finite_or_refused(times in prop::array::uniform4(finite()), heights in prop::array::uniform4(finite()), lat in finite(), at in finite()) {
        let mut t = times;
        t.sort_by(f64::total_cmp);
        let positions: Vec<Geodetic> = (0..4).map(|k| Geodetic::new(0.1 * lat.tanh(), 0.2 + 1e-3 * k as f64, heights[k])).collect();
        let attitudes = [[1.0, 0.0, 0.0, 0.0]; 4];
        let source = RecordedSlices { times: &t, positions: &positions, attitudes: &attitudes };
        let Ok(mut path) = RecordedTrajectory::new(WGS84, source) else { return Ok(()) };
        for time in [at, t[1], 0.5 * (t[1] + t[2])] {
            check(path.motion_at::<AnyFrame>(time), motion_numbers, "RecordedTrajectory::motion_at");
        }
    }

    #[test]
    fn ideal_imu_is_finite_or_refused(q in quat4(), parts in prop::array::uniform5(vec3())) {
        let body = FrameMotion::<Eci, AnyFrame>::from_parts(MotionParts {
            rotation: rotation(q), position: parts[0], velocity: parts[1], acceleration: parts[2],
            angular_velocity: parts[3], angular_acceleration: parts[4],
        });
        if let Ok(body) = body {
            for gravity in [GravityModel::Normal, GravityModel::J2] {
                check(nav::ideal_imu(&WGS84, gravity, &body), |s| {
                    s.angular_rate.iter().chain(s.specific_force.iter()).copied().collect()
                }, "ideal_imu");
            }
        }
    }

    #[test]
    fn frame_graphs_are_finite_or_refused(c in model_constants(), g in prop::array::uniform3(finite()), axis in vec3(), spin in prop::array::uniform3(finite()), q in quat4(), p in vec3(), times in prop::array::uniform3(finite())) {
        use rotaframe::graph::{EarthRotation, Fixed, FrameGraph, LocalAxes, Site, Spin};
        let m = model(c);
        let mut graph = FrameGraph::new("inertial", true);
        let mut last = "inertial".to_string();
        if let Some(e) = check(EarthRotation::with_angle(m, spin[0]), |e| vec![e.angle_at_epoch()], "EarthRotation") {
            graph.add_earth("ecef", "inertial", e).unwrap();
            last = "ecef".into();
        }
        if let Some(s) = check(Site::new(m, Geodetic::new(g[0], g[1], g[2]), LocalAxes::Enu), |s| motion_numbers(&s.motion()), "Site") {
            graph.add_site("site", &last, s).unwrap();
            last = "site".into();
        }
        if let Some(s) = check(Spin::new(axis, spin[0], spin[1], spin[2]), |s| s.axis().iter().copied().collect(), "Spin") {
            graph.add_spin("table", &last, s).unwrap();
            last = "table".into();
        }
        if let Some(f) = check(Fixed::new(rotation(q), p), |f| motion_numbers(&f.motion()), "Fixed") {
            graph.add_fixed("sensor", &last, f).unwrap();
            last = "sensor".into();
        }
        for t in times {
            match graph.motion("inertial", &last, t) {
                Ok(motion) => prop_assert!(motion_numbers(&motion).iter().all(|x| x.is_finite()), "graph motion at {t}"),
                Err(e) => prop_assert!(!e.to_string().is_empty()),
            }
            if let Ok(terms) = graph.apparent_acceleration(&last, t, &p, &axis) {
                prop_assert!(terms.total.iter().all(|x| x.is_finite()));
            }
        }
    }

    #[test]
    fn propagations_are_finite_or_refused(r0 in vec3(), v0 in vec3(), w in prop::array::uniform3(finite()), span in prop::array::uniform2(finite()), drag in prop::array::uniform3(finite()), which in 0u8..6) {
        use rotaframe::propagate::{self, AirDensity, Drag, Gravitation, Settings, Tolerances};
        // A frame spinning (with angular acceleration) at a finite offset from the Earth's
        // centre, any gravitation, drag of any finite parameters, with and without the budget.
        // A short step budget keeps the case fast; running out of it is a named error too.
        let gravitation = [Gravitation::None, Gravitation::PointMass, Gravitation::J2][usize::from(which % 3)];
        let settings = Settings { gravitation, tolerances: Tolerances { max_steps: 300, ..Tolerances::default() }, ..Settings::default() };
        let offset = Vector3::new(7.0e6, 0.0, 0.0);
        let frame = |t: f64| -> rotaframe::Result<propagate::Motion> {
            let m: propagate::Motion = FrameMotion::about_axis(Vector3::new(0.3, -0.2, 1.0), w[0] * t + 0.5 * w[1] * t * t, w[0] + w[1] * t, w[1])?;
            Ok(propagate::Motion::from_parts(MotionParts { position: offset, ..MotionParts::default() })?.then(&m))
        };
        let drag = check(Drag::new(drag[0], AirDensity::Exponential { at_origin: drag[1].abs(), scale_height: drag[2], up: Vector3::z() }, Vector3::zeros()), |_| vec![], "Drag");
        let force = |_: f64, r: &Vector3<f64>, v: &Vector3<f64>| Ok(drag.map_or_else(Vector3::zeros, |d| d.acceleration(r, v)));
        type NoEvent = fn(f64, &Vector3<f64>, &Vector3<f64>) -> rotaframe::Result<f64>;
        let out = propagate::propagate(&settings, frame, force, None::<NoEvent>, span[0], span[0] + span[1].abs().min(1e3), r0, v0, which >= 3, |_| Ok(()));
        check(out, |o| {
            let mut n = vec![o.time];
            n.extend(v3(&o.position));
            n.extend(v3(&o.velocity));
            if let Some(b) = o.budget {
                n.extend(v3(&b.total_displacement()));
            }
            n
        }, "propagate");
    }

    #[test]
    fn calibrations_are_finite_or_refused(
        quats in prop::collection::vec(quat4(), 12),
        readings in prop::collection::vec(vec3(), 12),
        site in prop::array::uniform2(finite()),
        noise in vec3(),
        table in prop::array::uniform3(finite()),
        which in 0u8..3,
    ) {
        use rotaframe::calibrate::{self, AccelerometerPosition, CalibrationSite, GyroRecord, TriadParameters};
        // Any finite readings, attitudes, sites and noise; half the cases near physical values
        // (so that the fits run to the end), half from the whole range.
        let physical = which == 0;
        let site = CalibrationSite::new(if physical { site[0].tanh() } else { site[0] }, if physical { site[1].tanh() * 1e3 } else { site[1] });
        let readings: Vec<Vector3<f64>> = readings.iter().map(|r| if physical { r.map(f64::tanh) * 10.0 } else { *r }).collect();
        let estimate = [TriadParameters::Full, TriadParameters::BiasAndScale, TriadParameters::Bias][usize::from(which)];
        let sigma = if which == 1 { Some(noise.abs()) } else { None };
        let numbers = |c: &calibrate::TriadCalibration| -> Vec<f64> {
            c.parameters().iter().chain(c.covariance.iter()).chain(c.residual_rms.iter()).chain(c.noise.iter()).copied().chain([c.condition_number]).collect()
        };
        let positions: Vec<_> = quats.iter().zip(&readings).map(|(q, f)| AccelerometerPosition { attitude: rotation(*q), specific_force: *f }).collect();
        let mut residuals = vec![0.0; 36];
        check(calibrate::calibrate_accelerometers(&site, positions.iter().copied(), estimate, sigma.as_ref(), Some(&mut residuals)), numbers, "calibrate_accelerometers");
        assert!(residuals.iter().all(|r| r.is_finite()));
        let records: Vec<_> = quats.iter().zip(&readings).map(|(q, w)| GyroRecord {
            attitude: rotation(*q), table_axis_ned: Vector3::new(table[0], 1.0, table[1]), table_rate: table[2], duration: table[0].abs(), angular_rate: *w,
        }).collect();
        check(calibrate::calibrate_gyros(&site, records.iter().copied(), estimate, sigma.as_ref(), None), numbers, "calibrate_gyros");
        let mut magnitude = vec![0.0; 12];
        if let Some(c) = check(calibrate::calibrate_accelerometers_by_magnitude(&site, readings.iter().copied(), sigma.as_ref(), Some(&mut magnitude)), numbers, "calibrate_accelerometers_by_magnitude") {
            assert!(magnitude.iter().all(|r| r.is_finite()));
            check(c.correct_increment(&readings[0], table[2]), v3, "correct_increment");
        }
        let mut perfect = calibrate::TriadCalibration::perfect();
        perfect.bias = noise;
        perfect.scale_factor = readings[1];
        check(perfect.correct_increment(&readings[0], table[2]), v3, "correct_increment (any parameters)");
    }

    #[test]
    fn allan_functions_are_finite_or_refused(samples in prop::collection::vec(finite(), 3..40), dt in finite(), confidence in finite(), taus in prop::array::uniform3(finite()), devs in prop::array::uniform3(finite()), dof in prop::array::uniform3(finite())) {
        use rotaframe::calibrate::allan;
        let mut sizes = [0usize; 64];
        let count = allan::default_cluster_sizes(samples.len(), &mut sizes);
        let mut scratch = vec![0.0; samples.len() + 1];
        let mut points = vec![allan::AllanPoint::default(); count];
        for (x, interval, level) in [(samples.clone(), dt, confidence), (samples.iter().map(|v| v.tanh()).collect::<Vec<_>>(), 0.01, 0.683)] {
            check(allan::allan_deviation(&x, interval, &sizes[..count], level, &mut scratch, &mut points), |_| {
                points.iter().flat_map(|p| [p.tau, p.deviation, p.lower, p.upper, p.degrees_of_freedom]).collect()
            }, "allan_deviation");
        }
        let terms = |t: &allan::NoiseTerms| vec![t.white_noise, t.bias_instability, t.rate_random_walk];
        check(allan::fit_noise_terms(&taus, &devs, Some(&dof)), terms, "fit_noise_terms");
        let tame = |v: [f64; 3]| v.map(|x| 1e-3 + x.abs().min(1e3));
        check(allan::fit_noise_terms(&tame(taus), &tame(devs), None), terms, "fit_noise_terms (tame)");
        check(allan::gauss_markov_deviation(devs[0], taus[0], taus[1]), |d| vec![*d], "gauss_markov_deviation");
        check(rotaframe::calibrate::chi_square_quantile(confidence, dof[0]), |q| vec![*q], "chi_square_quantile");
        check(rotaframe::calibrate::chi_square_quantile(confidence.abs().fract().max(1e-300), dof[0].abs().max(1e-300)), |q| vec![*q], "chi_square_quantile (valid)");
    }
}
