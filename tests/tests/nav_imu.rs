//! IMU synthesis checks: quadrature against closed-form integrals, increments from recorded
//! samples against an analytic trajectory, lever arms against finite differences and the
//! handbook lever-arm formula, and the sensor error model's statistics.

use approx::assert_relative_eq;
use rotaframe::earth::{GravityModel, WGS84, ecef_to_geodetic, gravitation_ecef, ned_from_ecef};
use rotaframe::frames::{Body, Eci, PointKinematics};
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{Matrix3, UnitQuaternion, Vector3};
use rotaframe::nav::{
    ImuErrorGenerator, ImuErrorModel, ImuIncrement, NavFrame, RecordedSlices, RecordedTrajectory, SensorErrorModel, Strapdown,
    StrapdownConfig, angle_random_walk_from_deg_per_sqrt_hour, ideal_imu, imu_increments, lever_arm_state, sensor_mount,
    velocity_random_walk_from_mps_per_sqrt_hour,
};
use rotaframe::rotation::quaternion_to_wxyz;
use rotaframe::{BatchError, Error};
use rotaframe_tests::trajectories::{Manoeuvres, state_errors};

rotaframe::frame!(Imu);

#[test]
fn increments_of_a_rocking_body_match_the_closed_form_integrals() {
    // A body above the north pole (gravitation along −z, unchanged by turns about z) rocking
    // about z with angle A sin(wt): ω_b = (0, 0, A w cos wt), so Δθ_z = A (sin wt₁ − sin wt₀)
    // exactly, and f^b = −γ constant, Δv = −γ T. Reference: the integrals in closed form.
    // Tolerance: 1e-15 rad absolute, 4 ulps of the amplitude A = 0.3 that both the quadrature
    // sum and the closed form (a difference of two rounded sines) carry; and 4 ulps of γT for Δv (T is the difference of the rounded sample times).
    let (amplitude, w) = (0.3_f64, 2.0 * core::f64::consts::PI * 1.7);
    let r = Vector3::new(0.0, 0.0, 7.0e6);
    let gamma = gravitation_ecef(&WGS84, &r).unwrap();
    let trajectory = |t: f64| {
        FrameMotion::<Eci, Body>::from_parts(MotionParts {
            position: r,
            ..FrameMotion::<Eci, Body>::about_axis(
                Vector3::z(),
                amplitude * (w * t).sin(),
                amplitude * w * (w * t).cos(),
                -amplitude * w * w * (w * t).sin(),
            )?
            .parts()
        })
    };
    let times: Vec<f64> = (0..=400).map(|k| f64::from(k) * 0.005).collect();
    for (k, inc) in imu_increments(&WGS84, GravityModel::J2, trajectory, &times).enumerate() {
        let inc = inc.unwrap();
        let exact = amplitude * ((w * times[k + 1]).sin() - (w * times[k]).sin());
        assert!((inc.delta_angle.z - exact).abs() < 1e-15, "interval {k}: {} vs {exact}", inc.delta_angle.z);
        assert!(inc.delta_angle.xy().norm() == 0.0);
        assert_relative_eq!(inc.delta_velocity, -gamma * (times[k + 1] - times[k]), max_relative = 4.0 * f64::EPSILON);
    }
}

#[test]
fn increments_reject_times_that_do_not_increase() {
    let traj = Manoeuvres::standard(WGS84);
    let times = [0.0, 0.01, 0.01, 0.03];
    let results: Vec<_> = imu_increments(&WGS84, GravityModel::Normal, |t| traj.relative_to_inertial(t), &times).collect();
    assert!(results[0].is_ok());
    assert!(matches!(results[1], Err(BatchError { index: 1, error: Error::NotPositive { quantity: "interval", .. } })));
    let nan = [0.0, f64::NAN];
    let r: Vec<_> = imu_increments(&WGS84, GravityModel::Normal, |t| traj.relative_to_inertial(t), &nan).collect();
    assert!(matches!(r[0], Err(BatchError { index: 0, error: Error::NonFinite { quantity: "end" } })));
}

