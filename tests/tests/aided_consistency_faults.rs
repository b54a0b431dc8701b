//! The consistency checks of `aided_consistency.rs` have power: they fail for a planted wrong
//! sign in a measurement Jacobian (the down row of the position fix, feature
//! `fault-injection`) and for process noise 4× too small (the filter's noise densities
//! halved). One test, so that the global fault switch is never on while another test runs in
//! this binary.

use std::sync::atomic::Ordering;

use rotaframe::linearise::aiding::fault::FLIP_DOWN_SIGN;
use rotaframe_tests::aided::{Flight, monte_carlo, tactical_imu};

/// The time-averaged NEES of 30 runs and its upper 99 % limit for a consistent filter
/// (`χ²(270)/30` at 0.995: 10.7, from the Wilson–Hilferty approximation, E. B. Wilson and
/// M. M. Hilferty, PNAS 17 (1931)).
const UPPER: f64 = 10.7;

fn mean_nees(flight: &Flight, imu: &rotaframe::nav::ImuErrorModel) -> f64 {
    let stats = monte_carlo(flight, 30, imu);
    let all: Vec<f64> = stats.iter().flat_map(|s| s.nees.iter().copied()).collect();
    all.iter().sum::<f64>() / all.len() as f64
}

#[test]
fn nees_check_fails_for_a_wrong_jacobian_sign_and_for_process_noise_four_times_too_small() {
    let flight = Flight::standard();
    let correct = mean_nees(&flight, &tactical_imu());
    println!("correct filter: NEES {correct:.2}");
    assert!(correct < UPPER);

    FLIP_DOWN_SIGN.store(true, Ordering::Relaxed);
    let flipped = mean_nees(&flight, &tactical_imu());
    FLIP_DOWN_SIGN.store(false, Ordering::Relaxed);
    println!("down row of the position Jacobian flipped: NEES {flipped:.2}");
    assert!(flipped > UPPER, "a wrong Jacobian sign went unnoticed (NEES {flipped})");

    // Q 4× too small: every noise density halved (the spectral densities quartered).
    let mut small = tactical_imu();
    small.gyro.noise_density /= 2.0;
    small.accelerometer.noise_density /= 2.0;
    small.gyro.markov_sigma /= 2.0;
    small.accelerometer.markov_sigma /= 2.0;
    let overconfident = mean_nees(&flight, &small);
    println!("process noise 4x too small: NEES {overconfident:.2}");
    assert!(overconfident > UPPER, "process noise 4x too small went unnoticed (NEES {overconfident})");
}
