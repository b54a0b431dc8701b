//! Behaviour of the aided navigator beyond consistency (`aided_consistency.rs`): the
//! measurement Jacobians against central finite differences of the models themselves,
//! stationary alignment against the handbook error relations, observability of heading and
//! biases, outlier rejection, zero-velocity updates, timing, the covariance's form and bad
//! input.

use rotaframe::aided::{
    AidedFilter, AidedNavigator, FilterSettings, Measurement, MeasurementSlices, StationaryRecord, align_stationary,
    heading_from_course,
};
use rotaframe::earth::{Geodetic, GravityModel, WGS84, earth_motion, local_level_motion};
use rotaframe::frames::{Body, Eci, Ned};
use rotaframe::linearise::aiding::NavPoint;
use rotaframe::motion::{FrameMotion, MotionParts};
use rotaframe::nalgebra::{SMatrix, SVector, UnitQuaternion, Vector3};
use rotaframe::nav::{
    ImuErrorGenerator, ImuErrorModel, ImuIncrement, NavFrame, NavState, SensorErrorModel, Strapdown, StrapdownConfig,
    imu_increments,
};
use rotaframe::rotation::EulerZyx;
use rotaframe::{BatchError, Error};
use rotaframe_tests::Seeded;
use rotaframe_tests::aided::{Flight, LEVER_ARM, POSITION_SIGMA, RATE, initial_covariance, nav_error, normal, tactical_imu};

fn config(frame: NavFrame) -> StrapdownConfig {
    StrapdownConfig { frame, ..StrapdownConfig::default() }
}

/// A moving, banked, turning state.
fn busy_state() -> NavState {
    NavState::new(
        Geodetic::from_degrees(47.3, 8.5, 420.0),
        Vector3::new(14.0, -6.0, 0.4),
        EulerZyx::from_degrees(-25.0, 4.0, 9.0).to_quaternion(),
    )
}

/// Every measurement kind at `state`, with values near its predictions.
fn every_measurement(state: &NavState) -> Vec<Measurement> {
    let mounting = UnitQuaternion::from_euler_angles(0.01, -0.02, 0.03);
    vec![
        Measurement::Position {
            position: state.position,
            sigma_ned: Vector3::repeat(1.0),
            lever_arm: Vector3::new(1.5, -0.4, -1.1),
        },
        Measurement::Velocity {
            velocity_ned: state.velocity_ned,
            sigma_ned: Vector3::repeat(0.1),
            lever_arm: Vector3::new(1.5, -0.4, -1.1),
        },
        Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) },
        Measurement::ZeroAngularRate { sigma: Vector3::repeat(1e-4) },
        Measurement::VehicleConstraint { mounting, lever_arm: Vector3::new(-1.2, 0.0, 0.3), sigma: [0.1, 0.1] },
        Measurement::Odometer { speed: 15.0, mounting, lever_arm: Vector3::new(-1.2, 0.7, 0.3), sigma: 0.05 },
        Measurement::Height { height: state.position.height, sigma: 0.5 },
        Measurement::Heading { heading: -0.4, sigma: 0.01 },
    ]
}

/// `ẑ` moved by an error `δx` of state `j` (size `step`): the stepper perturbed by the
/// navigation error, the rate by the residual gyro errors.
fn predicted_shift(stepper: &Strapdown, rate: &Vector3<f64>, measurement: &Measurement, j: usize, step: f64) -> Vector3<f64> {
    let residual = |delta: f64| {
        let mut s = *stepper;
        let mut e = SVector::<f64, 21>::zeros();
        e[j] = delta;
        let v = |i: usize| Vector3::new(e[i], e[i + 1], e[i + 2]);
        // The estimate is the truth plus the error: remove minus the error.
        s.remove_error(&-v(0), &-v(3), &-v(6)).unwrap();
        let w = rate + v(12) + rate.component_mul(&v(18));
        let point = NavPoint::of(&s, &w);
        measurement.linearise::<21>(&point, &WGS84).unwrap().residual
    };
    // ẑ − z = −y, so ∂ẑ = −(y(+h) − y(−h)) / 2h.
    -(residual(step) - residual(-step)) / (2.0 * step)
}

