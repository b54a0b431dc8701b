//! The error covariance propagated over an interval by its own series, and predicted along a
//! strapdown run (formulas: the [module documentation](super) and each function).

use nalgebra::SMatrix;

use super::discretise::{RowPattern, Rows, discretise_covariance, left_product, noise_covariance, symmetric_sum, symmetrise};
use super::model::{error_model, noise_psd};
use crate::error::Error;
use crate::nav::{ImuErrorModel, ImuIncrement, Strapdown};

/// `Φ P Φᵀ + Q_d` over `interval` (s) for the model `F` with continuous noise covariance
/// `Q_c`, without forming `Φ` or `Q_d`: the exact solution of the covariance equation
/// `Ṗ = F P + P Fᵀ + Q_c` from `P` by its Taylor series, `P(T) = Σ Y_k Tᵏ/k!` with `Y₀ = P`,
/// `Y₁ = F P + P Fᵀ + Q_c`, `Y_{k+1} = F Y_k + Y_k Fᵀ` (one sparse product per term, where
/// `Φ P Φᵀ + Q_d` costs the series of both and two more products). Summed until every entry
/// of a term is below 1e-16 of its own scale (`|P_ij| + √(P_ii P_jj)`), so that small
/// variances (a latitude's, in rad²) keep their relative precision beside large ones. For a
/// long interval (`‖F T‖∞ > 1/4`) it is `Φ P Φᵀ + Q_d` from [`discretise_covariance`].
///
/// ```
/// use nalgebra::SMatrix;
/// use rotaframe::linearise::inertial::propagate_covariance;
/// // A random walk x' = w of density 2: P grows by 2 T.
/// let f = SMatrix::<f64, 1, 1>::zeros();
/// let p = propagate_covariance(&f, &SMatrix::<f64, 1, 1>::new(2.0), &SMatrix::<f64, 1, 1>::new(1.0), 0.5);
/// assert_eq!(p[(0, 0)], 2.0);
/// ```
#[must_use]
pub fn propagate_covariance<const N: usize>(
    f: &SMatrix<f64, N, N>,
    qc: &SMatrix<f64, N, N>,
    p: &SMatrix<f64, N, N>,
    interval: f64,
) -> SMatrix<f64, N, N> {
    let norm = (0..N).map(|i| f.row(i).iter().map(|x| x.abs()).sum::<f64>()).fold(0.0, f64::max);
    if norm * interval > 0.25 {
        let (phi, qd) = discretise_covariance(f, qc, interval);
        let mut out = phi * p * phi.transpose() + qd;
        symmetrise(&mut out);
        return out;
    }
    macro_rules! sized {
        ($n:literal, $w:literal, $twin:ident) => {
            if N == $n {
                let f = SMatrix::<f64, $n, $n>::from_column_slice(f.as_slice());
                let qc = SMatrix::<f64, $n, $n>::from_column_slice(qc.as_slice());
                let p = SMatrix::<f64, $n, $n>::from_column_slice(p.as_slice());
                let out = crate::fast_call!($twin, lyapunov_series::<$n, $w>, (&f, &qc, &p, interval));
                return SMatrix::from_column_slice(out.as_slice());
            }
        };
    }
    sized!(15, 16, lyapunov_15_fast);
    sized!(21, 24, lyapunov_21_fast);
    lyapunov_series::<N, N>(f, qc, p, interval)
}

type Square<const N: usize> = SMatrix<f64, N, N>;
crate::fast_twin!(fn lyapunov_15_fast(f: &Square<15>, qc: &Square<15>, p: &Square<15>, t: f64) -> Square<15> = lyapunov_series::<15, 16>);
crate::fast_twin!(fn lyapunov_21_fast(f: &Square<21>, qc: &Square<21>, p: &Square<21>, t: f64) -> Square<21> = lyapunov_series::<21, 24>);

#[inline(always)]
fn lyapunov_series<const N: usize, const W: usize>(f: &Square<N>, qc: &Square<N>, p: &Square<N>, t: f64) -> Square<N> {
    let pattern = RowPattern::<N>::of(f.as_slice());
    let mut sum = Rows::<N, W>::from_columns(p.as_slice(), 1.0);
    let mut term = sum;
    let mut product = Rows::<N, W>::zeros();
    for k in 1..40 {
        let scale = t / f64::from(k);
        left_product(&pattern, &term, scale, &mut product);
        let mut scales = [0.0f64; W];
        for (i, s) in scales.iter_mut().enumerate().take(N) {
            *s = crate::math::sqrt(sum.0[i][i].abs());
        }
        // The term (the product plus its transpose), then one vectorised pass that adds it
        // and finds the largest excess of an entry over its tolerance.
        symmetric_sum(&product, &mut term);
        if k == 1 {
            for i in 0..N {
                for j in 0..N {
                    term.0[i][j] += qc[(i, j)] * t;
                }
            }
        }
        let mut excess = [f64::NEG_INFINITY; W];
        for i in 0..N {
            let (row, total, d) = (&term.0[i], &mut sum.0[i], scales[i]);
            for j in 0..W {
                total[j] += row[j];
                let over = row[j].abs() - 1e-16 * (total[j].abs() + d * scales[j]);
                excess[j] = if over > excess[j] { over } else { excess[j] };
            }
        }
        let converged = excess.iter().all(|&e| e <= 0.0);
        if converged {
            break;
        }
    }
    let mut out = sum.matrix();
    symmetrise(&mut out);
    out
}