/// Samples of the manoeuvre at `rate` Hz for `duration` s, as an analyst's log would hold them.
fn logged(traj: &Manoeuvres, rate: f64, duration: f64) -> (Vec<f64>, Vec<rotaframe::earth::Geodetic>, Vec<[f64; 4]>) {
    let n = (rate * duration).round() as usize;
    let times: Vec<f64> = (0..=n).map(|k| k as f64 / rate).collect();
    let states: Vec<_> = times.iter().map(|&t| traj.truth(t).unwrap()).collect();
    (times, states.iter().map(|s| s.position).collect(), states.iter().map(|s| quaternion_to_wxyz(&s.attitude)).collect())
}

/// Largest interpolation errors (position m, velocity m/s, acceleration m/s², angular
/// velocity rad/s, angular acceleration rad/s²) at the midpoints of the first `count`
/// intervals of a log at `rate` Hz.
fn interpolation_errors(rate: f64) -> [f64; 5] {
    let traj = Manoeuvres::standard(WGS84);
    let (t, p, q) = logged(&traj, rate, 60.0);
    let mut path = RecordedTrajectory::new(WGS84, RecordedSlices { times: &t, positions: &p, attitudes: &q }).unwrap();
    let mut worst = [0.0_f64; 5];
    for k in 0..t.len() - 1 {
        let tm = 0.5 * (t[k] + t[k + 1]);
        let got = path.motion_at::<Body>(tm).unwrap();
        let want = traj.relative_to_earth(tm).unwrap();
        let e = [
            (got.position() - want.position()).norm(),
            (got.velocity() - want.velocity()).norm(),
            (got.acceleration() - want.acceleration()).norm(),
            (got.angular_velocity() - want.angular_velocity()).norm(),
            (got.angular_acceleration() - want.angular_acceleration()).norm(),
        ];
        for i in 0..5 {
            worst[i] = worst[i].max(e[i]);
        }
    }
    worst
}

#[test]
fn recorded_samples_interpolate_the_analytic_trajectory_to_high_order() {
    // Method check (recorded.rs): seven-point derivative stencils and quintic Hermite segments
    // have a truncation error of order Δt⁵ or better in every channel, so doubling the sample
    // rate must cut the velocity and angular-velocity errors by more than 2⁵ = 32 where
    // truncation dominates: 5 → 10 Hz for the position channels (the manoeuvre's fastest
    // translation has a 4.3 s period), 50 → 100 Hz for attitude (its 2 Hz roll vibration).
    // Measured when the test was written: velocity 66×, angular velocity 52×. Above about
    // 20 Hz the position-derived errors sit on the log's own rounding (an f64 geodetic
    // position round-trips to ECEF within about 1.3e-9 m, amplified by the derivative
    // stencils as 1/Δt and 1/Δt²). Absolute bounds at 100 Hz: about 2× the measured errors
    // (1.3e-9 m, 1.8e-7 m/s, 5.2e-5 m/s², 2.7e-8 rad/s, 8.4e-6 rad/s²), at the midpoints between
    // samples over the first minute, where interpolation is worst.
    let five = interpolation_errors(5.0);
    let ten = interpolation_errors(10.0);
    let fifty = interpolation_errors(50.0);
    let hundred = interpolation_errors(100.0);
    for (rate, e) in [(5, five), (10, ten), (50, fifty), (100, hundred)] {
        eprintln!(
            "interpolation at {rate} Hz: position {:.2e} m, velocity {:.2e} m/s, acceleration {:.2e} m/s², angular velocity {:.2e} rad/s, angular acceleration {:.2e} rad/s²",
            e[0], e[1], e[2], e[3], e[4]
        );
    }
    assert!(five[1] / ten[1] > 32.0, "velocity order: {five:?} vs {ten:?}");
    assert!(fifty[3] / hundred[3] > 32.0, "angular velocity order: {fifty:?} vs {hundred:?}");
    let bounds = [3e-9, 4e-7, 1e-4, 6e-8, 2e-5];
    for (e, b) in hundred.iter().zip(bounds) {
        assert!(*e < b, "{hundred:?} above {bounds:?}");
    }
}

