//! The fixed-interval smoother (`rotaframe::aided::smoother`).
//!
//! * Against an independent solution: on a short linear model the adjoint (modified
//!   Bryson–Frazier) pass after a Kalman filter gives the batch weighted least-squares
//!   solution of all states over all epochs at once (H. E. Rauch, F. Tung and C. T. Striebel,
//!   AIAA J. 3 (1965): the smoother is the maximum-likelihood estimate given all the data;
//!   G. J. Bierman, *Factorization Methods for Discrete Sequential Estimation* (1977)).
//! * Against the filter, on the manoeuvring flight of `rotaframe_tests::aided`: its σ never
//!   exceeds the filter's; its errors are consistent with its covariance (NEES band, as for
//!   the filter in `aided_consistency.rs`); across a 60 s GNSS outage its mid-outage horizontal
//!   error is a fraction of the filter's.

use nalgebra::{DMatrix, DVector, Matrix3, SMatrix, SVector, Vector3};
use rotaframe::aided::{Adjoint, AidedNavigator, FilterSettings, Gain, SmootherLog};
use rotaframe::nalgebra;
use rotaframe::nav::{ImuErrorModel, NavState, Strapdown, StrapdownConfig};
use rotaframe_tests::Seeded;
use rotaframe_tests::aided::{Flight, SmoothedRun, chi_square_cdf, mems_imu, normal, smoothed_run, tactical_imu};

/// A four-state linear model (two double integrators), measured in one or two of its
/// position states at each epoch.
const STATES: usize = 4;
const EPOCHS: usize = 12;

fn transition() -> SMatrix<f64, STATES, STATES> {
    let t = 0.5;
    SMatrix::<f64, STATES, STATES>::from_row_slice(&[
        1.0, t, 0.0, 0.0, //
        0.0, 1.0, 0.0, 0.0, //
        0.0, 0.0, 1.0, t, //
        0.0, 0.0, 0.0, 0.9,
    ])
}

fn process_noise() -> SMatrix<f64, STATES, STATES> {
    SMatrix::<f64, STATES, STATES>::from_diagonal(&SVector::<f64, STATES>::new(0.01, 0.04, 0.02, 0.09))
}

/// The measurement at epoch `k`: rows (1 or 2) of `H` and their variances.
fn measurement(k: usize) -> (usize, SMatrix<f64, 3, STATES>, [f64; 3]) {
    let mut h = SMatrix::<f64, 3, STATES>::zeros();
    if k % 3 == 2 {
        h[(0, 0)] = 1.0;
        (1, h, [0.3, 0.0, 0.0])
    } else {
        h[(0, 0)] = 1.0;
        h[(1, 2)] = 1.0;
        h[(1, 3)] = 0.2;
        (2, h, [0.5, 0.2, 0.0])
    }
}