/// A typical error per state: 1e-6 rad of latitude and longitude (6 m), 1 m, 0.1 m/s, 1 mrad,
/// 1e-2 m/s², 1e-4 rad/s, 1e-3 of scale factor.
const TYPICAL: [f64; 21] =
    [1e-6, 1e-6, 1.0, 0.1, 0.1, 0.1, 1e-3, 1e-3, 1e-3, 1e-2, 1e-2, 1e-2, 1e-4, 1e-4, 1e-4, 1e-3, 1e-3, 1e-3, 1e-3, 1e-3, 1e-3];

#[test]
fn measurement_jacobians_match_central_differences_of_the_models_in_both_mechanizations() {
    let state = busy_state();
    let rate = Vector3::new(0.05, -0.12, 0.3);
    for frame in [NavFrame::Ned, NavFrame::Ecef] {
        let stepper = Strapdown::new(config(frame), &state).unwrap();
        let point = NavPoint::of(&stepper, &rate);
        for measurement in every_measurement(&state) {
            let h = measurement.linearise::<21>(&point, &WGS84).unwrap().jacobian;
            for j in 0..21 {
                // Steps: about 1e-6 of each state's scale (rad for angles and latitude, m,
                // m/s, rad/s, dimensionless scale factors).
                let step = match j {
                    0 | 1 if frame == NavFrame::Ned => 1e-9,
                    0..=2 => 1e-2,
                    3..=5 => 1e-4,
                    _ => 1e-6,
                };
                let numeric = predicted_shift(&stepper, &rate, &measurement, j, step);
                // Compared in the measurement's units for an error of typical size per state
                // (`TYPICAL`): central differences are exact to O(step²); the models leave out
                // terms (see linearise::aiding) whose effect for such an error is below 1e-3 of
                // the measurement's noise σ, such as the turn of the NED axes with an ECEF
                // position error (|v|/R per metre).
                for i in 0..measurement.rows() {
                    let d = (numeric[i] - h[(i, j)]).abs() * TYPICAL[j];
                    assert!(
                        d <= 1e-3 * (h[(i, j)].abs() * TYPICAL[j] + measurement.sigma()[i]),
                        "{frame:?} {measurement:?}: row {i}, state {j}: numeric {} vs analytic {}",
                        numeric[i],
                        h[(i, j)]
                    );
                }
            }
        }
    }
}