#[test]
fn increments_from_recorded_samples_match_the_exact_increments_and_navigate_back() {
    // The path analysts use: a 100 Hz log of time, geodetic position and attitude → increments
    // → the NED mechanization, against the exact increments of the same analytic trajectory.
    // Measured when the test was written: increments within 1.3e-13 rad and 1.0e-6 m/s of the
    // exact ones (Δv carries the log's rounding noise, which averages out in the
    // integration: after two minutes the navigation error is 0.2 mm). Bounds: about 2× those.
    let traj = Manoeuvres::standard(WGS84);
    let (t, p, q) = logged(&traj, 100.0, 120.0);
    let mut path = RecordedTrajectory::new(WGS84, RecordedSlices { times: &t, positions: &p, attitudes: &q }).unwrap();
    let from_log: Vec<ImuIncrement> = imu_increments(&WGS84, GravityModel::Normal, |s| path.inertial_motion_at::<Body>(s), &t)
        .collect::<Result<_, _>>()
        .unwrap();
    let exact: Vec<ImuIncrement> =
        imu_increments(&WGS84, GravityModel::Normal, |s| traj.relative_to_inertial(s), &t).collect::<Result<_, _>>().unwrap();
    let (mut dtheta, mut dv) = (0.0_f64, 0.0_f64);
    for (a, b) in from_log.iter().zip(&exact) {
        dtheta = dtheta.max((a.delta_angle - b.delta_angle).norm());
        dv = dv.max((a.delta_velocity - b.delta_velocity).norm());
    }
    let mut ins = Strapdown::new(StrapdownConfig::default(), &traj.truth(0.0).unwrap()).unwrap();
    for inc in &from_log {
        ins.step(inc).unwrap();
    }
    let (ep, ev, ea) = state_errors(&WGS84, &ins.state(), &traj.truth(120.0).unwrap());
    eprintln!(
        "recorded 100 Hz log: worst increment error Δθ {dtheta:.2e} rad, Δv {dv:.2e} m/s; after 2 min navigation error {ep:.2e} m, {ev:.2e} m/s, {ea:.2e} rad"
    );
    assert!(dtheta < 3e-13 && dv < 2.5e-6, "{dtheta} {dv}");
    assert!(ep < 5e-4 && ev < 8e-6 && ea < 1e-8, "{ep} {ev} {ea}");
}

#[test]
fn recorded_trajectory_rejects_bad_logs_naming_the_sample() {
    let t = [0.0, 0.1, 0.2, 0.3];
    let p = [rotaframe::earth::Geodetic::from_degrees(10.0, 20.0, 5.0); 4];
    let q = [[1.0, 0.0, 0.0, 0.0]; 4];
    let ok = RecordedSlices { times: &t, positions: &p, attitudes: &q };
    assert!(RecordedTrajectory::new(WGS84, ok).is_ok());
    let t_bad = [0.0, 0.1, 0.1, 0.3];
    let e = RecordedTrajectory::new(WGS84, RecordedSlices { times: &t_bad, ..ok }).unwrap_err();
    assert_eq!((e.index, e.error.quantity()), (2, "time"));
    let mut q_bad = q;
    q_bad[3] = [0.0; 4];
    let e = RecordedTrajectory::new(WGS84, RecordedSlices { attitudes: &q_bad, ..ok }).unwrap_err();
    assert_eq!((e.index, e.error), (3, Error::ZeroNorm { quantity: "attitude" }));
    let mut p_bad = p;
    p_bad[1].latitude = 2.0;
    let e = RecordedTrajectory::new(WGS84, RecordedSlices { positions: &p_bad, ..ok }).unwrap_err();
    assert_eq!((e.index, e.error.quantity()), (1, "latitude"));
    let e =
        RecordedTrajectory::new(WGS84, RecordedSlices { times: &t[..2], positions: &p[..2], attitudes: &q[..2] }).unwrap_err();
    assert!(matches!(e.error, Error::LengthMismatch { quantity: "samples", .. }));
    let mut path = RecordedTrajectory::new(WGS84, ok).unwrap();
    assert!(matches!(path.motion_at::<Body>(0.31), Err(Error::OutOfRange { quantity: "time", .. })));
}