/// Predicts the error covariance of a strapdown run: starting from `stepper` (its state is
/// the start of the run) with covariance `p0`, for each increment builds `F`, `G` at the state
/// at the start of the interval with the increment's specific force and rate, propagates
/// `P ← Φ P Φᵀ + Q_d` over the interval with the noise of `model` (see
/// [`propagate_covariance`]), steps the stepper,
/// and hands `(index, stepper, P)` to `sink` after every step. `height_reference` is as in
/// [`Strapdown::run`] (element `k` is the height reference set before step `k`), so that the
/// linearisation follows the same path as the run it predicts.
///
/// # Errors
/// [`BatchError`](crate::BatchError)-style: the first failing step's index with its error
/// (as [`Strapdown::step`], [`error_model`], [`discretise`](super::discretise)); [`Error::NonFinite`] naming `p0`;
/// [`Error::LengthMismatch`] naming `height_reference` unless it has one element per
/// increment.
///
/// ```
/// use nalgebra::{SMatrix, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::inertial::predict_covariance;
/// use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, SensorErrorModel, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::zeros(), Default::default())).unwrap();
/// let gyro = SensorErrorModel { noise_density: Vector3::repeat(1e-5), ..Default::default() };
/// let model = ImuErrorModel { gyro, ..Default::default() };
/// let still = vec![ImuIncrement::new(Vector3::zeros(), Vector3::new(0.0, 0.0, -0.098), 0.01); 100];
/// let mut last = SMatrix::<f64, 15, 15>::zeros();
/// predict_covariance::<15>(&ins, &still, None, &model, &SMatrix::zeros(), |_, _, p| last = *p).unwrap();
/// // One second of angle random walk: attitude variance N_g² t about each axis.
/// assert!((last[(6, 6)] / 1e-10 - 1.0).abs() < 1e-6);
/// ```
pub fn predict_covariance<const N: usize>(
    stepper: &Strapdown,
    increments: &[ImuIncrement],
    height_reference: Option<&[f64]>,
    model: &ImuErrorModel,
    p0: &SMatrix<f64, N, N>,
    mut sink: impl FnMut(usize, &Strapdown, &SMatrix<f64, N, N>),
) -> core::result::Result<(), crate::BatchError> {
    crate::error::ensure_finite(p0.as_slice(), "p0").map_err(|error| crate::BatchError { index: 0, error })?;
    if let Some(h) = height_reference
        && h.len() != increments.len()
    {
        return Err(crate::BatchError {
            index: 0,
            error: Error::LengthMismatch { quantity: "height_reference", found: h.len(), expected: increments.len() },
        });
    }
    let psd = noise_psd(model);
    let times = (&model.accelerometer.markov_time, &model.gyro.markov_time);
    let mut ins = *stepper;
    let mut p = *p0;
    for (index, increment) in increments.iter().enumerate() {
        let at = |error| crate::BatchError { index, error };
        increment.validate().map_err(at)?;
        if let Some(&h) = height_reference.and_then(|h| h.get(index)) {
            ins.set_height_reference(h).map_err(at)?;
        }
        let t = increment.interval;
        let (_, state, _) = ins.parts();
        let (f, g) = error_model::<N>(ins.config(), &state, &(increment.delta_velocity / t), &(increment.delta_angle / t), times)
            .map_err(at)?;
        let qc = noise_covariance(&g, &psd);
        p = propagate_covariance(&f, &qc, &p, t);
        symmetrise(&mut p);
        ins.step(increment).map_err(at)?;
        sink(index, &ins, &p);
    }
    Ok(())
}

/// Largest asymmetry accepted in an initial covariance, relative to its largest entry:
/// `max |P₀ − P₀ᵀ| ≤ P0_SYMMETRY_TOLERANCE · max |P₀|` (a matrix written out by hand or read
/// from a file to 12–13 digits passes; one whose off-diagonal pairs were filled differently
/// does not).
pub const P0_SYMMETRY_TOLERANCE: f64 = 1e-12;