/// A record of `seconds` at 100 Hz, standing still at `here` with `attitude`, corrupted by
/// `imu` (seeded).
fn stationary_record(
    here: &Geodetic,
    attitude: UnitQuaternion<f64>,
    imu: &ImuErrorModel,
    seconds: f64,
    seed: u64,
) -> Vec<ImuIncrement> {
    let ned = local_level_motion(&WGS84, here, &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = FrameMotion::<Ned, Body>::from_rotation(attitude).unwrap();
    let trajectory =
        move |t: f64| -> rotaframe::Result<FrameMotion<Eci, Body>> { Ok(earth_motion(&WGS84, t, 0.3)?.then(&ned).then(&body)) };
    let times: Vec<f64> = (0..=(seconds * 100.0) as usize).map(|k| k as f64 / 100.0).collect();
    let mut errors = ImuErrorGenerator::new(*imu, seed).unwrap();
    imu_increments(&WGS84, GravityModel::Normal, trajectory, &times).map(|i| errors.corrupt(&i.unwrap()).unwrap()).collect()
}

#[test]
fn stationary_alignment_errors_follow_bias_over_g_and_east_gyro_bias_over_horizontal_earth_rate() {
    // Titterton and Weston (2004) §10.2, Groves (2013) §5.6: tilt error ≈ accelerometer bias / g,
    // heading error ≈ east gyro bias / (Ω cos φ) (plus tan φ times the tilt error).
    let here = Geodetic::from_degrees(52.0, 5.0, 20.0);
    let truth = EulerZyx::from_degrees(40.0, 1.5, -0.7);
    let imu = ImuErrorModel {
        gyro: SensorErrorModel {
            bias: Vector3::new(0.05_f64.to_radians() / 3600.0, 0.0, 0.0),
            noise_density: Vector3::repeat(0.001_f64.to_radians() / 60.0),
            ..SensorErrorModel::default()
        },
        accelerometer: SensorErrorModel {
            bias: Vector3::new(1e-3, -5e-4, 0.0),
            noise_density: Vector3::repeat(2e-4),
            ..SensorErrorModel::default()
        },
    };
    let record = stationary_record(&here, truth.to_quaternion(), &imu, 300.0, 7);
    let mean = StationaryRecord::from_increments(record.iter().copied()).unwrap();
    let a = align_stationary(&WGS84, &mean, here.latitude, here.height, Some(&imu), None).unwrap();
    let found = EulerZyx::from_quaternion(&a.attitude);
    let g = 9.81;
    let errors = [found.roll - truth.roll, found.pitch - truth.pitch, found.yaw - truth.yaw];
    println!("alignment errors (rad): {errors:?}, σ {:?}", a.sigma);
    // Tilt: the bias over g, to 5 % (the white noise averaged over 300 s is 1e-5 m/s²).
    assert!((errors[0] - (-imu.accelerometer.bias.y / g)).abs() < 0.05 * 5e-4 / g + 2e-6);
    assert!((errors[1] - (imu.accelerometer.bias.x / g)).abs() < 0.05 * 1e-3 / g + 2e-6);
    // Heading: the east component of the gyro bias over Ω cos φ, within the tilt coupling
    // (tan φ times the tilt) and three times the gyro white noise averaged over the record.
    let east_bias = (truth.to_quaternion() * imu.gyro.bias).y;
    let horizontal = WGS84.rotation_rate() * here.latitude.cos();
    let coupling = here.latitude.tan() * errors[0].abs().max(errors[1].abs());
    let noise = 3.0 * imu.gyro.noise_density.x / 300f64.sqrt() / horizontal;
    println!(
        "heading error {:.3e}, east bias / Ω cos φ {:.3e}, allowance {:.1e}",
        errors[2],
        east_bias / horizontal,
        coupling + noise
    );
    assert!((errors[2].abs() - east_bias.abs() / horizontal).abs() < coupling + noise);
    for (e, s) in errors.iter().zip(a.sigma.iter()) {
        assert!(e.abs() <= 3.0 * s, "error {e} beyond 3σ = {}", 3.0 * s);
    }
}

use rotaframe_tests::aided::mems_imu;

#[test]
fn gyrocompassing_is_refused_for_gyros_that_cannot_see_the_earth_rate_and_a_given_heading_is_used() {
    let here = Geodetic::from_degrees(45.0, 7.0, 100.0);
    let imu = mems_imu();
    let record = stationary_record(&here, EulerZyx::from_degrees(120.0, 0.0, 0.0).to_quaternion(), &imu, 60.0, 3);
    let mean = StationaryRecord::from_increments(record.iter().copied()).unwrap();
    let refused = align_stationary(&WGS84, &mean, here.latitude, here.height, Some(&imu), None).unwrap_err();
    assert!(matches!(refused, Error::Undetermined { quantity: "dtheta", unknown: "heading", .. }), "{refused}");
    // From the data alone: the measured horizontal rate is the bias, not Ω cos φ.
    assert!(align_stationary(&WGS84, &mean, here.latitude, here.height, None, None).is_err());
    let given = align_stationary(&WGS84, &mean, here.latitude, here.height, Some(&imu), Some((2.0, 0.05))).unwrap();
    assert!((EulerZyx::from_quaternion(&given.attitude).yaw - 2.0).abs() < 1e-12);
    assert_eq!(given.sigma.z, 0.05);
    // Course over ground.
    let (h, s) = heading_from_course(&Vector3::new(-3.0, -3.0, 0.0), 0.05, 1.0).unwrap();
    assert!((h + 0.75 * std::f64::consts::PI).abs() < 1e-12 && (s - 0.05 / 18f64.sqrt()).abs() < 1e-15);
    assert!(heading_from_course(&Vector3::new(0.1, 0.0, 0.0), 0.05, 1.0).is_err());
}

/// The covariance's 1σ of heading (state 8, about down in NED).
fn heading_sigma<const N: usize>(f: &AidedFilter<N>) -> f64 {
    f.covariance()[(8, 8)].sqrt()
}

fn mems_p0(start: &Geodetic, imu: &ImuErrorModel) -> SMatrix<f64, 15, 15> {
    let mut p = initial_covariance(start, imu);
    p[(6, 6)] = 1e-6;
    p[(7, 7)] = 1e-6;
    p[(8, 8)] = 0.2 * 0.2;
    p
}

#[test]
fn heading_stays_unobservable_standing_still_and_becomes_observable_in_turns() {
    // The gyro bias is a random constant here (a turn-on bias of 10 deg/h): standing still,
    // heading and the east gyro bias then enter the error dynamics only as `Ω cos φ ψ_D + b_E`,
    // so position fixes cannot separate them (Groves 2013, §14.2.6, from memory). A Gauss–Markov
    // bias would let the model read a little heading from the bias's expected decay. The
    // accelerometer biases are random constants too, so that levelling absorbs them: a bias
    // that wanders (2 mg over 5 minutes) looks to a filter linearised at the measured specific
    // force like horizontal acceleration, from which it reads heading that is not there (the
    // spurious observability of the extended Kalman filter; G. P. Huang, A. I. Mourikis and
    // S. I. Roumeliotis, "Observability-based rules for designing consistent EKF SLAM
    // estimators", IJRR 29 (2010)): heading σ then falls to about 0.72× in two minutes.
    let mut imu = mems_imu();
    imu.gyro.markov_time = Vector3::repeat(f64::INFINITY);
    imu.accelerometer.markov_time = Vector3::repeat(f64::INFINITY);
    // Standing still for two minutes with position fixes only, from a levelled start.
    let here = Geodetic::from_degrees(45.0, 7.0, 100.0);
    let attitude = EulerZyx::from_degrees(30.0, 0.0, 0.0).to_quaternion();
    let record = stationary_record(&here, attitude, &imu, 120.0, 11);
    // A levelled start: roll and pitch from the record's mean specific force, the heading
    // given (true, with the σ of p0) since these gyros cannot gyrocompass.
    let mean = StationaryRecord::from_increments(record.iter().copied()).unwrap();
    let levelled =
        align_stationary(&WGS84, &mean, here.latitude, here.height, Some(&imu), Some((30f64.to_radians(), 0.2))).unwrap();
    let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), levelled.attitude)).unwrap();
    let mut filter = AidedFilter::<15>::new(ins, &imu, &mems_p0(&here, &imu), FilterSettings::default()).unwrap();
    let start = heading_sigma(&filter);
    for (k, inc) in record.iter().enumerate() {
        filter.predict(inc).unwrap();
        if (k + 1) % 100 == 0 {
            filter
                .update(&Measurement::Position { position: here, sigma_ned: Vector3::repeat(1.0), lever_arm: Vector3::zeros() })
                .unwrap();
        }
    }
    let still = heading_sigma(&filter);
    println!("heading σ standing: {start:.4} → {still:.4}");
    assert!(still >= 0.8 * start);

    // The manoeuvring flight (turns and accelerations) for two minutes with position fixes.
    let flight = Flight::standard();
    let truth0 = flight.truth[0];
    let ins = Strapdown::new(StrapdownConfig::default(), &truth0).unwrap();
    let mut filter = AidedFilter::<15>::new(ins, &imu, &mems_p0(&truth0.position, &imu), FilterSettings::default()).unwrap();
    let mut errors = ImuErrorGenerator::new(imu, 5).unwrap();
    for (k, inc) in flight.increments.iter().take(120 * RATE as usize).enumerate() {
        filter.predict(&errors.corrupt(inc).unwrap()).unwrap();
        if (k + 1) % RATE as usize == 0 {
            let (antenna, _) = flight.antenna((k + 1) as f64 / RATE);
            filter
                .update(&Measurement::Position {
                    position: antenna,
                    sigma_ned: Vector3::repeat(1.0),
                    lever_arm: Vector3::from(LEVER_ARM),
                })
                .unwrap();
        }
    }
    let turning = heading_sigma(&filter);
    println!("heading σ turning: {start:.4} → {turning:.4}");
    assert!(turning < 0.1 * start);
}