#[test]
fn antenna_position_and_velocity_match_finite_differences_of_the_truth() {
    // Lever arm: a GNSS antenna 1.2 m forward, 0.3 m right and 1.8 m above the IMU. Reference
    // for the velocity: a central difference of the antenna's true ECEF position (independent
    // of the transport theorem), error O(h²) ≈ |jerk| h²/6 ≈ 1e-6 m/s with h = 1 ms.
    let traj = Manoeuvres::standard(WGS84);
    let lever = Vector3::new(1.2, 0.3, -1.8);
    let antenna_ecef = |t: f64| traj.relative_to_earth(t).unwrap().map_point(&PointKinematics::at_rest(lever)).position;
    for t in [3.0, 47.5, 130.25] {
        let state = traj.truth(t).unwrap();
        let rate = ideal_imu(&WGS84, GravityModel::Normal, &traj.relative_to_inertial(t).unwrap()).unwrap().angular_rate;
        let (position, velocity_ned) = lever_arm_state(&WGS84, &state, &rate, &lever).unwrap();
        let truth = ecef_to_geodetic(&WGS84, &antenna_ecef(t)).unwrap();
        assert!((position.height - truth.height).abs() < 1e-8);
        assert!((position.latitude - truth.latitude).abs() < 1e-15 && (position.longitude - truth.longitude).abs() < 1e-15);
        let h = 1e-3;
        let fd = (antenna_ecef(t + h) - antenna_ecef(t - h)) / (2.0 * h);
        let fd_ned = ned_from_ecef(truth.latitude, truth.longitude).unwrap() * fd;
        assert!((velocity_ned - fd_ned).norm() < 2e-5, "t = {t}: {velocity_ned} vs {fd_ned}");
        // The lever arm matters: the antenna moves differently from the IMU.
        assert!((velocity_ned - state.velocity_ned).norm() > 1e-3);
    }
}

#[test]
fn offset_and_tilted_accelerometer_reads_the_handbook_lever_arm_formula() {
    // Reference: an accelerometer triad at lever arm l from the reference point, mounted with
    // rotation C_s^b, reads f_s = C_b^s [f_b + α_ib^b × l + ω_ib^b × (ω_ib^b × l)] and its gyros
    // C_b^s ω_ib^b (Groves 2013, §14.2.3; Titterton and Weston 2004, §8.3; common practice).
    // The handbook formula leaves out the gravity gradient across the lever arm
    // (about 2g/R·|l| ≈ 1.5e-6 m/s² here), which the ideal IMU includes; the check adds it,
    // C_i^b (γ(r) − γ(r + C_b^i l)). Tolerance: 1e-11 m/s² (rounding in chains of 10⁷ m
    // positions).
    let traj = Manoeuvres::standard(WGS84);
    let lever = Vector3::new(-0.4, 0.25, 0.1);
    let mount = UnitQuaternion::from_euler_angles(0.02, -0.01, 1.5);
    for t in [1.0, 20.0, 333.3] {
        let body = traj.relative_to_inertial(t).unwrap();
        let sensor = body.then(&sensor_mount::<Body, Imu>(&lever, &mount).unwrap());
        let at_sensor = ideal_imu(&WGS84, GravityModel::Normal, &sensor).unwrap();
        let at_reference = ideal_imu(&WGS84, GravityModel::Normal, &body).unwrap();
        let w = body.angular_velocity_in_child();
        let alpha = body.angular_acceleration_in_child();
        let gravitation = |r| GravityModel::Normal.gravitation(&WGS84, &r).unwrap();
        let gradient = body.rotation().inverse() * (gravitation(body.position()) - gravitation(sensor.position()));
        assert!(gradient.norm() > 1e-7 && gradient.norm() < 3e-6);
        let expected =
            mount.inverse() * (at_reference.specific_force + alpha.cross(&lever) + w.cross(&w.cross(&lever)) + gradient);
        assert_relative_eq!(at_sensor.specific_force, expected, epsilon = 1e-11);
        assert_relative_eq!(at_sensor.angular_rate, mount.inverse() * at_reference.angular_rate, epsilon = 1e-15);
    }
}