/// Tolerance of the positive-semidefinite test of an initial covariance, on its correlation
/// matrix: `C + P0_DEFINITENESS_TOLERANCE · I` must have a Cholesky factor. An eigenvalue of
/// `C` as negative as `−1e-10` (rounding in a matrix assembled by hand) passes; a correlation
/// matrix that is indefinite by more does not.
pub const P0_DEFINITENESS_TOLERANCE: f64 = 1e-10;

/// Checks an initial covariance: finite, entries within
/// [`MAX_COVARIANCE_ENTRY`](crate::limits::MAX_COVARIANCE_ENTRY), symmetric to
/// [`P0_SYMMETRY_TOLERANCE`], no negative variance, no correlation above 1, and positive
/// semidefinite (to [`P0_DEFINITENESS_TOLERANCE`] on its correlation matrix
/// `C_ij = P_ij / √(P_ii P_jj)`; a state of zero variance must have zero covariances).
///
/// # Errors
/// [`Error::NonFinite`], [`Error::OutOfRange`] or [`Error::Invalid`] naming `p0`.
///
/// ```
/// use nalgebra::SMatrix;
/// use rotaframe::linearise::inertial::check_initial_covariance;
/// let mut p0 = SMatrix::<f64, 15, 15>::identity();
/// assert!(check_initial_covariance(&p0).is_ok());
/// p0[(0, 1)] = 0.5;
/// assert!(check_initial_covariance(&p0).is_err()); // not symmetric
/// p0[(1, 0)] = 0.5;
/// assert!(check_initial_covariance(&p0).is_ok());
/// p0[(0, 1)] = 1.5;
/// p0[(1, 0)] = 1.5;
/// assert!(check_initial_covariance(&p0).is_err()); // a correlation of 1.5
/// ```
pub fn check_initial_covariance<const N: usize>(p0: &SMatrix<f64, N, N>) -> Result<(), Error> {
    crate::error::ensure_finite(p0.as_slice(), "p0")?;
    let largest = p0.amax();
    if largest > crate::limits::MAX_COVARIANCE_ENTRY {
        return Err(Error::OutOfRange { quantity: "p0", value: largest, min: 0.0, max: crate::limits::MAX_COVARIANCE_ENTRY });
    }
    if (p0 - p0.transpose()).amax() > P0_SYMMETRY_TOLERANCE * largest {
        return Err(Error::Invalid { quantity: "p0", reason: "must be symmetric" });
    }
    if p0.diagonal().iter().any(|&v| v < 0.0) {
        return Err(Error::Invalid { quantity: "p0", reason: "must not hold a negative variance (its diagonal)" });
    }
    let sd = p0.diagonal().map(crate::math::sqrt);
    let mut correlation = SMatrix::<f64, N, N>::identity();
    for i in 0..N {
        for j in 0..N {
            if i == j {
                continue;
            }
            let bound = sd[i] * sd[j];
            if p0[(i, j)].abs() > bound * (1.0 + P0_SYMMETRY_TOLERANCE) {
                return Err(Error::Invalid {
                    quantity: "p0",
                    reason: "must not hold a correlation above 1 (|P_ij| > √(P_ii P_jj))",
                });
            }
            correlation[(i, j)] = if bound > 0.0 { p0[(i, j)] / bound } else { 0.0 };
        }
    }
    for i in 0..N {
        correlation[(i, i)] += P0_DEFINITENESS_TOLERANCE;
    }
    if nalgebra::linalg::Cholesky::new(correlation).is_none() {
        return Err(Error::Invalid { quantity: "p0", reason: "must be positive semidefinite" });
    }
    Ok(())
}

/// The number of covariances kept of a run of `count` steps when every `every`-th is kept
/// and the last always is: `⌈count / every⌉` (0 for `every = 0`).
///
/// ```
/// use rotaframe::linearise::inertial::kept_count;
/// assert_eq!((kept_count(100, 10), kept_count(101, 10), kept_count(0, 10)), (10, 11, 0));
/// ```
#[must_use]
pub fn kept_count(count: usize, every: usize) -> usize {
    count.checked_div(every).map_or(0, |whole| whole + usize::from(!count.is_multiple_of(every)))
}

/// Whether step `index` (0-based) of `count` is kept: after every `every`-th step and after
/// the last.
fn is_kept(index: usize, count: usize, every: usize) -> bool {
    (index + 1).is_multiple_of(every) || index + 1 == count
}