#[test]
fn sensor_biases_converge_within_three_sigma_on_the_manoeuvring_flight() {
    let imu = tactical_imu();
    let flight = Flight::standard();
    let truth0 = flight.truth[0];
    let ins = Strapdown::new(StrapdownConfig::default(), &truth0).unwrap();
    let mut filter =
        AidedFilter::<15>::new(ins, &imu, &initial_covariance(&truth0.position, &imu), FilterSettings::default()).unwrap();
    let mut errors = ImuErrorGenerator::new(imu, 21).unwrap();
    let mut rng = Seeded(99);
    let start_sigma: Vec<f64> = (9..15).map(|i| filter.covariance()[(i, i)].sqrt()).collect();
    for (k, inc) in flight.increments.iter().enumerate() {
        filter.predict(&errors.corrupt(inc).unwrap()).unwrap();
        if (k + 1) % RATE as usize == 0 {
            let (antenna, velocity) = flight.antenna((k + 1) as f64 / RATE);
            let n = Vector3::from_fn(|_, _| normal(&mut rng));
            let noisy = Geodetic { height: antenna.height + POSITION_SIGMA[2] * n.z, ..antenna };
            filter
                .update(&Measurement::Position {
                    position: noisy,
                    sigma_ned: Vector3::from(POSITION_SIGMA),
                    lever_arm: Vector3::from(LEVER_ARM),
                })
                .unwrap();
            filter
                .update(&Measurement::Velocity {
                    velocity_ned: velocity,
                    sigma_ned: Vector3::repeat(0.05),
                    lever_arm: Vector3::from(LEVER_ARM),
                })
                .unwrap();
        }
    }
    // The generator's Gauss–Markov states are the true biases (the fixed parts are zero).
    let (gyro_true, accelerometer_true) = errors.markov_states();
    let estimate = filter.sensor_estimate();
    let found = [estimate.accelerometer_bias, estimate.gyro_bias];
    let truth = [accelerometer_true, gyro_true];
    for triad in 0..2 {
        for axis in 0..3 {
            let i = 9 + 3 * triad + axis;
            let sigma = filter.covariance()[(i, i)].sqrt();
            let e = found[triad][axis] - truth[triad][axis];
            println!("state {i}: error {e:.3e}, σ {sigma:.3e} (from {:.3e})", start_sigma[i - 9]);
            assert!(e.abs() <= 3.0 * sigma, "bias state {i}: error {e} beyond 3σ {sigma}");
        }
    }
    // The accelerometer biases are observable on this flight: their σ shrinks.
    for i in 9..12 {
        assert!(filter.covariance()[(i, i)].sqrt() < 0.5 * start_sigma[i - 9]);
    }
}