#[test]
fn adjoint_pass_after_the_filter_equals_batch_weighted_least_squares() {
    let mut rng = Seeded(17);
    let x0 = SVector::<f64, STATES>::new(1.0, -0.5, 2.0, 0.3);
    let p0 = SMatrix::<f64, STATES, STATES>::from_diagonal(&SVector::<f64, STATES>::new(1.0, 0.5, 2.0, 0.7));
    let (phi, q) = (transition(), process_noise());
    let z: Vec<SVector<f64, 3>> = (0..EPOCHS).map(|_| SVector::<f64, 3>::from_fn(|_, _| normal(&mut rng))).collect();

    // Kalman filter: update at each epoch, then propagate to the next (prior at epoch 0 is
    // x0, p0). Record P after the update and the gains.
    let mut x = x0;
    let mut p = p0;
    let mut posterior = Vec::new();
    let mut gains = Vec::new();
    for (k, zk) in z.iter().enumerate() {
        let (rows, h, r) = measurement(k);
        let mut s = h * p * h.transpose();
        for i in 0..3 {
            s[(i, i)] += if i < rows { r[i] } else { 1.0 };
        }
        let s_inverse = s.try_inverse().unwrap();
        let k_gain = p * h.transpose() * s_inverse;
        let mut zk = *zk;
        for i in rows..3 {
            zk[i] = 0.0;
        }
        // The state itself is estimated here, so the innovation the adjoint takes is the
        // standard z − H x̂ (the aided filter's error state δx = x̂ − x has ν = ẑ − z instead).
        let nu = zk - h * x;
        x += k_gain * nu;
        p = (SMatrix::<f64, STATES, STATES>::identity() - k_gain * h) * p;
        posterior.push((x, p));
        gains.push(Gain::<STATES> {
            rows,
            jacobian: h,
            s_inverse: Matrix3::from(s_inverse),
            innovation: nu,
            gain: k_gain,
            noise_variance: Vector3::zeros(),
        });
        x = phi * x;
        p = phi * p * phi.transpose() + q;
    }
    // The adjoint pass, backwards.
    let mut adjoint = Adjoint::<STATES>::zero();
    let mut smoothed = vec![(SVector::<f64, STATES>::zeros(), SMatrix::<f64, STATES, STATES>::zeros()); EPOCHS];
    for k in (0..EPOCHS).rev() {
        if k + 1 < EPOCHS {
            adjoint.through_transition(&phi);
        }
        let (xk, pk) = posterior[k];
        let (correction, covariance) = adjoint.smoothed(&pk);
        smoothed[k] = (xk + correction, covariance);
        adjoint.through_update(&gains[k]);
    }

    // Batch weighted least squares over the stacked states x_0 .. x_{E−1}: the prior on x_0,
    // the dynamics x_{k+1} − Φ x_k = w_k (weight Q⁻¹) and the measurements.
    let n = STATES * EPOCHS;
    let mut normal_matrix = DMatrix::<f64>::zeros(n, n);
    let mut rhs = DVector::<f64>::zeros(n);
    let add = |a: &DMatrix<f64>, w: &DMatrix<f64>, b: &DVector<f64>, nm: &mut DMatrix<f64>, r: &mut DVector<f64>| {
        *nm += a.transpose() * w * a;
        *r += a.transpose() * w * b;
    };
    let block = |k: usize, m: &SMatrix<f64, STATES, STATES>, rows: usize| {
        let mut a = DMatrix::<f64>::zeros(rows, n);
        a.view_mut((0, STATES * k), (rows, STATES)).copy_from(&m.rows(0, rows));
        a
    };
    let p0_inverse = DMatrix::from_column_slice(STATES, STATES, p0.try_inverse().unwrap().as_slice());
    add(
        &block(0, &SMatrix::identity(), STATES),
        &p0_inverse,
        &DVector::from_column_slice(x0.as_slice()),
        &mut normal_matrix,
        &mut rhs,
    );
    let q_inverse = DMatrix::from_column_slice(STATES, STATES, q.try_inverse().unwrap().as_slice());
    for k in 0..EPOCHS - 1 {
        let a = block(k + 1, &SMatrix::identity(), STATES) - block(k, &phi, STATES);
        add(&a, &q_inverse, &DVector::zeros(STATES), &mut normal_matrix, &mut rhs);
    }
    for (k, zk) in z.iter().enumerate() {
        let (rows, h, r) = measurement(k);
        let mut a = DMatrix::<f64>::zeros(rows, n);
        a.view_mut((0, STATES * k), (rows, STATES)).copy_from(&h.rows(0, rows));
        let w = DMatrix::from_fn(rows, rows, |i, j| if i == j { 1.0 / r[i] } else { 0.0 });
        add(&a, &w, &DVector::from_column_slice(&zk.as_slice()[..rows]), &mut normal_matrix, &mut rhs);
    }
    let covariance = normal_matrix.clone().try_inverse().unwrap();
    let solution = &covariance * rhs;

    // Tolerance: both are exact in exact arithmetic; the normal equations of a 48-state
    // problem with condition number about 1e4 lose about 4 of 16 digits, so 1e-9 relative to
    // the largest entry leaves a margin of 1e3.
    let scale_x = solution.amax();
    let scale_p = covariance.amax();
    for (k, (xs, ps)) in smoothed.iter().enumerate() {
        for i in 0..STATES {
            let batch = solution[STATES * k + i];
            assert!((xs[i] - batch).abs() <= 1e-9 * scale_x, "state {i} at epoch {k}: {} vs {batch}", xs[i]);
            for j in 0..STATES {
                let batch = covariance[(STATES * k + i, STATES * k + j)];
                assert!((ps[(i, j)] - batch).abs() <= 1e-9 * scale_p, "P[{i},{j}] at epoch {k}: {} vs {batch}", ps[(i, j)]);
            }
        }
    }
}