/// [`predict_covariance`] with its checks and thinning, for callers that write into their
/// own storage: `p0` checked by [`check_initial_covariance`], then the covariance after every
/// `every`-th step and after the last written to `out_covariances` (`kept_count(n, every)`
/// matrices of `N²` entries each, symmetric, so row- and column-major alike) and the time
/// since the start of the run at each of them to `out_times` when given. Returns the stepper
/// at the end of the run.
///
/// With `check_first` the call is all or nothing: a first pass steps the run and builds the
/// model at every step (the only failures of the prediction), and only then is anything
/// written; it costs about an eighth more (the `covariance_step_15_checked` bench). Without
/// it, a failure at step `k` leaves the kept covariances before `k` written and the rest
/// untouched: for callers whose outputs are new and dropped on error.
///
/// # Errors
/// [`Error::Invalid`] naming `every` for 0; [`Error::LengthMismatch`] naming
/// `out_covariances` or `out_times`; as [`check_initial_covariance`]; as
/// [`predict_covariance`] with the failing step's index.
///
/// ```
/// use nalgebra::{SMatrix, Vector3};
/// use rotaframe::earth::Geodetic;
/// use rotaframe::linearise::inertial::{kept_count, predict_covariance_kept};
/// use rotaframe::nav::{ImuErrorModel, ImuIncrement, NavState, Strapdown, StrapdownConfig};
/// let ins = Strapdown::new(StrapdownConfig::default(), &NavState::new(Geodetic::from_degrees(45.0, 7.0, 200.0), Vector3::zeros(), Default::default())).unwrap();
/// let still = vec![ImuIncrement::new(Vector3::zeros(), Vector3::new(0.0, 0.0, -0.098), 0.01); 25];
/// let mut times = vec![0.0; kept_count(25, 10)];
/// let mut p = vec![0.0; kept_count(25, 10) * 15 * 15];
/// predict_covariance_kept::<15>(&ins, &still, None, &ImuErrorModel::default(), &SMatrix::identity(), 10, true, Some(&mut times), &mut p).unwrap();
/// assert!((times[2] - 0.25).abs() < 1e-12);
/// ```
#[allow(clippy::too_many_arguments)]
pub fn predict_covariance_kept<const N: usize>(
    stepper: &Strapdown,
    increments: &[ImuIncrement],
    height_reference: Option<&[f64]>,
    model: &ImuErrorModel,
    p0: &SMatrix<f64, N, N>,
    every: usize,
    check_first: bool,
    mut out_times: Option<&mut [f64]>,
    out_covariances: &mut [f64],
) -> core::result::Result<Strapdown, crate::BatchError> {
    let at = |index| move |error| crate::BatchError { index, error };
    if every == 0 {
        return Err(at(0)(Error::Invalid { quantity: "every", reason: "must be at least 1" }));
    }
    let count = increments.len();
    let kept = kept_count(count, every);
    if out_covariances.len() != kept * N * N {
        let mismatch =
            Error::LengthMismatch { quantity: "out_covariances", found: out_covariances.len(), expected: kept * N * N };
        return Err(at(0)(mismatch));
    }
    if let Some(times) = out_times.as_deref()
        && times.len() != kept
    {
        return Err(at(0)(Error::LengthMismatch { quantity: "out_times", found: times.len(), expected: kept }));
    }
    check_initial_covariance(p0).map_err(at(0))?;
    if let Some(h) = height_reference
        && h.len() != count
    {
        return Err(at(0)(Error::LengthMismatch { quantity: "height_reference", found: h.len(), expected: count }));
    }
    // First pass: the stepper and the model at every step, no covariance (the only failures
    // of the second pass), so that a failure writes nothing.
    if check_first {
        check_run::<N>(stepper, increments, height_reference, model)?;
    }
    let size = N * N;
    let mut row = 0;
    let mut end = *stepper;
    predict_covariance::<N>(stepper, increments, height_reference, model, p0, |index, s, p| {
        if is_kept(index, count, every) {
            out_covariances[row * size..(row + 1) * size].copy_from_slice(p.as_slice());
            if let Some(times) = out_times.as_deref_mut() {
                times[row] = s.elapsed();
            }
            row += 1;
        }
        if index + 1 == count {
            end = *s;
        }
    })?;
    Ok(end)
}

/// Steps a run and builds the model at every step without propagating a covariance: the
/// checks of [`predict_covariance`] alone.
fn check_run<const N: usize>(
    stepper: &Strapdown,
    increments: &[ImuIncrement],
    height_reference: Option<&[f64]>,
    model: &ImuErrorModel,
) -> core::result::Result<(), crate::BatchError> {
    let at = |index| move |error| crate::BatchError { index, error };
    let mut trial = *stepper;
    let times = (&model.accelerometer.markov_time, &model.gyro.markov_time);
    for (index, increment) in increments.iter().enumerate() {
        increment.validate().map_err(at(index))?;
        if let Some(&h) = height_reference.and_then(|h| h.get(index)) {
            trial.set_height_reference(h).map_err(at(index))?;
        }
        let t = increment.interval;
        let (_, state, _) = trial.parts();
        error_model::<N>(trial.config(), &state, &(increment.delta_velocity / t), &(increment.delta_angle / t), times)
            .map_err(at(index))?;
        trial.step(increment).map_err(at(index))?;
    }
    Ok(())
}