#[test]
fn a_fifty_metre_jump_in_one_fix_is_rejected_and_leaves_the_solution_unmoved() {
    let flight = Flight::standard();
    let imu = tactical_imu();
    let ins = Strapdown::new(StrapdownConfig::default(), &flight.truth[0]).unwrap();
    let mut filter =
        AidedFilter::<15>::new(ins, &imu, &initial_covariance(&flight.truth[0].position, &imu), FilterSettings::default())
            .unwrap();
    for (k, inc) in flight.increments.iter().take(60 * RATE as usize).enumerate() {
        filter.predict(inc).unwrap();
        if (k + 1) % RATE as usize == 0 {
            let (mut antenna, _) = flight.antenna((k + 1) as f64 / RATE);
            let jump = k + 1 == 30 * RATE as usize;
            if jump {
                antenna.latitude += 50.0 / 6.37e6;
            }
            let before = filter;
            let report = filter
                .update(&Measurement::Position {
                    position: antenna,
                    sigma_ned: Vector3::from(POSITION_SIGMA),
                    lever_arm: Vector3::from(LEVER_ARM),
                })
                .unwrap();
            if jump {
                println!("jump: NIS {:.1}, innovation {:?}", report.nis, report.innovation);
                assert!(!report.accepted);
                assert_eq!(filter, before);
                assert!((report.innovation.x - 50.0).abs() < 2.0);
            } else {
                assert!(report.accepted);
            }
        }
    }
}