fn flight() -> &'static Flight {
    static FLIGHT: std::sync::OnceLock<Flight> = std::sync::OnceLock::new();
    FLIGHT.get_or_init(Flight::standard)
}

#[test]
fn smoothed_sigma_never_exceeds_the_filtered_and_equals_it_at_the_last_time() {
    let run: SmoothedRun = smoothed_run(flight(), &tactical_imu(), 3, Some((120.0, 180.0)));
    let last = run.filtered_sigma.len() - 1;
    for (k, (f, s)) in run.filtered_sigma.iter().zip(&run.smoothed_sigma).enumerate() {
        for i in 0..15 {
            // 1e-4 relative (the bound): the two σ come from P and P − PΛP with Λ
            // positive semi-definite, so only rounding can put the smoothed above.
            assert!(s[i] <= f[i] * (1.0 + 1e-4), "state {i} at step {k}: smoothed {} > filtered {}", s[i], f[i]);
        }
        if k == last {
            // Nothing after the last time: the smoother is the filter there, to rounding.
            for i in 0..15 {
                assert!((s[i] - f[i]).abs() <= 1e-12 * f[i], "state {i} at the end: {} vs {}", s[i], f[i]);
            }
            assert!((run.smoothed_error[k] - run.filtered_error[k]).amax() < 1e-12);
        }
    }
    // Mid-outage the smoother must be much better than the filter (in σ).
    let mid = 150 * 50;
    let horizontal = |s: &[f64; 15]| s[0].hypot(s[1]);
    println!(
        "mid-outage σ(lat, lon): filtered {:.3e}, smoothed {:.3e}",
        horizontal(&run.filtered_sigma[mid]),
        horizontal(&run.smoothed_sigma[mid])
    );
    assert!(horizontal(&run.smoothed_sigma[mid]) < 0.5 * horizontal(&run.filtered_sigma[mid]));
}

/// Horizontal error (m) from the latitude and longitude errors (rad).
fn horizontal_metres(e: &SVector<f64, 9>, latitude: f64) -> f64 {
    let r = 6.378e6;
    (e[0] * r).hypot(e[1] * r * latitude.cos())
}

#[test]
fn across_a_sixty_second_outage_the_smoother_quarters_the_filters_mid_outage_error() {
    const SEEDS: u64 = 8;
    let f = flight();
    let mid = 150 * 50;
    let latitude = f.truth[mid].position.latitude;
    let runs: Vec<SmoothedRun> = std::thread::scope(|scope| {
        let a = scope
            .spawn(|| (0..SEEDS / 2).map(|s| smoothed_run(f, &mems_imu(), 100 + s, Some((120.0, 180.0)))).collect::<Vec<_>>());
        let mut all: Vec<_> = (SEEDS / 2..SEEDS).map(|s| smoothed_run(f, &mems_imu(), 100 + s, Some((120.0, 180.0)))).collect();
        let mut first = a.join().unwrap();
        first.append(&mut all);
        first
    });
    let (mut filtered, mut smoothed) = (0.0, 0.0);
    for run in &runs {
        let fe = horizontal_metres(&run.filtered_error[mid], latitude);
        let se = horizontal_metres(&run.smoothed_error[mid], latitude);
        let s = &run.smoothed_sigma[mid];
        let bound = 3.0 * (s[0] * 6.378e6).hypot(s[1] * 6.378e6 * latitude.cos());
        println!("mid-outage horizontal error: filtered {fe:.2} m, smoothed {se:.2} m (3σ {bound:.2} m)");
        // The bound, per run: within 3·√(σ_N² + σ_E²).
        assert!(se <= bound, "smoothed error {se} beyond 3σ {bound}");
        filtered += fe * fe;
        smoothed += se * se;
    }
    let (filtered, smoothed) = ((filtered / SEEDS as f64).sqrt(), (smoothed / SEEDS as f64).sqrt());
    println!("RMS over {SEEDS} runs: filtered {filtered:.2} m, smoothed {smoothed:.2} m");
    assert!(smoothed <= 0.25 * filtered, "smoothed RMS {smoothed} vs filtered {filtered}");
}