fn noisy_model(arw_deg_per_sqrt_h: f64, vrw_mps_per_sqrt_h: f64) -> ImuErrorModel {
    ImuErrorModel {
        gyro: SensorErrorModel {
            noise_density: Vector3::repeat(angle_random_walk_from_deg_per_sqrt_hour(arw_deg_per_sqrt_h)),
            ..Default::default()
        },
        accelerometer: SensorErrorModel {
            noise_density: Vector3::repeat(velocity_random_walk_from_mps_per_sqrt_hour(vrw_mps_per_sqrt_h)),
            ..Default::default()
        },
    }
}

#[test]
fn random_walks_reach_their_quoted_size_after_one_hour() {
    // Definition of the trade's units (IEEE Std 952-1997, annex C; common practice): a gyro
    // with an angle random walk of N deg/√h accumulates an angle error with standard deviation
    // N degrees after one hour; likewise m/s/√h for velocity. 600 independent one-hour runs at
    // 10 Hz (one stream cut into hours). Tolerance: 12%, four standard errors of a standard
    // deviation estimated from 1800 samples (1/√(2·1800) ≈ 1.7% each, per axis pooled).
    let (arw, vrw) = (0.15, 0.04);
    let mut generator = ImuErrorGenerator::new(noisy_model(arw, vrw), 2026).unwrap();
    let ideal = ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), 0.1);
    let (mut sum_a, mut sum_v) = (0.0, 0.0);
    let hours = 600;
    for _ in 0..hours {
        let (mut angle, mut velocity) = (Vector3::zeros(), Vector3::zeros());
        for _ in 0..36_000 {
            let m = generator.corrupt(&ideal).unwrap();
            angle += m.delta_angle;
            velocity += m.delta_velocity;
        }
        sum_a += angle.norm_squared();
        sum_v += velocity.norm_squared();
    }
    let angle_std_deg = (sum_a / f64::from(3 * hours)).sqrt().to_degrees();
    let velocity_std = (sum_v / f64::from(3 * hours)).sqrt();
    eprintln!(
        "after 1 h: angle std {angle_std_deg:.4} deg (ARW {arw} deg/√h), velocity std {velocity_std:.4} m/s (VRW {vrw} m/s/√h)"
    );
    assert!((angle_std_deg / arw - 1.0).abs() < 0.12);
    assert!((velocity_std / vrw - 1.0).abs() < 0.12);
}

#[test]
fn gauss_markov_bias_has_its_variance_and_correlation_time() {
    // First-order Gauss–Markov process: stationary variance σ², autocorrelation e^{−|τ|/T_c}
    // (Gelb 1974, Table 3.9-1). 2e6 steps of 0.1 s with T_c = 50 s: about 4000 correlation
    // times, so the variance estimate has a relative standard error near √(2/4000)·… ≈ 3%
    // (the effective sample count is steps·Δt/(2T_c)); tolerance 12%. The lag-one-T_c
    // autocorrelation must be e^{−1} within 0.05.
    let sigma = 2e-5;
    let gyro = SensorErrorModel {
        markov_sigma: Vector3::new(sigma, sigma, sigma),
        markov_time: Vector3::repeat(50.0),
        ..Default::default()
    };
    let mut generator = ImuErrorGenerator::new(ImuErrorModel { gyro, ..Default::default() }, 9).unwrap();
    let ideal = ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), 0.1);
    let n = 2_000_000;
    let mut series = Vec::with_capacity(n);
    for _ in 0..n {
        // With no other errors the measured rate is the Gauss–Markov bias itself.
        series.push(generator.corrupt(&ideal).unwrap().delta_angle.x / 0.1);
    }
    let mean = series.iter().sum::<f64>() / n as f64;
    let var = series.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
    let lag = 500;
    let cov = series.windows(lag + 1).map(|w| (w[0] - mean) * (w[lag] - mean)).sum::<f64>() / (n - lag) as f64;
    eprintln!("Gauss–Markov: std {:.3e} (σ {sigma:.1e}), autocorrelation at T_c {:.3} (e⁻¹ = 0.368)", var.sqrt(), cov / var);
    assert!((var.sqrt() / sigma - 1.0).abs() < 0.12);
    assert!((cov / var - (-1.0_f64).exp()).abs() < 0.05);
}