/// A van on a straight road north: `stops` stops of 10 s and moves of 20 s with a smooth
/// speed profile peaking at 8 m/s.
fn stop_and_go(t: f64) -> (bool, f64, f64, f64) {
    let period = 30.0;
    let phase = t % period;
    let cycles = (t / period).floor();
    let (top, moving) = (8.0, 20.0);
    let w = std::f64::consts::TAU / moving;
    let per_cycle = 0.5 * top * moving;
    if phase < 10.0 {
        return (true, cycles * per_cycle, 0.0, 0.0);
    }
    let s = phase - 10.0;
    let distance = 0.5 * top * (s - (w * s).sin() / w);
    (false, cycles * per_cycle + distance, 0.5 * top * (1.0 - (w * s).cos()), 0.5 * top * w * (w * s).sin())
}

#[test]
fn zero_velocity_updates_hold_the_stops_and_cut_drift_tenfold_without_gnss() {
    let here = Geodetic::from_degrees(48.1, 11.6, 520.0);
    let heading = EulerZyx::from_degrees(0.0, 0.0, 0.0).to_quaternion();
    let ned = local_level_motion(&WGS84, &here, &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let trajectory = move |t: f64| -> rotaframe::Result<FrameMotion<Eci, Body>> {
        let (_, s, v, a) = stop_and_go(t);
        let body = FrameMotion::<Ned, Body>::from_parts(MotionParts {
            rotation: heading,
            position: Vector3::new(s, 0.0, 0.0),
            velocity: Vector3::new(v, 0.0, 0.0),
            acceleration: Vector3::new(a, 0.0, 0.0),
            ..MotionParts::default()
        })?;
        Ok(earth_motion(&WGS84, t, 0.3)?.then(&ned).then(&body))
    };
    let seconds = 150.0;
    let times: Vec<f64> = (0..=(seconds * 100.0) as usize).map(|k| k as f64 / 100.0).collect();
    let ideal: Vec<ImuIncrement> = imu_increments(&WGS84, GravityModel::Normal, trajectory, &times).map(|i| i.unwrap()).collect();
    let imu = ImuErrorModel {
        gyro: SensorErrorModel {
            noise_density: Vector3::repeat(0.2_f64.to_radians() / 60.0),
            markov_sigma: Vector3::repeat(5.0_f64.to_radians() / 3600.0),
            ..SensorErrorModel::default()
        },
        accelerometer: SensorErrorModel {
            noise_density: Vector3::repeat(0.1 / 60.0),
            markov_sigma: Vector3::repeat(2e-2),
            ..SensorErrorModel::default()
        },
    };
    let mut errors = ImuErrorGenerator::new(imu, 17).unwrap();
    let measured: Vec<ImuIncrement> = ideal.iter().map(|i| errors.corrupt(i).unwrap()).collect();
    let start = NavState::new(here, Vector3::zeros(), heading);
    let mut p0 = initial_covariance(&here, &imu);
    for i in 0..9 {
        p0[(i, i)] = if i < 2 {
            1e-16
        } else if i < 6 {
            1e-6
        } else {
            1e-8
        };
    }
    let ins = Strapdown::new(StrapdownConfig::default(), &start).unwrap();
    let mut free = ins;
    let mut filter = AidedFilter::<15>::new(ins, &imu, &p0, FilterSettings::default()).unwrap();
    let sigma = 0.01;
    let mut worst_stop_velocity = 0.0f64;
    for (k, inc) in measured.iter().enumerate() {
        free.step(inc).unwrap();
        filter.predict(inc).unwrap();
        let t = times[k + 1];
        let (stopped, ..) = stop_and_go(t);
        if stopped && (k + 1) % 10 == 0 {
            filter.update(&Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(sigma) }).unwrap();
            worst_stop_velocity = worst_stop_velocity.max(filter.state().velocity_ned.amax());
        }
    }
    let truth = |t: f64| {
        let (_, s, ..) = stop_and_go(t);
        s
    };
    let distance = |s: &NavState| {
        let r = rotaframe::earth::radii_of_curvature(&WGS84, here.latitude).unwrap();
        let north = (s.position.latitude - here.latitude) * (r.meridian + here.height) - truth(seconds);
        let east = (s.position.longitude - here.longitude) * (r.prime_vertical + here.height) * here.latitude.cos();
        north.hypot(east)
    };
    let (aided, unaided) = (distance(&filter.state()), distance(&free.state()));
    println!("stop velocity worst {worst_stop_velocity:.4} m/s; drift aided {aided:.2} m, free {unaided:.2} m");
    assert!(worst_stop_velocity <= 3.0 * sigma);
    assert!(aided * 10.0 <= unaided);
    // The covariance kept its form through the updates: symmetric and positive semidefinite.
    let p = *filter.covariance();
    assert_eq!(p, p.transpose());
    let d = p.diagonal().map(|v| 1.0 / v.sqrt());
    let correlation = SMatrix::<f64, 15, 15>::from_fn(|i, j| p[(i, j)] * d[i] * d[j]);
    assert!(correlation.symmetric_eigenvalues().min() > -1e-9);
}

