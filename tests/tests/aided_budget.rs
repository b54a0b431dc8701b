//! The error budget by source (`rotaframe::aided::budget`), on the manoeuvring flight of
//! `rotaframe_tests::aided` with GNSS position and velocity fixes.
//!
//! * The parts add up: the filtered parts to the filter's own covariance, the smoothed parts
//!   to the smoothed total (the linearity of the covariance recursions in the covariance and
//!   the noise; common practice).
//! * Each part is the covariance of a run with only its source present and the gains of the
//!   full run: checked against the error of that run written out as an explicit linear map of
//!   the source's noise (every column of the initial covariance's factor, of each step's
//!   `Q_d` and of each update's `R`), pushed through the filter's transitions and gains and the
//!   smoother's adjoint recursions of Bierman (1977, ch. X; from memory).
//! * Over Monte Carlo runs with one source drawn at a time, the scatter of the errors matches
//!   that source's part: `Σ e²/σ²_s` over `n` runs against the chi-square band of `n` degrees
//!   of freedom.

use nalgebra::{DMatrix, DVector, SMatrix};
use rotaframe::aided::budget::{BudgetSink, BudgetSource, NoiseTerm, StateGroup};
use rotaframe::aided::{MAX_ROWS, SmootherLog};
use rotaframe::nalgebra;
use rotaframe::nav::ImuErrorModel;
use rotaframe_tests::aided::{Flight, SmoothedRun, Switches, Trace, chi_square_inverse, smoothed_run_with, tactical_imu};

const ALL: [usize; 15] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14];

/// The budget of every state at every IMU time.
#[derive(Default)]
struct Parts {
    filtered: Vec<Vec<f64>>,
    smoothed: Vec<Vec<f64>>,
    total: Vec<Vec<f64>>,
}

impl BudgetSink for Parts {
    fn filtered(&mut self, index: usize, parts: &[f64]) {
        assert_eq!(index, self.filtered.len());
        self.filtered.push(parts.to_vec());
    }
    fn smoothed(&mut self, index: usize, parts: &[f64], total: &[f64]) {
        if self.smoothed.is_empty() {
            self.smoothed = vec![Vec::new(); index + 1];
            self.total = vec![Vec::new(); index + 1];
        }
        self.smoothed[index] = parts.to_vec();
        self.total[index] = total.to_vec();
    }
}

fn budget_of(log: &SmootherLog, states: &[usize]) -> Parts {
    let mut parts = Parts::default();
    log.budget(2, states, true, &mut parts).unwrap();
    parts
}

/// The sum over sources of state `j` (of `m` requested).
fn sum(parts: &[f64], j: usize, m: usize) -> f64 {
    parts.iter().skip(j).step_by(m).sum()
}

#[test]
fn parts_add_up_to_the_filtered_covariance_and_the_smoothed_total() {
    let flight = Flight::standard();
    let imu = tactical_imu();
    let (run, log) = smoothed_run_with(&flight, &imu, 3, Some((100.0, 160.0)), &Switches::all(&imu));
    let parts = budget_of(&log, &ALL);
    assert_eq!(parts.filtered.len(), run.filtered_sigma.len());
    let (mut worst_filtered, mut worst_smoothed, mut worst_relative, mut worst_model) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for (k, (filtered, smoothed)) in parts.filtered.iter().zip(&parts.smoothed).enumerate() {
        for i in 0..15 {
            let variance = run.filtered_sigma[k][i].powi(2);
            worst_filtered = worst_filtered.max((sum(filtered, i, 15) - variance).abs() / variance);
            let total = parts.total[k][i];
            let difference = (sum(smoothed, i, 15) - total).abs();
            worst_smoothed = worst_smoothed.max(difference / variance);
            worst_relative = worst_relative.max(difference / total);
            worst_model = worst_model.max((total - run.smoothed_sigma[k][i].powi(2)).abs() / total);
        }
    }
    println!(
        "filtered {worst_filtered:e}; smoothed {worst_smoothed:e} of the filtered variance, {worst_relative:e} of the smoothed; \
         against the smoother {worst_model:e}"
    );
    // The parts go through the same linear recursions as the whole, so they differ by rounding
    // only: relative to the filter's variance, a few ulps per product over 12,000 steps.
    assert!(worst_filtered < 1e-12, "filtered parts vs the filter's covariance: {worst_filtered:e}");
    assert!(worst_smoothed < 1e-12, "smoothed parts vs the smoothed total, of the filtered variance: {worst_smoothed:e}");
    // Relative to the smoothed total itself the rounding is larger where the smoother removes
    // most of the variance (late in the outage, the total is 1/1000 of the filter's: the
    // quadratic forms (I − PΛ) X (I − PΛ)ᵀ lose three digits to the correlations); measured
    // 4e-11.
    assert!(worst_relative < 1e-9, "smoothed parts vs the smoothed total: {worst_relative:e}");
    // The total (I − PΛ) P (I − PΛ)ᵀ + P Ḡ P against the smoother's P − P Λ P: equal for a step
    // that is exactly Φ P Φᵀ + Q_d, which the filter's is to second order in T; measured below
    // 2e-4 (printed; where the smoothed variance is a thousandth of the filtered), shrinking as T³
    // with the rate (see the explicit-map test).
    assert!(worst_model < 1e-3, "the smoothed total vs the smoother's covariance: {worst_model:e}");
}

