//! Consistency of the aided navigator (Y. Bar-Shalom, X. R. Li and T. Kirubarajan,
//! *Estimation with Applications to Tracking and Navigation*, 2001, ch. 5): 100 seeded Monte
//! Carlo runs of the manoeuvring trajectory (4 minutes at 50 Hz, an invented tactical-grade
//! IMU, 1 Hz GNSS position and velocity at a lever arm; `rotaframe_tests::aided`).
//!
//! * **NEES** of position, velocity and attitude (9 states) after each GNSS epoch, averaged
//!   over runs and time. For a consistent filter the average over `R` runs at one epoch is
//!   `χ²(9R)/R`; the time average of such averages has at most that variance (the epochs are
//!   correlated), so the two-sided 99 % band of `χ²(9R)/R` is a test that a consistent filter
//!   passes at least 99 % of the time.
//! * **NIS** of the accepted GNSS innovations: each is a 3-dof chi-square truncated at the
//!   gate (the 0.999 quantile); innovations of a consistent filter are white, so the mean of
//!   all `n` of them lies within `mean ± 2.576 σ/√n` of the truncated distribution (the
//!   99 % band, central limit theorem).
//!
//! `aided_consistency_faults.rs` shows that the same checks fail for a wrong sign in a
//! measurement Jacobian and for process noise 4× too small.

use rotaframe_tests::aided::{Flight, chi_square_inverse, monte_carlo, tactical_imu, truncated_chi_square_moments};

/// The two-sided 99 % band of `χ²(k)/scale`, by bisection on the distribution function.
fn band(k: f64, scale: f64) -> (f64, f64) {
    (chi_square_inverse(0.005, k) / scale, chi_square_inverse(0.995, k) / scale)
}

#[test]
fn nees_and_nis_lie_within_their_99_percent_bands_over_100_runs() {
    const RUNS: u64 = 100;
    let flight = Flight::standard();
    let stats = monte_carlo(&flight, RUNS, &tactical_imu());
    let epochs = stats[0].nees.len();
    let mean_nees = stats.iter().flat_map(|s| s.nees.iter()).sum::<f64>() / (RUNS as f64 * epochs as f64);
    let (low, high) = band(9.0 * RUNS as f64, RUNS as f64);
    println!("time-averaged NEES {mean_nees:.3} (99 % band {low:.3} to {high:.3}, 9 states)");
    assert!(mean_nees > low && mean_nees < high, "NEES {mean_nees} outside [{low}, {high}]");
    let gate = rotaframe::aided::chi_square_quantile(0.999, 3).unwrap();
    let (mean, variance) = truncated_chi_square_moments(3.0, gate);
    for (name, nis) in [
        ("position", stats.iter().flat_map(|s| s.position_nis.iter().copied()).collect::<Vec<_>>()),
        ("velocity", stats.iter().flat_map(|s| s.velocity_nis.iter().copied()).collect::<Vec<_>>()),
    ] {
        let n = nis.len() as f64;
        let average = nis.iter().sum::<f64>() / n;
        let half_width = 2.576 * (variance / n).sqrt();
        println!("{name} NIS mean {average:.4} over {n} (band {:.4} to {:.4})", mean - half_width, mean + half_width);
        assert!((average - mean).abs() < half_width, "{name} NIS {average} outside {mean} ± {half_width}");
    }
    let rejected: usize = stats.iter().map(|s| s.rejected).sum();
    println!("rejected by the 0.999 gate: {rejected}");
}