fn small_navigator() -> AidedNavigator {
    let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
    let ins =
        Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), UnitQuaternion::identity())).unwrap();
    let mut p0 = [0.0; 225];
    for i in 0..15 {
        p0[i * 16] = if i < 2 { 1e-12 } else { 1e-4 };
    }
    AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap()
}

fn still_increments(n: usize) -> (Vec<f64>, Vec<[f64; 3]>, Vec<[f64; 3]>) {
    let times = (0..=n).map(|k| k as f64 * 0.01).collect();
    (times, vec![[0.0, 0.0, 0.0]; n], vec![[0.0, 0.0, -0.0981]; n])
}

#[test]
fn a_measurement_between_imu_times_splits_the_increment_at_its_own_time() {
    // A run with a measurement at 0.505 s equals stepping by hand: 50 increments, the 51st
    // split at its middle (half of each increment and interval), the update, the other half.
    let (times, _, dv) = still_increments(100);
    let dtheta = vec![[1e-4, -2e-4, 3e-5]; 100];
    let zupt = [Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) }];
    struct Times(Vec<f64>);
    impl rotaframe::aided::RunSink for Times {
        fn epoch(&mut self, time: f64, _: &AidedNavigator, _: bool) {
            self.0.push(time);
        }
    }
    let mut seen = Times(Vec::new());
    let mut nav = small_navigator();
    let set = MeasurementSlices { times: &[0.505], measurements: &zupt };
    nav.run(&times, &dtheta, &dv, &[&set], &mut seen).unwrap();
    assert_eq!(seen.0, vec![0.505]);
    let mut hand = small_navigator();
    let increment = |k: usize, share: f64, interval: f64| {
        ImuIncrement::new(Vector3::from(dtheta[k]) * share, Vector3::from(dv[k]) * share, interval)
    };
    for k in 0..50 {
        hand.predict(&increment(k, 1.0, times[k + 1] - times[k])).unwrap();
    }
    let share = (0.505 - times[50]) / (times[51] - times[50]);
    let first = increment(50, share, 0.505 - times[50]);
    hand.predict(&first).unwrap();
    hand.update(&zupt[0]).unwrap();
    let rest = ImuIncrement::new(
        Vector3::from(dtheta[50]) - first.delta_angle,
        Vector3::from(dv[50]) - first.delta_velocity,
        times[51] - 0.505,
    );
    hand.predict(&rest).unwrap();
    for k in 51..100 {
        hand.predict(&increment(k, 1.0, times[k + 1] - times[k])).unwrap();
    }
    assert_eq!(nav.state(), hand.state());
    let (mut a, mut b) = ([0.0; 225], [0.0; 225]);
    nav.write_covariance(&mut a).unwrap();
    hand.write_covariance(&mut b).unwrap();
    assert_eq!(a, b);
    assert_eq!(nav.time(), Some(1.0));
}

