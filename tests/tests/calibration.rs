//! IMU calibration checked against the library's own forward model and the statistics it
//! claims: ideal IMU outputs at a site (the `nav` chain Earth → local level → table → body),
//! corrupted by the `nav::sensor` error model with known parameters, calibrated back.
//!
//! The references here are the error model and `ideal_imu` (both verified against published
//! values in their own tests), the normal distribution (for the coverage of the reported
//! covariance), and the Gram-matrix invariance of the magnitude fit (a property of the
//! problem, common practice).

use rotaframe::calibrate::{
    AccelerometerPosition, CalibrationSite, GyroRecord, ImuCalibration, ParameterSet, TriadCalibration, TriadParameters,
    calibrate_accelerometers, calibrate_accelerometers_by_magnitude, calibrate_gyros, misalignment_index,
};
use rotaframe::earth::{GravityModel, WGS84, earth_motion, local_level_motion};
use rotaframe::frames::{Body, Ned};
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra::{Matrix3, UnitQuaternion, Vector3};
use rotaframe::nav::{ImuErrorGenerator, ImuErrorModel, ImuIncrement, SensorErrorModel, ideal_imu, imu_increments};
use rotaframe::{Error, earth::Geodetic};
use rotaframe_tests::Seeded;

rotaframe::frame!(Table);

/// The test site (invented): a laboratory at 51.3° N, 95 m.
fn site() -> CalibrationSite {
    CalibrationSite::new(51.3_f64.to_radians(), 95.0)
}

/// Twelve attitudes (body to NED): each axis up and down, and six tilted positions.
fn twelve_attitudes() -> Vec<UnitQuaternion<f64>> {
    let euler = [
        (0.0, 0.0, 0.0),
        (180.0, 0.0, 0.0),
        (90.0, 0.0, 0.0),
        (-90.0, 0.0, 0.0),
        (0.0, 90.0, 0.0),
        (0.0, -90.0, 0.0),
        (45.0, 0.0, 30.0),
        (0.0, 45.0, 120.0),
        (-45.0, 30.0, 200.0),
        (135.0, -20.0, 290.0),
        (60.0, 60.0, 10.0),
        (-120.0, -50.0, 75.0),
    ];
    euler
        .iter()
        .map(|&(roll, pitch, yaw): &(f64, f64, f64)| {
            UnitQuaternion::from_euler_angles(roll.to_radians(), pitch.to_radians(), yaw.to_radians())
        })
        .collect()
}

