//! Published behaviour of a stationary INS, from the propagated covariance and from the
//! nonlinear strapdown run: the Schuler oscillation (84.4 min), the rules of thumb for a
//! horizontal accelerometer bias (position error between 0 and 2bR/g) and a horizontal gyro
//! bias (position error growing as R ε t), and the instability of the free vertical channel.
//!
//! Source: D. H. Titterton and J. L. Weston, *Strapdown Inertial Navigation Technology*, 2nd
//! ed. (IEE, 2004), ch. 12, the single-channel error equations of a stationary system
//! (§12.3; equation numbers from memory): `δx = (b/ω_s²)(1 − cos ω_s t)` for an accelerometer
//! bias `b` and `δx = R ε (t − sin(ω_s t)/ω_s)` for a gyro bias `ε` about the perpendicular
//! horizontal axis, with `ω_s² = g/R` (Schuler period 2π √(R/g) ≈ 84.4 min); and
//! `δh = (b/ω_v²)(cosh ω_v t − 1)` for a vertical accelerometer bias with `ω_v² = 2g/R`
//! (time constant 1/ω_v ≈ 570 s). The single-channel forms neglect the Earth-rate coupling
//! between channels; the site is on the equator (no Foucault rotation of the oscillation) and
//! each check's tolerance states what that neglect leaves. The published period and time
//! constant are checked as the values the model's own radius and gravity give.
//!
//! Each case runs a level, north-facing IMU at rest for up to two Schuler periods at 10 Hz
//! with one fixed sensor bias; the error is measured against the same run without it. The
//! covariance is propagated with that bias as the only initial uncertainty and no noise, so
//! `√P` is the magnitude of the linear error.

use rotaframe::earth::{
    Geodetic, GravityModel, WGS84, earth_motion, local_level_motion, normal_gravity_at_height, radii_of_curvature,
};
use rotaframe::frames::{Body, Eci, Ned};
use rotaframe::linearise::inertial::predict_covariance;
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra::{SMatrix, UnitQuaternion, Vector3};
use rotaframe::nav::{
    ImuErrorGenerator, ImuErrorModel, ImuIncrement, MechanizationState, NavState, SensorErrorModel, Strapdown, StrapdownConfig,
    VerticalChannel, imu_increments,
};

const RATE: f64 = 10.0;

fn site() -> Geodetic {
    Geodetic::from_degrees(0.0, 30.0, 0.0)
}