#[test]
fn positive_sources_give_non_negative_parts_and_the_sets_are_recorded() {
    let flight = Flight::standard();
    let imu = tactical_imu();
    let (_, log) = smoothed_run_with(&flight, &imu, 4, None, &Switches { duration: 60.0, ..Switches::all(&imu) });
    let sources = log.budget_sources(2);
    assert!(!sources.contains(&BudgetSource::InitialCoupling), "a diagonal P0 has no coupling source");
    let parts = budget_of(&log, &ALL);
    let index = |s: BudgetSource| sources.iter().position(|&x| x == s).unwrap();
    let (position_fixes, velocity_fixes) = (index(BudgetSource::Measurements(0)), index(BudgetSource::Measurements(1)));
    let end = parts.filtered.len() - 1;
    // Both sets were applied, so both have a part in the position's variance at the end.
    for source in [position_fixes, velocity_fixes] {
        assert!(parts.filtered[end][source * 15] > 0.0);
        assert!(parts.smoothed[end / 2][source * 15] > 0.0);
    }
    for (filtered, (smoothed, total)) in parts.filtered.iter().zip(parts.smoothed.iter().zip(&parts.total)) {
        for s in 0..sources.len() {
            for i in 0..15 {
                // A covariance's diagonal, up to the rounding of the total it is part of.
                // A covariance's diagonal, up to the step's truncation: the second-order step is
                // Φ X Φᵀ to O(T²) only, so a part that has nearly vanished can dip below zero
                // by its third-order terms (measured −1.3e-9 of the total).
                assert!(filtered[s * 15 + i] >= -1e-8 * sum(filtered, i, 15), "{:?}, state {i}", sources[s]);
                assert!(smoothed[s * 15 + i] >= -1e-8 * total[i], "{:?}, state {i}", sources[s]);
            }
        }
    }
}

/// The outputs at which the explicit linear map is compared.
const COMPARED_EVERY: usize = 40;

