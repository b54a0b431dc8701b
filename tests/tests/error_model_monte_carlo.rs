//! The propagated error covariance against Monte Carlo runs of the strapdown itself: 500 runs
//! of one hour with seeded sensor errors (white noise, a random-constant gyro bias, a
//! Gauss–Markov accelerometer bias) from `ImuErrorGenerator`, stationary and on a
//! manoeuvring trajectory. At 10, 30 and 60 minutes the sample second moment of every
//! position, velocity and attitude error component must match the diagonal of the covariance
//! that `predict_covariance` propagates, within the sampling error.
//!
//! The bound. Errors are linear in Gaussian inputs, so `n s² / P` is chi-square with `n`
//! degrees of freedom (the mean is known to be zero; second moments about zero). The test
//! accepts `s²/P` between the 0.05 % and 99.95 % quantiles, from the Wilson–Hilferty
//! approximation (E. B. Wilson and M. M. Hilferty, "The distribution of chi-square", PNAS 17,
//! 1931): for n = 500 that is 0.805 to 1.221. With 54 comparisons the chance that a correct
//! model fails one is about 5 %; the seeds are fixed, so the outcome is reproducible, and the
//! measured ratios are printed (`--nocapture`).
//!
//! Errors are measured against an error-free run of the same strapdown (the perturbation the
//! model describes), not against the truth, so the mechanization's own algorithm error on the
//! manoeuvre does not enter. The vertical channel is aided by the true height (time constant
//! 100 s): a free channel diverges (see `error_model_behaviour.rs`) and an hour of it leaves the
//! linear regime. The IMU rate is 10 Hz to keep 36 million steps inside a few seconds; the
//! model is discretised at the same steps, so the rate does not change what is compared.

use std::thread;

use rotaframe::earth::{Geodetic, GravityModel, WGS84, earth_motion, local_level_motion};
use rotaframe::frames::{Body, Eci, Ned};
use rotaframe::linearise::inertial::{bias_covariance, predict_covariance};
use rotaframe::motion::FrameMotion;
use rotaframe::nalgebra::{SMatrix, SVector, UnitQuaternion, Vector3};
use rotaframe::nav::{
    ImuErrorGenerator, ImuErrorModel, ImuIncrement, MechanizationState, NavState, SensorErrorModel, Strapdown, StrapdownConfig,
    VerticalChannel, imu_increments,
};
use rotaframe::rotation::EulerZyx;
use rotaframe_tests::trajectories::Manoeuvres;

const RUNS: u64 = 500;
const RATE: f64 = 10.0;
const CHECK_MINUTES: [usize; 3] = [10, 30, 60];

/// An invented IMU: 0.05 deg/√h angle random walk, a 0.2 deg/h random-constant gyro bias,
/// 0.03 m/s/√h velocity random walk and a 100 µg Gauss–Markov accelerometer bias of 5 min.
fn imu() -> ImuErrorModel {
    ImuErrorModel {
        gyro: SensorErrorModel {
            noise_density: Vector3::repeat(0.05_f64.to_radians() / 60.0),
            markov_sigma: Vector3::repeat(0.2_f64.to_radians() / 3600.0),
            ..SensorErrorModel::default()
        },
        accelerometer: SensorErrorModel {
            noise_density: Vector3::repeat(0.03 / 60.0),
            markov_sigma: Vector3::repeat(1e-3),
            markov_time: Vector3::repeat(300.0),
            ..SensorErrorModel::default()
        },
    }
}

fn config() -> StrapdownConfig {
    StrapdownConfig { vertical: VerticalChannel::Aided { time_constant: 100.0 }, ..StrapdownConfig::default() }
}

/// The navigation error of `estimate` against `reference` in the model's states 0–8.
fn nav_error(estimate: &MechanizationState, reference: &MechanizationState) -> SVector<f64, 9> {
    match (estimate, reference) {
        (
            MechanizationState::Ned { position: a, velocity_ned: va, attitude: qa },
            MechanizationState::Ned { position: b, velocity_ned: vb, attitude: qb },
        ) => {
            let psi = (qa * qb.inverse()).scaled_axis();
            let dv = va - vb;
            SVector::<f64, 9>::from_column_slice(&[
                a.latitude - b.latitude,
                a.longitude - b.longitude,
                a.height - b.height,
                dv.x,
                dv.y,
                dv.z,
                psi.x,
                psi.y,
                psi.z,
            ])
        }
        _ => unreachable!("the NED mechanization is used"),
    }
}

struct Scenario {
    name: &'static str,
    start: NavState,
    increments: Vec<ImuIncrement>,
    heights: Vec<f64>,
}

fn stationary() -> Scenario {
    // A parked vehicle at 52° N, heading 40°, slightly tilted.
    let here = Geodetic::from_degrees(52.0, 5.0, 20.0);
    let attitude = EulerZyx::from_degrees(40.0, 1.5, -0.7).to_quaternion();
    let ned = local_level_motion(&WGS84, &here, &Vector3::zeros(), &Vector3::zeros()).unwrap();
    let body = FrameMotion::<Ned, Body>::from_rotation(attitude).unwrap();
    let trajectory =
        move |t: f64| -> rotaframe::Result<FrameMotion<Eci, Body>> { Ok(earth_motion(&WGS84, t, 0.3)?.then(&ned).then(&body)) };
    let times: Vec<f64> = (0..=(3600.0 * RATE) as usize).map(|k| k as f64 / RATE).collect();
    let increments = imu_increments(&WGS84, GravityModel::Normal, trajectory, &times).collect::<Result<Vec<_>, _>>().unwrap();
    Scenario {
        name: "stationary",
        start: NavState::new(here, Vector3::zeros(), attitude),
        heights: vec![here.height; increments.len()],
        increments,
    }
}