fn stationary_increments(duration: f64) -> Vec<ImuIncrement> {
    let ned = local_level_motion(&WGS84, &site(), &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = FrameMotion::<Ned, Body>::from_rotation(UnitQuaternion::identity()).unwrap();
    let trajectory =
        move |t: f64| -> rotaframe::Result<FrameMotion<Eci, Body>> { Ok(earth_motion(&WGS84, t, 0.0)?.then(&ned).then(&body)) };
    let times: Vec<f64> = (0..=(duration * RATE) as usize).map(|k| k as f64 / RATE).collect();
    imu_increments(&WGS84, GravityModel::Normal, trajectory, &times).collect::<Result<Vec<_>, _>>().unwrap()
}

/// North, east and down position errors (m) and their predicted magnitudes √P, after every
/// step, for one fixed accelerometer or gyro bias (body axes = NED axes here).
struct Response {
    run: Vec<Vector3<f64>>,
    predicted: Vec<Vector3<f64>>,
}

fn response(vertical: VerticalChannel, accelerometer_bias: Vector3<f64>, gyro_bias: Vector3<f64>, duration: f64) -> Response {
    let config = StrapdownConfig { vertical, ..StrapdownConfig::default() };
    let start = NavState::new(site(), Vector3::zeros(), UnitQuaternion::identity());
    let increments = stationary_increments(duration);
    let radii = radii_of_curvature(&WGS84, site().latitude).unwrap();
    let metres = |d: Vector3<f64>| Vector3::new(d.x * radii.meridian, d.y * radii.prime_vertical * site().latitude.cos(), -d.z);
    let position = |s: &Strapdown| match s.parts().1 {
        MechanizationState::Ned { position, .. } => Vector3::new(position.latitude, position.longitude, position.height),
        MechanizationState::Ecef { .. } => unreachable!(),
    };
    let mut reference = Vec::with_capacity(increments.len());
    Strapdown::new(config, &start).unwrap().run_each(&increments, None, |_, s| reference.push(position(s))).unwrap();
    let model = ImuErrorModel {
        accelerometer: SensorErrorModel { bias: accelerometer_bias, ..SensorErrorModel::default() },
        gyro: SensorErrorModel { bias: gyro_bias, ..SensorErrorModel::default() },
    };
    let mut sensor = ImuErrorGenerator::new(model, 1).unwrap();
    let corrupted: Vec<ImuIncrement> = increments.iter().map(|i| sensor.corrupt(i).unwrap()).collect();
    let mut run = Vec::with_capacity(increments.len());
    Strapdown::new(config, &start)
        .unwrap()
        .run_each(&corrupted, None, |k, s| run.push(metres(position(s) - reference[k])))
        .unwrap();
    // The bias as the initial uncertainty of the bias states, no noise.
    let mut p0 = SMatrix::<f64, 15, 15>::zeros();
    for i in 0..3 {
        p0[(9 + i, 9 + i)] = accelerometer_bias[i] * accelerometer_bias[i];
        p0[(12 + i, 12 + i)] = gyro_bias[i] * gyro_bias[i];
    }
    let mut predicted = Vec::with_capacity(increments.len());
    predict_covariance::<15>(
        &Strapdown::new(config, &start).unwrap(),
        &increments,
        None,
        &ImuErrorModel::default(),
        &p0,
        |_, _, p| {
            let sd = Vector3::new(p[(0, 0)].sqrt(), p[(1, 1)].sqrt(), p[(2, 2)].sqrt());
            predicted.push(Vector3::new(sd.x * radii.meridian, sd.y * radii.prime_vertical * site().latitude.cos(), sd.z));
        },
    )
    .unwrap();
    Response { run, predicted }
}

fn time_of(k: usize) -> f64 {
    (k + 1) as f64 / RATE
}

/// The time of the smallest of `values[range]`, refined by a parabola through the three
/// samples around it.
fn time_of_minimum(values: &[f64], range: core::ops::Range<usize>) -> f64 {
    let k = range.clone().min_by(|&a, &b| values[a].total_cmp(&values[b])).unwrap();
    let (a, b, c) = (values[k - 1], values[k], values[k + 1]);
    time_of(k) + 0.5 * (a - c) / (a - 2.0 * b + c) / RATE
}

#[test]
fn a_north_accelerometer_bias_gives_the_schuler_oscillation_between_zero_and_2br_over_g() {
    let b = 1e-3; // m/s², about 100 µg
    let g = normal_gravity_at_height(&WGS84, 0.0, 0.0).unwrap();
    let r = radii_of_curvature(&WGS84, 0.0).unwrap().meridian;
    let schuler = core::f64::consts::TAU * (r / g).sqrt();
    // The published period for a spherical Earth (R = 6371 km, g = 9.81), Titterton and
    // Weston §12.3: 84.4 min; on the equator's meridian radius it is 84.28 min.
    assert!((schuler / 60.0 - 84.4).abs() < 0.2, "{}", schuler / 60.0);
    let out = response(VerticalChannel::Hold, Vector3::new(b, 0.0, 0.0), Vector3::zeros(), 2.05 * schuler);
    let north_run: Vec<f64> = out.run.iter().map(|e| e.x).collect();
    let north_cov: Vec<f64> = out.predicted.iter().map(|e| e.x).collect();
    // Period: the error returns to zero after one and two periods. Tolerance 1e-3 (5 s): the
    // parabola refines the 0.1 s sampling far below that; measured within 0.1 s.
    let n = north_run.len();
    let first = time_of_minimum(&north_run, (n / 4)..(3 * n / 4));
    let second = time_of_minimum(&north_run, (3 * n / 4)..(n - 1));
    let first_cov = time_of_minimum(&north_cov, (n / 4)..(3 * n / 4));
    println!(
        "Schuler: {:.3} min predicted; run returns at {:.3}, {:.3} min; covariance at {:.3} min",
        schuler / 60.0,
        first / 60.0,
        second / 60.0,
        first_cov / 60.0
    );
    assert!((first / schuler - 1.0).abs() < 1e-3 && (second / (2.0 * schuler) - 1.0).abs() < 1e-3);
    assert!((first_cov / schuler - 1.0).abs() < 1e-3);
    // Amplitude: the largest error is 2b/ω_s² = 2bR/g at half a period. On the equator the
    // Earth rate lies along north, parallel to the tilt this bias causes, so the north channel
    // has no Earth-rate coupling to first order and the single-channel form is nearly exact:
    // tolerance 1e-6 (measured below 1e-8, the 10 Hz mechanization against its continuous
    // model).
    let peak = north_run.iter().copied().fold(f64::MIN, f64::max);
    let peak_cov = north_cov.iter().copied().fold(f64::MIN, f64::max);
    let rule = 2.0 * b * r / g;
    println!("peak north error {peak:.3} m (run), {peak_cov:.3} m (covariance), 2bR/g = {rule:.3} m");
    assert!((peak / rule - 1.0).abs() < 1e-6 && (peak_cov / rule - 1.0).abs() < 1e-6);
    // The whole history: run and covariance within 1e-3 of the peak (the linearisation's
    // second-order terms are (δφ)² ~ 1e-12 relative; what remains is the discrete
    // mechanization against its continuous model at 10 Hz).
    let worst = north_run.iter().zip(&north_cov).map(|(a, b)| (a.abs() - b).abs()).fold(0.0, f64::max);
    assert!(worst < 1e-3 * rule, "run against covariance: {worst} m");
    // And the closed form itself, over the whole run, within 1e-6 of the peak (as above;
    // measured 6e-9).
    let omega = core::f64::consts::TAU / schuler;
    let worst_rule =
        (0..n).map(|k| (north_run[k] - b / (omega * omega) * (1.0 - (omega * time_of(k)).cos())).abs()).fold(0.0, f64::max);
    println!("largest difference from b/ω_s² (1 − cos ω_s t): {worst_rule:.3e} m");
    assert!(worst_rule < 1e-6 * rule);
}

#[test]
fn an_east_gyro_bias_gives_a_north_error_growing_as_r_epsilon_t() {
    let epsilon = 1f64.to_radians() / 3600.0; // 1 deg/h
    let g = normal_gravity_at_height(&WGS84, 0.0, 0.0).unwrap();
    let r = radii_of_curvature(&WGS84, 0.0).unwrap().meridian;
    let schuler = core::f64::consts::TAU * (r / g).sqrt();
    let out = response(VerticalChannel::Hold, Vector3::zeros(), Vector3::new(0.0, epsilon, 0.0), 2.0 * schuler + 1.0);
    let omega = core::f64::consts::TAU / schuler;
    for periods in [1.0, 2.0] {
        let k = (periods * schuler * RATE) as usize - 1;
        let t = time_of(k);
        let rule = r * epsilon * (t - (omega * t).sin() / omega);
        let (run, cov) = (out.run[k].x, out.predicted[k].x);
        println!(
            "after {periods} Schuler periods: north error {run:.1} m (run), {cov:.1} m (covariance), R ε t = {:.1} m",
            r * epsilon * t
        );
        // The error is southward (a positive east gyro bias tilts the platform so that the
        // specific force of gravity reads as a southward acceleration).
        assert!(run < 0.0);
        // Run against covariance: 1e-3 (as above). Run against the rule: the neglected
        // Earth-rate coupling (the tilt about east turns into heading error at Ω) removes
        // (Ω t)²/6 of the growth: 2.4e-2 after one period, 9.5e-2 after two; the tolerance is
        // that plus 20 %.
        assert!((run.abs() / cov - 1.0).abs() < 1e-3, "{run} vs {cov}");
        let coupling = (WGS84.rotation_rate() * t).powi(2) / 6.0;
        assert!(
            (run.abs() / rule - 1.0).abs() < 1.2 * coupling,
            "{run} vs {rule}: {} allowed {}",
            run.abs() / rule - 1.0,
            1.2 * coupling
        );
    }
}

#[test]
fn the_free_vertical_channel_diverges_with_a_570_second_time_constant() {
    let b = 1e-4; // m/s² along down
    // ω_v² is the vertical gradient of normal gravity at the site, 2γ_e/a (1 + f + m) at the
    // equator (NIMA TR8350.2, eq. 4-3); the textbook 2g/R is 0.7 % smaller.
    let gradient = {
        let h = 1.0;
        (normal_gravity_at_height(&WGS84, 0.0, -h).unwrap() - normal_gravity_at_height(&WGS84, 0.0, h).unwrap()) / (2.0 * h)
    };
    let omega_v = gradient.sqrt();
    println!("vertical time constant 1/ω_v = {:.1} s", 1.0 / omega_v);
    assert!((1.0 / omega_v - 570.0).abs() < 5.0);
    let duration = 1800.0;
    let out = response(VerticalChannel::Free, Vector3::new(0.0, 0.0, b), Vector3::zeros(), duration);
    for k in [(600.0 * RATE) as usize - 1, (1200.0 * RATE) as usize - 1, (1800.0 * RATE) as usize - 1] {
        let t = time_of(k);
        let rule = b / (omega_v * omega_v) * ((omega_v * t).cosh() - 1.0);
        let (run, cov) = (out.run[k].z, out.predicted[k].z);
        println!("after {t:.0} s: down error {run:.3} m (run), {cov:.3} m (covariance), closed form {rule:.3} m");
        // The height falls (a downward bias reads as a downward acceleration: the down error
        // is positive). Tolerances: run against covariance 1e-3 (as above; measured 2e-5);
        // against the closed form 1e-2: on the equator the Coriolis term couples the vertical
        // and east channels at 2Ω, which the single-channel form neglects, of relative size
        // up to (2Ω t)²/12 ≈ 6e-3 after 30 min (measured 4.4e-3).
        assert!(run > 0.0);
        assert!((run / cov - 1.0).abs() < 1e-3, "{run} vs {cov}");
        assert!((run / rule - 1.0).abs() < 1e-2, "{run} vs {rule}");
    }
}