#[test]
fn smoothed_nees_lies_within_its_99_percent_band_over_40_runs() {
    const RUNS: u64 = 40;
    let f = flight();
    let runs: Vec<SmoothedRun> = std::thread::scope(|scope| {
        let a = scope.spawn(|| (0..RUNS / 2).map(|s| smoothed_run(f, &tactical_imu(), s, None)).collect::<Vec<_>>());
        let mut b: Vec<_> = (RUNS / 2..RUNS).map(|s| smoothed_run(f, &tactical_imu(), s, None)).collect();
        let mut all = a.join().unwrap();
        all.append(&mut b);
        all
    });
    // NEES of the nine navigation states at every accepted GNSS epoch, averaged over runs and
    // epochs; the band is that of χ²(9R)/R, as in aided_consistency.rs (the time average of
    // correlated averages has at most that variance).
    let mut total = 0.0;
    let mut count = 0usize;
    for run in &runs {
        for (k, p) in &run.epochs {
            let e = run.smoothed_error[*k];
            total += e.dot(&(p.try_inverse().unwrap() * e));
            count += 1;
        }
    }
    let mean = total / count as f64;
    let k = 9.0 * RUNS as f64;
    let quantile = |target: f64| {
        let (mut lo, mut hi) = (0.0, 10.0 * k + 100.0);
        for _ in 0..200 {
            let m = 0.5 * (lo + hi);
            if chi_square_cdf(m, k) < target { lo = m } else { hi = m }
        }
        hi / RUNS as f64
    };
    let (low, high) = (quantile(0.005), quantile(0.995));
    println!("smoothed NEES {mean:.3} (99 % band {low:.3} to {high:.3})");
    assert!(mean > low && mean < high, "smoothed NEES {mean} outside [{low}, {high}]");
}

#[test]
fn smoothing_is_refused_when_the_covariance_is_not_propagated_every_increment() {
    let here = rotaframe::earth::Geodetic::from_degrees(45.0, 7.0, 200.0);
    let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
    let mut p0 = [0.0; 225];
    for i in 0..15 {
        p0[i * 16] = 1e-4;
    }
    let settings = FilterSettings { gate: None, propagate_every: 10 };
    let nav = AidedNavigator::new(ins, &ImuErrorModel::default(), &p0, 15, settings).unwrap();
    let error = SmootherLog::new(&nav).unwrap_err();
    assert_eq!(error.quantity(), "smooth");
}

/// Smoothed σ of every state at every IMU time.
struct Sigmas(Vec<Vec<f64>>);

impl rotaframe::aided::SmoothedSink for Sigmas {
    fn point(&mut self, index: usize, point: &rotaframe::aided::SmoothedPoint<'_>) {
        let mut row = point.sigma.to_vec();
        row.extend_from_slice(point.correction);
        self.0[index] = row;
    }
}