fn manoeuvre() -> Scenario {
    let trajectory = Manoeuvres::standard(WGS84);
    let times: Vec<f64> = (0..=(3600.0 * RATE) as usize).map(|k| k as f64 / RATE).collect();
    let increments = imu_increments(&WGS84, GravityModel::Normal, |t| trajectory.relative_to_inertial(t), &times)
        .collect::<Result<Vec<_>, _>>()
        .unwrap();
    let heights = times[..increments.len()].iter().map(|&t| trajectory.truth(t).unwrap().position.height).collect();
    Scenario { name: "manoeuvre", start: trajectory.truth(0.0).unwrap(), increments, heights }
}

fn checkpoints() -> Vec<usize> {
    CHECK_MINUTES.iter().map(|m| (*m as f64 * 60.0 * RATE) as usize - 1).collect()
}

/// Second moments of the errors at the checkpoints over `RUNS` seeded runs (two threads).
fn monte_carlo(scenario: &Scenario, reference: &[MechanizationState]) -> Vec<SVector<f64, 9>> {
    let checks = checkpoints();
    let worker = |seeds: core::ops::Range<u64>| {
        let mut sums = vec![SVector::<f64, 9>::zeros(); checks.len()];
        for seed in seeds {
            let mut errors = ImuErrorGenerator::new(imu(), 0x5eed_0000 + seed).unwrap();
            let mut ins = Strapdown::new(config(), &scenario.start).unwrap();
            let mut next = 0;
            for (k, inc) in scenario.increments.iter().enumerate() {
                ins.set_height_reference(scenario.heights[k]).unwrap();
                ins.step(&errors.corrupt(inc).unwrap()).unwrap();
                if k == checks[next] {
                    let e = nav_error(&ins.parts().1, &reference[next]);
                    sums[next] += e.component_mul(&e);
                    next += 1;
                    if next == checks.len() {
                        break;
                    }
                }
            }
        }
        sums
    };
    let (a, b) = thread::scope(|s| {
        let first = s.spawn(|| worker(0..RUNS / 2));
        let second = worker(RUNS / 2..RUNS);
        (first.join().unwrap(), second)
    });
    a.iter().zip(&b).map(|(x, y)| (x + y) / RUNS as f64).collect()
}

/// The 0.05 % and 99.95 % quantiles of chi-square with `n` degrees of freedom, divided by
/// `n` (Wilson–Hilferty; z = 3.2905 is the standard normal's 99.95 % point).
fn chi_square_band(n: f64) -> (f64, f64) {
    let z = 3.2905;
    let c = 2.0 / (9.0 * n);
    ((1.0 - c - z * c.sqrt()).powi(3), (1.0 - c + z * c.sqrt()).powi(3))
}

#[test]
fn propagated_covariance_matches_500_monte_carlo_runs_of_the_strapdown_at_10_30_and_60_minutes() {
    let (low, high) = chi_square_band(RUNS as f64);
    assert!((low - 0.805).abs() < 2e-3 && (high - 1.221).abs() < 2e-3, "band {low} {high}");
    let names = ["δφ", "δλ", "δh", "δv_N", "δv_E", "δv_D", "ψ_N", "ψ_E", "ψ_D"];
    let checks = checkpoints();
    for scenario in [stationary(), manoeuvre()] {
        // The error-free run and the predicted covariance along it.
        let mut reference = Vec::new();
        let mut ins = Strapdown::new(config(), &scenario.start).unwrap();
        ins.run_each(&scenario.increments, Some(&scenario.heights), |k, s| {
            if checks.contains(&k) {
                reference.push(s.parts().1);
            }
        })
        .unwrap();
        let mut predicted = Vec::new();
        let start = Strapdown::new(config(), &scenario.start).unwrap();
        let p0 = bias_covariance::<15>(&imu());
        predict_covariance::<15>(
            &start,
            &scenario.increments,
            Some(&scenario.heights),
            &imu(),
            &p0,
            |k, _, p: &SMatrix<f64, 15, 15>| {
                if checks.contains(&k) {
                    predicted.push(p.diagonal().fixed_rows::<9>(0).into_owned());
                }
            },
        )
        .unwrap();
        let sampled = monte_carlo(&scenario, &reference);
        for (c, minutes) in CHECK_MINUTES.iter().enumerate() {
            let ratio = sampled[c].component_div(&predicted[c]);
            println!(
                "{} {minutes:>2} min  s²/P: {}",
                scenario.name,
                (0..9).map(|i| format!("{} {:.3}", names[i], ratio[i])).collect::<Vec<_>>().join("  ")
            );
            for i in 0..9 {
                assert!(
                    (low..=high).contains(&ratio[i]),
                    "{} at {minutes} min: {} has s²/P = {:.3} (sampled σ {:.3e}, predicted σ {:.3e}), outside [{low:.3}, {high:.3}]",
                    scenario.name,
                    names[i],
                    ratio[i],
                    sampled[c][i].sqrt(),
                    predicted[c][i].sqrt()
                );
            }
        }
    }
    let _ = UnitQuaternion::<f64>::identity();
}