/// The filtered and smoothed covariance of the nine navigation states at every
/// [`COMPARED_EVERY`]-th IMU time of a run with only `source` present, from the explicit linear
/// map of its noise (see the module documentation).
fn only_source(traces: &[Trace], source: BudgetSource, p0: &SMatrix<f64, 15, 15>, imu: &ImuErrorModel) -> Vec<[[f64; 15]; 2]> {
    let psd = rotaframe::linearise::inertial::noise_psd(imu);
    // Columns of the source's noise, with their weights (a column u of weight w adds w u uᵀ).
    let inputs: Vec<usize> = match source {
        BudgetSource::Noise(term) => (term.first_input()..term.first_input() + 3).filter(|&m| psd[m] > 0.0).collect(),
        _ => Vec::new(),
    };
    let steps = traces.iter().filter(|t| matches!(t, Trace::Step(_))).count();
    let updates = traces.iter().filter(|t| matches!(t, Trace::Update(_, set) if Some(*set) == measurement_set(source))).count();
    let columns = 3 + steps * 2 * inputs.len() + updates * MAX_ROWS;
    let mut weights = DVector::<f64>::zeros(columns);
    let mut e = DMatrix::<f64>::zeros(15, columns);
    if let BudgetSource::Initial(group) = source {
        for a in 0..3 {
            let i = group.first_state() + a;
            e[(i, a)] = p0[(i, i)].sqrt();
            weights[a] = 1.0;
        }
    }
    let mut next = 3;
    let identity = SMatrix::<f64, 15, 15>::identity();
    let (mut before_updates, mut kept) = (Vec::new(), Vec::new());
    let mut outputs = 0;
    // Forward: e ← Φ e + w at a step, e ← (I − K H) e + K v at an update.
    for trace in traces {
        match trace {
            Trace::Step(step) => {
                let (f, g, t) = (&step.0, &step.1, step.2);
                let phi = identity + f * t + f * f * (t * t / 2.0);
                e = DMatrix::from_column_slice(15, 15, phi.as_slice()) * &e;
                for &m in &inputs {
                    let column = g.column(m).into_owned();
                    let w = f * column * (t * t / 2.0) + column * (t / 2.0);
                    // q (g wᵀ + w gᵀ) = (q/2) [(g + w)(g + w)ᵀ − (g − w)(g − w)ᵀ].
                    for (sign, u) in [(1.0, column + w), (-1.0, column - w)] {
                        e.column_mut(next).copy_from(&u);
                        weights[next] = sign * psd[m] / 2.0;
                        next += 1;
                    }
                }
            }
            Trace::Update(gain, set) => {
                let own = Some(*set) == measurement_set(source);
                let mut v = DMatrix::<f64>::zeros(MAX_ROWS, columns);
                if own {
                    for row in 0..gain.rows {
                        v[(row, next)] = 1.0;
                        weights[next] = gain.noise_variance[row];
                        next += 1;
                    }
                }
                before_updates.push((e.clone(), v.clone()));
                let a = identity - gain.gain * gain.jacobian;
                let (a, k) =
                    (DMatrix::from_column_slice(15, 15, a.as_slice()), DMatrix::from_column_slice(15, 3, gain.gain.as_slice()));
                e = a * &e + k * v;
            }
            Trace::Output(p) => {
                if outputs % COMPARED_EVERY == 0 {
                    kept.push((outputs, e.clone(), **p));
                }
                outputs += 1;
            }
        }
    }
    // Backward: λ ← Φᵀ λ at a step, λ ← −Hᵀ S⁻¹ ν + (I − K H)ᵀ λ with ν = H e⁻ − v at an update;
    // the smoothed error e + P λ at each kept output.
    let mut lambda = DMatrix::<f64>::zeros(15, columns);
    let mut results = vec![[[0.0; 15]; 2]; kept.len()];
    let covariance = |x: &DMatrix<f64>| -> [f64; 15] {
        let mut out = [0.0; 15];
        for (i, o) in out.iter_mut().enumerate() {
            *o = x.row(i).iter().zip(weights.iter()).map(|(u, w)| w * u * u).sum();
        }
        out
    };
    let mut output = outputs;
    for trace in traces.iter().rev() {
        match trace {
            Trace::Output(_) => {
                output -= 1;
                if let Some(slot) = kept.iter().position(|(k, _, _)| *k == output) {
                    let (_, e, p) = &kept[slot];
                    // The smoothed estimate of the error is −P λ, which the smoother removes.
                    let smoothed = e + DMatrix::from_column_slice(15, 15, p.as_slice()) * &lambda;
                    results[slot] = [covariance(e), covariance(&smoothed)];
                }
            }
            Trace::Update(gain, _) => {
                let (e, v) = before_updates.pop().unwrap();
                let h = DMatrix::from_column_slice(3, 15, gain.jacobian.as_slice());
                let hs = DMatrix::from_column_slice(15, 3, (gain.jacobian.transpose() * gain.s_inverse).as_slice());
                let a = identity - gain.gain * gain.jacobian;
                let innovation = &h * e - v;
                lambda = DMatrix::from_column_slice(15, 15, a.transpose().as_slice()) * &lambda - hs * innovation;
            }
            Trace::Step(step) => {
                let (f, t) = (&step.0, step.2);
                let phi = identity + f * t + f * f * (t * t / 2.0);
                lambda = DMatrix::from_column_slice(15, 15, phi.transpose().as_slice()) * &lambda;
            }
        }
    }
    results
}

fn measurement_set(source: BudgetSource) -> Option<usize> {
    match source {
        BudgetSource::Measurements(set) => Some(set),
        _ => None,
    }
}