#[test]
fn deterministic_errors_apply_exactly_and_seeds_reproduce() {
    // With no random terms: Δθ̃ = (I + diag(s) + M) Δθ + b T exactly (the model's definition).
    let misalignment = Matrix3::new(0.0, 1e-3, -2e-3, 5e-4, 0.0, 1e-4, -3e-4, 2e-4, 0.0);
    let gyro = SensorErrorModel {
        bias: Vector3::new(1e-5, -2e-5, 3e-5),
        scale_factor: Vector3::new(1e-4, 0.0, -5e-4),
        misalignment,
        ..Default::default()
    };
    let accelerometer = SensorErrorModel { bias: Vector3::new(0.01, 0.0, -0.02), ..Default::default() };
    let mut generator = ImuErrorGenerator::new(ImuErrorModel { gyro, accelerometer }, 1).unwrap();
    let ideal = ImuIncrement::new(Vector3::new(0.01, -0.02, 0.005), Vector3::new(0.1, 0.2, -9.8 * 0.01), 0.01);
    let got = generator.corrupt(&ideal).unwrap();
    let gain = Matrix3::identity() + Matrix3::from_diagonal(&gyro.scale_factor) + misalignment;
    assert_relative_eq!(got.delta_angle, gain * ideal.delta_angle + gyro.bias * 0.01, epsilon = 1e-18);
    assert_relative_eq!(got.delta_velocity, ideal.delta_velocity + accelerometer.bias * 0.01, epsilon = 1e-17);

    let model = noisy_model(0.1, 0.05);
    let run = |seed| {
        let mut g = ImuErrorGenerator::new(model, seed).unwrap();
        (0..100).map(|_| g.corrupt(&ideal).unwrap()).collect::<Vec<_>>()
    };
    assert_eq!(run(5), run(5));
    assert_ne!(run(5), run(6));
}

#[test]
fn error_model_rejects_bad_parameters_naming_them() {
    let bad_diag = SensorErrorModel { misalignment: Matrix3::identity() * 1e-3, ..Default::default() };
    let e = ImuErrorGenerator::new(ImuErrorModel { gyro: bad_diag, ..Default::default() }, 0).unwrap_err();
    assert_eq!(e.quantity(), "gyro_misalignment");
    let bad_tau = SensorErrorModel { markov_time: Vector3::new(1.0, 0.0, 1.0), ..Default::default() };
    let e = ImuErrorGenerator::new(ImuErrorModel { accelerometer: bad_tau, ..Default::default() }, 0).unwrap_err();
    assert_eq!(e.quantity(), "accelerometer_markov_time");
    let bad_noise = SensorErrorModel { noise_density: Vector3::new(-1.0, 0.0, 0.0), ..Default::default() };
    let e = ImuErrorGenerator::new(ImuErrorModel { gyro: bad_noise, ..Default::default() }, 0).unwrap_err();
    assert_eq!(e.quantity(), "gyro_noise_density");
    let nan_bias = SensorErrorModel { bias: Vector3::new(f64::NAN, 0.0, 0.0), ..Default::default() };
    let e = ImuErrorGenerator::new(ImuErrorModel { accelerometer: nan_bias, ..Default::default() }, 0).unwrap_err();
    assert_eq!(e, Error::NonFinite { quantity: "accelerometer_bias" });
}