/// The ideal output (rate, specific force) of a body held at `attitude` at the site, from the
/// navigation chain ECI → ECEF → NED → body.
fn ideal_static(attitude: &UnitQuaternion<f64>, time: f64) -> (Vector3<f64>, Vector3<f64>) {
    let s = site();
    let ned =
        local_level_motion(&WGS84, &Geodetic::new(s.latitude, 0.3, s.height), &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = FrameMotion::<Ned, Body>::from_rotation(*attitude).unwrap();
    let chain = earth_motion(&WGS84, time, 0.0).unwrap().then(&ned).then(&body);
    let sample = ideal_imu(&WGS84, GravityModel::Normal, &chain).unwrap();
    (sample.angular_rate, sample.specific_force)
}

fn sensor(rng: &mut Seeded, bias: f64, scale: f64) -> SensorErrorModel {
    let mut misalignment = Matrix3::from_fn(|_, _| rng.next_signed() * scale);
    misalignment.fill_diagonal(0.0);
    SensorErrorModel { bias: rng.vector(bias), scale_factor: rng.vector(scale), misalignment, ..SensorErrorModel::default() }
}

fn truth_vector(model: &SensorErrorModel) -> [f64; 12] {
    let mut p = [0.0; 12];
    for i in 0..3 {
        p[i] = model.bias[i];
        p[3 + i] = model.scale_factor[i];
        for j in 0..3 {
            if i != j {
                p[misalignment_index(i, j)] = model.misalignment[(i, j)];
            }
        }
    }
    p
}

/// Mean measured specific force over `seconds` at 100 Hz from the error generator.
fn measured_mean(
    generator: &mut ImuErrorGenerator,
    rate: &Vector3<f64>,
    force: &Vector3<f64>,
    seconds: f64,
) -> (Vector3<f64>, Vector3<f64>) {
    let dt = 0.01;
    let steps = (seconds / dt).round() as usize;
    let (mut angle, mut velocity) = (Vector3::zeros(), Vector3::zeros());
    for _ in 0..steps {
        let m = generator.corrupt(&ImuIncrement::new(rate * dt, force * dt, dt)).unwrap();
        angle += m.delta_angle;
        velocity += m.delta_velocity;
    }
    let total = steps as f64 * dt;
    (angle / total, velocity / total)
}

#[test]
fn accelerometer_parameters_are_recovered_without_noise() {
    let mut rng = Seeded(11);
    for _ in 0..20 {
        let accelerometer = sensor(&mut rng, 0.05, 2e-3);
        let model = ImuErrorModel { accelerometer, ..ImuErrorModel::default() };
        let mut generator = ImuErrorGenerator::new(model, 1).unwrap();
        let positions: Vec<_> = twelve_attitudes()
            .iter()
            .map(|q| {
                let (rate, force) = ideal_static(q, 0.0);
                AccelerometerPosition { attitude: *q, specific_force: measured_mean(&mut generator, &rate, &force, 1.0).1 }
            })
            .collect();
        let cal = calibrate_accelerometers(&site(), positions.iter().copied(), TriadParameters::Full, None, None).unwrap();
        let found = cal.parameters();
        // "Recovered to 1e-9": the forward model agrees with the site reference to ~1e-13 m/s²
        // (ideal_imu's tests) and the fit's rounding is ~1e-15; 1e-9 is the bound.
        for (k, want) in truth_vector(&accelerometer).iter().enumerate() {
            assert!((found[k] - want).abs() < 1e-9, "parameter {k}: {} vs {want}", found[k]);
        }
        assert_eq!(cal.estimated, ParameterSet::ALL);
        assert!(cal.condition_number < 10.0, "a well-spread set is well conditioned: {}", cal.condition_number);
    }
}

/// The mean rate of a body mounted at `mount` on a table turning at `rate` about NED `axis`
/// over `[0, seconds]`, from the increments of the exact chain (six-point Gauss–Legendre per
/// 10 ms interval), and the corrupted mean through `generator`.
fn table_run(
    generator: &mut ImuErrorGenerator,
    mount: &UnitQuaternion<f64>,
    axis: &Vector3<f64>,
    rate: f64,
    seconds: f64,
) -> Vector3<f64> {
    let s = site();
    let ned =
        local_level_motion(&WGS84, &Geodetic::new(s.latitude, 0.3, s.height), &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = FrameMotion::<Table, Body>::from_rotation(*mount).unwrap();
    let times: Vec<f64> = (0..=(seconds * 100.0).round() as usize).map(|k| k as f64 * 0.01).collect();
    let trajectory =
        |t: f64| Ok(earth_motion(&WGS84, t, 0.0)?.then(&ned).then(&FrameMotion::<Ned, Table>::spin(*axis, rate, t)?).then(&body));
    let mut sum = Vector3::zeros();
    for increment in imu_increments(&WGS84, GravityModel::Normal, trajectory, &times) {
        sum += generator.corrupt(&increment.unwrap()).unwrap().delta_angle;
    }
    sum / seconds
}

#[test]
fn gyro_parameters_are_recovered_from_rate_table_runs_without_noise() {
    let mut rng = Seeded(23);
    let gyro = sensor(&mut rng, 1e-4, 1e-3);
    let model = ImuErrorModel { gyro, ..ImuErrorModel::default() };
    let mut generator = ImuErrorGenerator::new(model, 1).unwrap();
    // Body x, y, z along the table axis (down), each turned both ways at 1 rad/s for 7 s (not
    // whole turns, so the Earth-rate averaging formula is exercised), plus two static headings.
    let mounts = [
        UnitQuaternion::from_euler_angles(0.0, -core::f64::consts::FRAC_PI_2, 0.3), // x down
        UnitQuaternion::from_euler_angles(core::f64::consts::FRAC_PI_2, 0.0, 1.1),  // y down
        UnitQuaternion::from_euler_angles(0.0, 0.0, 0.2),                           // z down
    ];
    let axis = Vector3::z();
    let mut records = Vec::new();
    for mount in &mounts {
        for rate in [1.0, -1.0] {
            let measured = table_run(&mut generator, mount, &axis, rate, 7.0);
            records.push(GyroRecord {
                attitude: *mount,
                table_axis_ned: axis,
                table_rate: rate,
                duration: 7.0,
                angular_rate: measured,
            });
        }
    }
    for q in &twelve_attitudes()[..2] {
        let (rate, force) = ideal_static(q, 0.0);
        records.push(GyroRecord::stationary(*q, measured_mean(&mut generator, &rate, &force, 1.0).0));
    }
    let cal = calibrate_gyros(&site(), records.iter().copied(), TriadParameters::Full, None, None).unwrap();
    let found = cal.parameters();
    // 1e-9 (the bound) on rad/s biases and dimensionless scale factors; the increments
    // are exact to ~1e-13 rad per interval, so the mean rates to ~1e-14 rad/s.
    for (k, want) in truth_vector(&gyro).iter().enumerate() {
        assert!((found[k] - want).abs() < 1e-9, "parameter {k}: {} vs {want}", found[k]);
    }
}

#[test]
fn static_gyro_positions_give_biases_against_the_earth_rate() {
    let mut rng = Seeded(5);
    let gyro = SensorErrorModel { bias: rng.vector(2e-5), ..SensorErrorModel::default() };
    let mut generator = ImuErrorGenerator::new(ImuErrorModel { gyro, ..ImuErrorModel::default() }, 2).unwrap();
    let records: Vec<_> = twelve_attitudes()
        .iter()
        .map(|q| {
            let (rate, force) = ideal_static(q, 0.0);
            GyroRecord::stationary(*q, measured_mean(&mut generator, &rate, &force, 1.0).0)
        })
        .collect();
    let cal = calibrate_gyros(&site(), records.iter().copied(), TriadParameters::Bias, None, None).unwrap();
    // Bias only: the Earth rate (7e-5 rad/s) is the reference; recovered to rounding.
    assert!((cal.bias - gyro.bias).amax() < 1e-15, "{:?}", cal.bias - gyro.bias);
    assert_eq!(cal.estimated, ParameterSet(0b111));
    assert_eq!(cal.covariance[(3, 3)], 0.0);
}

#[test]
fn reported_covariance_covers_the_errors_like_a_normal_distribution() {
    // 300 noisy calibrations; with the noise of a position's mean given (VRW / √T), the errors
    // over the reported σ are standard normal: within 1σ, 2σ, 3σ 68.27 %, 95.45 %, 99.73 %
    // (any statistics table). 3600 values per check but correlated within a calibration:
    // bounds of ±0.04, ±0.025, ±0.01 are several standard errors of a fraction.
    let mut rng = Seeded(99);
    let vrw = 2e-3; // m/s/√s
    let seconds: f64 = 2.0;
    let sigma = Vector3::repeat(vrw / seconds.sqrt());
    let mut within = [0usize; 3];
    let mut count = 0usize;
    for seed in 0..300 {
        let mut accelerometer = sensor(&mut rng, 0.05, 2e-3);
        accelerometer.noise_density = Vector3::repeat(vrw);
        let mut generator = ImuErrorGenerator::new(ImuErrorModel { accelerometer, ..ImuErrorModel::default() }, seed).unwrap();
        let positions: Vec<_> = twelve_attitudes()
            .iter()
            .map(|q| {
                let (rate, force) = ideal_static(q, 0.0);
                AccelerometerPosition { attitude: *q, specific_force: measured_mean(&mut generator, &rate, &force, seconds).1 }
            })
            .collect();
        let cal =
            calibrate_accelerometers(&site(), positions.iter().copied(), TriadParameters::Full, Some(&sigma), None).unwrap();
        let (found, sd) = (cal.parameters(), cal.standard_deviations());
        for (k, want) in truth_vector(&accelerometer).iter().enumerate() {
            let z = ((found[k] - want) / sd[k]).abs();
            for (w, limit) in within.iter_mut().zip([1.0, 2.0, 3.0]) {
                *w += usize::from(z <= limit);
            }
            count += 1;
        }
    }
    let fractions: Vec<f64> = within.iter().map(|&w| w as f64 / count as f64).collect();
    assert!((fractions[0] - 0.6827).abs() < 0.04, "{fractions:?}");
    assert!((fractions[1] - 0.9545).abs() < 0.025, "{fractions:?}");
    assert!((fractions[2] - 0.9973).abs() < 0.01, "{fractions:?}");
}

#[test]
fn positions_all_with_z_up_are_refused_naming_what_they_cannot_see() {
    let positions: Vec<_> = [0.0, 90.0, 180.0, 270.0, 45.0, 135.0]
        .iter()
        .map(|yaw: &f64| {
            let q = UnitQuaternion::from_euler_angles(0.0, 0.0, yaw.to_radians());
            AccelerometerPosition { attitude: q, specific_force: ideal_static(&q, 0.0).1 }
        })
        .collect();
    let err = calibrate_accelerometers(&site(), positions.iter().copied(), TriadParameters::Full, None, None).unwrap_err();
    let Error::Unobservable { quantity, parameters, .. } = err else { panic!("{err}") };
    assert_eq!(quantity, "attitude");
    // Level positions: x and y see no gravity (their scale factors and the misalignments
    // onto x and y are invisible), and the z bias cannot be told from the z scale factor.
    for name in ["scale_factor_x", "scale_factor_y", "bias_z", "scale_factor_z", "misalignment_zx", "misalignment_xy"] {
        let index = rotaframe::calibrate::PARAMETER_NAMES.iter().position(|n| *n == name).unwrap();
        assert!(parameters.contains(index), "{name} should be named in {parameters}");
    }
    assert!(err.to_string().contains("scale_factor_x"), "{err}");
    // Bias only is fine from the same positions.
    assert!(calibrate_accelerometers(&site(), positions.iter().copied(), TriadParameters::Bias, None, None).is_ok());
}

#[test]
fn too_few_positions_are_refused() {
    let q = twelve_attitudes();
    let positions: Vec<_> =
        q[..4].iter().map(|q| AccelerometerPosition { attitude: *q, specific_force: ideal_static(q, 0.0).1 }).collect();
    let err = calibrate_accelerometers(&site(), positions.iter().copied(), TriadParameters::Full, None, None).unwrap_err();
    assert!(matches!(err, Error::Invalid { quantity: "attitude", .. }), "{err}");
}

/// Well-spread attitudes (a fixed pseudo-random set) for the magnitude fit.
fn spread_attitudes(n: usize) -> Vec<UnitQuaternion<f64>> {
    let mut rng = Seeded(3);
    (0..n).map(|_| UnitQuaternion::from_scaled_axis(rng.vector(3.0))).collect()
}

#[test]
fn magnitude_fit_recovers_a_lower_triangular_model_without_attitudes() {
    let mut rng = Seeded(41);
    for _ in 0..10 {
        let mut accelerometer = sensor(&mut rng, 0.05, 2e-3);
        // Upper misalignments zero: the calibrated frame is the body frame itself.
        accelerometer.misalignment[(0, 1)] = 0.0;
        accelerometer.misalignment[(0, 2)] = 0.0;
        accelerometer.misalignment[(1, 2)] = 0.0;
        let mut generator = ImuErrorGenerator::new(ImuErrorModel { accelerometer, ..ImuErrorModel::default() }, 1).unwrap();
        let readings: Vec<_> = spread_attitudes(18)
            .iter()
            .map(|q| {
                let (rate, force) = ideal_static(q, 0.0);
                measured_mean(&mut generator, &rate, &force, 0.5).1
            })
            .collect();
        let mut residuals = vec![0.0; readings.len()];
        let cal = calibrate_accelerometers_by_magnitude(&site(), readings.iter().copied(), None, Some(&mut residuals)).unwrap();
        let found = cal.parameters();
        // The 1e-9; the iteration stops at steps below 1e-14 of the parameters.
        for (k, want) in truth_vector(&accelerometer).iter().enumerate() {
            assert!((found[k] - want).abs() < 1e-9, "parameter {k}: {} vs {want}", found[k]);
        }
        assert!(residuals.iter().all(|r| r.abs() < 1e-12), "{residuals:?}");
    }
}

#[test]
fn magnitude_fit_of_a_general_misalignment_keeps_the_gram_matrix() {
    // A full misalignment: only U Uᵀ (U = I + diag(s) + M) and the bias are visible through
    // magnitudes; the fit's lower-triangular U must reproduce them (common practice: the
    // Cholesky factor of U Uᵀ is unique).
    let mut rng = Seeded(43);
    let accelerometer = sensor(&mut rng, 0.05, 2e-3);
    let mut generator = ImuErrorGenerator::new(ImuErrorModel { accelerometer, ..ImuErrorModel::default() }, 1).unwrap();
    let readings: Vec<_> = spread_attitudes(24)
        .iter()
        .map(|q| {
            let (rate, force) = ideal_static(q, 0.0);
            measured_mean(&mut generator, &rate, &force, 0.5).1
        })
        .collect();
    let cal = calibrate_accelerometers_by_magnitude(&site(), readings.iter().copied(), None, None).unwrap();
    let truth = Matrix3::identity() + Matrix3::from_diagonal(&accelerometer.scale_factor) + accelerometer.misalignment;
    let gram_true = truth * truth.transpose();
    let gram_fit = cal.gain() * cal.gain().transpose();
    assert!((gram_true - gram_fit).amax() < 1e-9, "{}", (gram_true - gram_fit).amax());
    assert!((cal.bias - accelerometer.bias).amax() < 1e-9);
    assert_eq!(cal.misalignment[(0, 1)], 0.0);
}

#[test]
fn magnitude_fit_refuses_positions_about_one_axis() {
    // Rolling about x only: the x axis is never loaded, so its scale factor and bias cannot
    // be separated from gravity's magnitude along x.
    let readings: Vec<_> = (0..12)
        .map(|k| {
            let q = UnitQuaternion::from_euler_angles(f64::from(k) * 0.5, 0.0, 0.0);
            ideal_static(&q, 0.0).1
        })
        .collect();
    let err = calibrate_accelerometers_by_magnitude(&site(), readings.iter().copied(), None, None).unwrap_err();
    assert!(matches!(err, Error::Unobservable { quantity: "specific_force", .. }), "{err}");
}

#[test]
fn correct_is_the_exact_inverse_of_the_error_model_without_noise() {
    let mut rng = Seeded(77);
    for _ in 0..200 {
        let model = ImuErrorModel { gyro: sensor(&mut rng, 1e-3, 1e-2), accelerometer: sensor(&mut rng, 0.1, 1e-2) };
        let mut generator = ImuErrorGenerator::new(model, 4).unwrap();
        let calibration = ImuCalibration {
            gyro: TriadCalibration {
                bias: model.gyro.bias,
                scale_factor: model.gyro.scale_factor,
                misalignment: model.gyro.misalignment,
                ..TriadCalibration::perfect()
            },
            accelerometer: TriadCalibration {
                bias: model.accelerometer.bias,
                scale_factor: model.accelerometer.scale_factor,
                misalignment: model.accelerometer.misalignment,
                ..TriadCalibration::perfect()
            },
        };
        assert_eq!(calibration.to_error_model().unwrap(), model);
        let ideal = ImuIncrement::new(rng.vector(0.05), rng.vector(0.2), 0.005 + 0.01 * rng.next_unit());
        let corrected = calibration.correct(&generator.corrupt(&ideal).unwrap()).unwrap();
        // Rounding of a 3 × 3 solve with a near-identity matrix: a few ulp of the increments.
        assert!((corrected.delta_angle - ideal.delta_angle).amax() < 1e-16);
        assert!((corrected.delta_velocity - ideal.delta_velocity).amax() < 1e-15);
    }
}