#[test]
fn recording_call_by_call_smooths_exactly_as_the_batch_run() {
    use rotaframe::aided::{Measurement, MeasurementSet, MeasurementSlices, SmootherRecorder};
    use rotaframe::earth::{Geodetic, WGS84, earth_rate_ned, gravity_ned};
    use rotaframe::nav::ImuIncrement;
    // A stationary IMU with the tactical model's fixed terms, zero-velocity updates every
    // second and a heading fix at 3 s: the batch run and the call-by-call recorder see the same
    // calls, so their logs, and the smoothed solutions, are the same to the bit.
    let here = Geodetic::from_degrees(45.0, 7.0, 200.0);
    let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(here, Vector3::zeros(), Default::default())).unwrap();
    let imu = tactical_imu();
    let mut p0 = [0.0; 225];
    for i in 0..15 {
        p0[i * 16] = if i < 2 { 1e-12 } else { 1e-4 };
    }
    let nav = AidedNavigator::new(ins, &imu, &p0, 15, FilterSettings::default()).unwrap();
    let (dt, steps) = (0.01, 500);
    let w = earth_rate_ned(&WGS84, here.latitude).unwrap() * dt + Vector3::new(1e-6, -2e-6, 3e-6);
    let f = -gravity_ned(&WGS84, here.latitude, here.height).unwrap() * dt + Vector3::new(2e-4, 1e-4, -1e-4);
    let times: Vec<f64> = (0..=steps).map(|k| k as f64 * dt).collect();
    let (dtheta, dv) = (vec![[w.x, w.y, w.z]; steps], vec![[f.x, f.y, f.z]; steps]);
    let zupt = Measurement::ZeroVelocity { sigma_ned: Vector3::repeat(0.01) };
    let heading = Measurement::Heading { heading: 0.001, sigma: 0.01 };
    let (zupt_times, zupts) = (vec![1.0, 2.0, 3.0, 4.0, 5.0], vec![zupt; 5]);
    let (heading_times, headings) = (vec![3.0], vec![heading]);
    let sets = [
        MeasurementSlices { times: &zupt_times, measurements: &zupts },
        MeasurementSlices { times: &heading_times, measurements: &headings },
    ];
    let dyn_sets: Vec<&dyn MeasurementSet> = sets.iter().map(|s| s as &dyn MeasurementSet).collect();
    let mut batch_nav = nav;
    let mut batch = SmootherLog::new(&batch_nav).unwrap();
    batch_nav.run(&times, &dtheta, &dv, &dyn_sets, &mut batch).unwrap();
    let mut by_hand = nav;
    let mut recorder = SmootherRecorder::new(&by_hand).unwrap();
    for k in 0..steps {
        // The run's interval is the difference of its times, as here.
        recorder.predict(&mut by_hand, &ImuIncrement::new(w, f, times[k + 1] - times[k])).unwrap();
        let t = times[k + 1];
        if (t - t.round()).abs() < 1e-9 {
            recorder.update(&mut by_hand, &zupt, 0).unwrap();
            if (t - 3.0).abs() < 1e-9 {
                recorder.update(&mut by_hand, &heading, 1).unwrap();
            }
        }
    }
    assert_eq!(recorder.len(), steps + 1);
    let (mut a, mut b) = (Sigmas(vec![Vec::new(); steps + 1]), Sigmas(vec![Vec::new(); steps + 1]));
    batch.smooth(&mut a).unwrap();
    recorder.log(&by_hand).unwrap().smooth(&mut b).unwrap();
    if let Some(k) = (0..=steps).find(|&k| a.0[k] != b.0[k]) {
        panic!("first difference at IMU time {k}: {:?} vs {:?}", &a.0[k][..6], &b.0[k][..6]);
    }
    // A navigator changed behind the recorder's back is refused by name.
    let mut other = by_hand;
    other.predict(&ImuIncrement::new(w, f, dt)).unwrap();
    let refused = recorder.predict(&mut other, &ImuIncrement::new(w, f, dt)).unwrap_err();
    assert_eq!(refused.quantity(), "nav");
}