#[test]
fn a_corrupted_stationary_run_drifts_as_a_tilt_bias_predicts() {
    // Reference: with height held, a north accelerometer bias b drives the north position
    // error as (b/ω_s²)(1 − cos ω_s t), ω_s² = g/R: it swings between 0 and 2bR/g over one
    // Schuler period (Titterton and Weston 2004, §12.3.1; common practice). With b = 1e-4 m/s²
    // the peak is 130 m. Tolerance: 3% (the Foucault and Earth-rate couplings at 45°).
    let here = rotaframe::earth::Geodetic::from_degrees(45.0, 11.0, 120.0);
    let ned = rotaframe::earth::local_level_motion(&WGS84, &here, &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = rotaframe::earth::earth_motion(&WGS84, 0.0, 0.0)
        .unwrap()
        .then(&ned)
        .then(&FrameMotion::<rotaframe::frames::Ned, Body>::identity());
    let dt = 0.05;
    let imu = ideal_imu(&WGS84, GravityModel::Normal, &body).unwrap();
    let ideal = ImuIncrement::new(imu.angular_rate * dt, imu.specific_force * dt, dt);
    let b = 1e-4;
    let accelerometer = SensorErrorModel { bias: Vector3::new(b, 0.0, 0.0), ..Default::default() };
    let mut generator = ImuErrorGenerator::new(ImuErrorModel { accelerometer, ..Default::default() }, 3).unwrap();
    let start = rotaframe::nav::NavState::new(here, Vector3::zeros(), UnitQuaternion::identity());
    let cfg =
        StrapdownConfig { vertical: rotaframe::nav::VerticalChannel::Hold, frame: NavFrame::Ned, ..StrapdownConfig::default() };
    let mut ins = Strapdown::new(cfg, &start).unwrap();
    let radii = rotaframe::earth::radii_of_curvature(&WGS84, here.latitude).unwrap();
    let g = rotaframe::earth::normal_gravity_at_height(&WGS84, here.latitude, here.height).unwrap();
    let mut largest: f64 = 0.0;
    for _ in 0..(84.4 * 60.0 / dt) as usize {
        ins.step(&generator.corrupt(&ideal).unwrap()).unwrap();
        largest = largest.max(((ins.state().position.latitude - here.latitude) * radii.meridian).abs());
    }
    let expected = 2.0 * b * (radii.meridian + here.height) / g;
    eprintln!("north accelerometer bias 1e-4 m/s²: peak north error {largest:.3} m, 2bR/g = {expected:.3} m");
    assert!((largest / expected - 1.0).abs() < 0.03);
}

#[test]
fn recorded_log_of_a_pole_crossing_produces_finite_increments() {
    // Samples straddling the pole: the body-to-ECEF quaternion is continuous there even though
    // NED axes swing with longitude; the interpolant (ECEF-based) stays smooth.
    let times: Vec<f64> = (0..50).map(|k| f64::from(k) * 0.1).collect();
    let speed = 50.0;
    let positions: Vec<rotaframe::earth::Geodetic> = times
        .iter()
        .map(|&t| {
            // Straight along the 0°/180° meridian plane through the pole at t = 2.45 s.
            let s = speed * (t - 2.45);
            let lat = core::f64::consts::FRAC_PI_2 - (s / 6.4e6).abs();
            rotaframe::earth::Geodetic::new(lat, if s < 0.0 { 0.0 } else { core::f64::consts::PI }, 1000.0)
        })
        .collect();
    let attitudes: Vec<[f64; 4]> =
        times.iter().map(|&t| if t < 2.45 { [1.0, 0.0, 0.0, 0.0] } else { [0.0, 0.0, 0.0, 1.0] }).collect();
    let mut path =
        RecordedTrajectory::new(WGS84, RecordedSlices { times: &times, positions: &positions, attitudes: &attitudes }).unwrap();
    let incs: Vec<ImuIncrement> = imu_increments(&WGS84, GravityModel::Normal, |t| path.inertial_motion_at::<Body>(t), &times)
        .collect::<Result<_, _>>()
        .unwrap();
    for inc in &incs {
        assert!(inc.delta_angle.norm() < 1e-5, "{inc:?}");
        assert!((inc.delta_velocity.norm() - 9.83 * 0.1).abs() < 0.01);
    }
}