#[test]
fn each_part_is_the_covariance_of_a_run_with_only_its_source_and_the_full_runs_gains() {
    let flight = Flight::standard();
    let imu = tactical_imu();
    let switches = Switches { duration: 12.0, trace: true, ..Switches::all(&imu) };
    let (run, log) = smoothed_run_with(&flight, &imu, 5, None, &switches);
    let parts = budget_of(&log, &ALL);
    let sources = log.budget_sources(2);
    let start = flight.truth[0].position;
    let p0 = rotaframe_tests::aided::initial_covariance(&start, &imu);
    let mut worst = 0.0f64;
    for (s, &source) in sources.iter().enumerate() {
        let explicit = only_source(&run.traces, source, &p0, &imu);
        for (slot, [filtered, smoothed]) in explicit.iter().enumerate() {
            let k = slot * COMPARED_EVERY;
            for i in 0..15 {
                let (scale_f, scale_s) = (sum(&parts.filtered[k], i, 15), parts.total[k][i]);
                let df = (parts.filtered[k][s * 15 + i] - filtered[i]).abs() / scale_f;
                let ds = (parts.smoothed[k][s * 15 + i] - smoothed[i]).abs() / scale_s;
                worst = worst.max(df).max(ds);
            }
        }
    }
    // The explicit map steps the error by Φ = I + F T + F² T²/2 exactly; the filter's
    // covariance step is Φ P Φᵀ + Q_d to second order in T (its third- and fourth-order
    // products dropped). Measured: 1.5e-5 of the state's total variance at 50 Hz over 12 s, and
    // 2.0e-7 at 200 Hz over 6 s (the harness's rate raised for the trial): shrinking as T³, the
    // truncation and not the split.
    println!("worst difference from the explicit map: {worst:e} of the total");
    assert!(worst < 1e-4, "a part differs from its source's explicit run by {worst:e} of the total");
}

/// Errors of `runs` seeded runs with only the sources of `switches` drawn.
fn monte_carlo(flight: &Flight, imu: &ImuErrorModel, switches: &Switches, runs: u64) -> Vec<SmoothedRun> {
    std::thread::scope(|scope| {
        let half = runs / 2;
        let a = scope.spawn(move || {
            (0..half).map(|seed| smoothed_run_with(flight, imu, 100 + seed, None, switches).0).collect::<Vec<_>>()
        });
        let mut b: Vec<_> = (half..runs).map(|seed| smoothed_run_with(flight, imu, 100 + seed, None, switches).0).collect();
        let mut all = a.join().unwrap();
        all.append(&mut b);
        all
    })
}

#[test]
fn scatter_of_runs_with_one_source_matches_its_part() {
    let flight = Flight::standard();
    let imu = tactical_imu();
    let runs = 24;
    let duration = 120.0;
    let mut arw = ImuErrorModel::default();
    arw.gyro.noise_density = imu.gyro.noise_density;
    let none = Switches { duration, ..Switches::none() };
    let cases = [
        (
            BudgetSource::Initial(StateGroup::Attitude),
            Switches { initial: [false, false, false, false, false, false, true, true, true], ..none },
        ),
        (BudgetSource::Noise(NoiseTerm::AngleRandomWalk), Switches { sensors: arw, ..none }),
        (BudgetSource::Measurements(0), Switches { position_noise: true, ..none }),
    ];
    // The run with no source drawn still has errors (the mechanization's own, at 50 Hz in
    // manoeuvres): the response to a source is the difference from it (the errors are linear in
    // the sources to their size).
    let floor = smoothed_run_with(&flight, &imu, 0, None, &none).0;
    // Two-sided 99.9 % band of χ²(24) (each check; 36 checks, a fixed seed set).
    let (low, high) = chi_square_band(runs as f64, 0.001);
    for (source, switches) in cases {
        // The gains of a run with the same source (they depend on the data only through the
        // nominal trajectory, the same to the errors' size).
        let (_, log) = smoothed_run_with(&flight, &imu, 1, None, &switches);
        let sources = log.budget_sources(2);
        let s = sources.iter().position(|&x| x == source).unwrap();
        let states = [0usize, 1, 5, 8];
        let parts = budget_of(&log, &states);
        let samples = monte_carlo(&flight, &imu, &switches, runs);
        for k in [500, 2500, 4500, 5999] {
            for (j, &i) in states.iter().enumerate() {
                let variance_f = parts.filtered[k][s * states.len() + j];
                let variance_s = parts.smoothed[k][s * states.len() + j];
                let chi_f: f64 =
                    samples.iter().map(|r| (r.filtered_error[k][i] - floor.filtered_error[k][i]).powi(2) / variance_f).sum();
                let chi_s: f64 =
                    samples.iter().map(|r| (r.smoothed_error[k][i] - floor.smoothed_error[k][i]).powi(2) / variance_s).sum();
                for (name, chi) in [("filtered", chi_f), ("smoothed", chi_s)] {
                    assert!(
                        (low..=high).contains(&chi),
                        "{source:?}, state {i} at step {k}, {name}: Σ e²/σ² = {chi:.1} outside [{low:.1}, {high:.1}]"
                    );
                }
            }
        }
    }
}

/// The two-sided band of probability `1 − alpha` of χ²(k).
fn chi_square_band(k: f64, alpha: f64) -> (f64, f64) {
    (chi_square_inverse(alpha / 2.0, k), chi_square_inverse(1.0 - alpha / 2.0, k))
}