#[test]
fn bad_run_input_is_refused_by_name_and_leaves_the_navigator_unchanged() {
    let (times, dtheta, dv) = still_increments(10);
    let zupt = [Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) }; 2];
    let check = |times: &[f64], dtheta: &[[f64; 3]], sets: &[&dyn rotaframe::aided::MeasurementSet], quantity: &str| {
        let mut nav = small_navigator();
        let before = nav;
        let e: BatchError = nav.run(times, dtheta, &dv, sets, &mut ()).unwrap_err();
        assert_eq!(e.error.quantity(), quantity, "{e}");
        assert_eq!(nav, before);
    };
    let mut unsorted = times.clone();
    unsorted.swap(3, 4);
    check(&unsorted, &dtheta, &[], "t");
    let mut nan = times.clone();
    nan[5] = f64::NAN;
    check(&nan, &dtheta, &[], "t");
    let duplicate = MeasurementSlices { times: &[0.05, 0.05], measurements: &zupt };
    check(&times, &dtheta, &[&duplicate], "measurements");
    let early = MeasurementSlices { times: &[-0.5, 0.05], measurements: &zupt };
    check(&times, &dtheta, &[&early], "measurements");
    let bad_sigma = [Measurement::ZeroVelocity { sigma_ned: Vector3::new(0.01, -0.01, 0.01) }];
    let negative = MeasurementSlices { times: &[0.05], measurements: &bad_sigma };
    check(&times, &dtheta, &[&negative], "sigma");
    let mut nan_increment = dtheta.clone();
    nan_increment[7][1] = f64::NAN;
    check(&times, &nan_increment, &[], "delta_angle");
    // A p0 that is not positive semidefinite, or not symmetric.
    let ins = *small_navigator().strapdown();
    let mut p0 = [0.0; 225];
    for i in 0..15 {
        p0[i * 16] = 1.0;
    }
    p0[1] = 2.0;
    p0[15] = 2.0;
    let e = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap_err();
    assert_eq!(e.quantity(), "p0");
    p0[15] = 0.5;
    let e = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, FilterSettings::default()).unwrap_err();
    assert_eq!(e.quantity(), "p0");
    // A second run continues from the first one's end, and nowhere else.
    let mut nav = small_navigator();
    nav.run(&times, &dtheta, &dv, &[], &mut ()).unwrap();
    let later: Vec<f64> = times.iter().map(|t| t + 0.1).collect();
    nav.run(&later, &dtheta, &dv, &[], &mut ()).unwrap();
    let e = nav.run(&times, &dtheta, &dv, &[], &mut ()).unwrap_err();
    assert_eq!(e.error.quantity(), "t");
}

#[test]
fn ned_and_ecef_filters_agree_on_the_manoeuvring_flight() {
    let flight = Flight::standard();
    let imu = tactical_imu();
    let mut filters: Vec<AidedFilter<21>> = [NavFrame::Ned, NavFrame::Ecef]
        .iter()
        .map(|&frame| {
            let ins = Strapdown::new(config(frame), &flight.truth[0]).unwrap();
            let mut p0 = SMatrix::<f64, 21, 21>::zeros();
            let p15 = initial_covariance(&flight.truth[0].position, &imu);
            p0.fixed_view_mut::<15, 15>(0, 0).copy_from(&p15);
            for i in 15..21 {
                p0[(i, i)] = 1e-8;
            }
            if frame == NavFrame::Ecef {
                // Position error in ECEF metres: 3 m each way.
                for i in 0..3 {
                    p0[(i, i)] = 9.0;
                }
            }
            AidedFilter::<21>::new(ins, &imu, &p0, FilterSettings::default()).unwrap()
        })
        .collect();
    let mut errors = ImuErrorGenerator::new(imu, 8).unwrap();
    for (k, inc) in flight.increments.iter().take(60 * RATE as usize).enumerate() {
        let measured = errors.corrupt(inc).unwrap();
        for f in &mut filters {
            f.predict(&measured).unwrap();
        }
        if (k + 1) % RATE as usize == 0 {
            let (antenna, velocity) = flight.antenna((k + 1) as f64 / RATE);
            for f in &mut filters {
                f.update(&Measurement::Position {
                    position: antenna,
                    sigma_ned: Vector3::from(POSITION_SIGMA),
                    lever_arm: Vector3::from(LEVER_ARM),
                })
                .unwrap();
                f.update(&Measurement::Velocity {
                    velocity_ned: velocity,
                    sigma_ned: Vector3::repeat(0.05),
                    lever_arm: Vector3::from(LEVER_ARM),
                })
                .unwrap();
            }
        }
    }
    let e = nav_error(&filters[0].state(), &filters[1].state());
    println!("NED minus ECEF after a minute: {e:?}");
    // Both estimate the same errors from the same data: their solutions differ by far less than
    // their σ (0.3 m, 0.02 m/s, 1 mrad here).
    assert!(e[2].abs() < 0.05 && e.fixed_rows::<3>(3).amax() < 5e-3 && e.fixed_rows::<3>(6).amax() < 2e-4);
}
