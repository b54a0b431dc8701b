//! Overlapping Allan deviation of rate (or increment) records, its confidence bounds, and the
//! noise terms of the error model read from it.
//!
//! # Definition
//!
//! For rate samples `Ω_k` (k = 0 … N−1) at interval `τ₀`, the integrated output (angle, or
//! velocity for accelerometers) is `θ_0 = 0`, `θ_k = τ₀ Σ_{j<k} Ω_j`, and the overlapping Allan
//! variance at the cluster time `τ = m τ₀` is (IEEE Std 952-1997, annex C, eq. C.?; W. J.
//! Riley, *Handbook of Frequency Stability Analysis*, NIST SP 1065, 2008, §5.2.4, from
//! memory of the equation numbers)
//!
//! ```text
//! σ²(τ) = 1 / (2 τ² (N + 1 − 2m)) · Σ_{k=0}^{N−2m} (θ_{k+2m} − 2 θ_{k+m} + θ_k)²
//! ```
//!
//! The mean rate is removed before summing (a constant rate cancels in the second difference
//! and would only cost precision); the sum runs in four interleaved partial sums, so the
//! result does not depend on the CPU path. Memory is one array of `N + 1` values (the
//! caller's scratch) and time `O(N)` per cluster time.
//!
//! # Confidence bounds
//!
//! The estimate is treated as `σ² χ²_ν / ν` with the equivalent degrees of freedom `ν` of the
//! noise that dominates at that cluster time (D. A. Howe, D. W. Allan, J. A. Barnes,
//! "Properties of signal sources and measurement methods", 35th Annual Frequency Control
//! Symposium, 1981; the approximations as tabulated in NIST SP 1065, §5.3, from memory), with
//! `N_x = N + 1` integrated points:
//!
//! | dominant noise (ADEV slope) | ν |
//! |---|---|
//! | quantization (−1) | `(N_x + 1)(N_x − 2m) / (2 (N_x − m))` |
//! | white rate noise, angle/velocity random walk (−½) | `(3 (N_x − 1)/(2m) − 2 (N_x − 2)/N_x) · 4m² / (4m² + 5)` |
//! | bias instability, flicker rate noise (0) | `2 (N_x − 2) / (2.3 N_x − 4.9)` for m = 1, else `5 N_x² / (4m (N_x + 3m))` |
//! | rate random walk (+½) | `(N_x − 2)/m · ((N_x − 1)² − 3m (N_x − 1) + 4m²) / (N_x − 3)²` |
//!
//! The dominant noise is read from the local slope of the estimated deviation (between
//! neighbouring cluster times, log-log): below −¾ quantization, below −¼ white noise, below
//! ¼ bias instability, else rate random walk. The bounds at confidence `c` are
//! `σ √(ν / χ²_ν((1 + c)/2))` and `σ √(ν / χ²_ν((1 − c)/2))`.
//!
//! # Noise terms
//!
//! [`fit_noise_terms`] fits the sum of the three terms of the error model (IEEE Std
//! 952-1997, annex C, "C.1"–"C.3" with the rate PSDs `N²`, `B²/(2π f)` and `K²/(2π f)²`):
//!
//! ```text
//! σ²(τ) = N²/τ + (2 ln 2 / π) B² + K² τ / 3
//! ```
//!
//! by non-negative least squares on the relative errors `(model − σ²)/σ²` (each of the seven
//! subsets of terms solved, the best one with non-negative coefficients kept). So `N` is the
//! slope −½ line read at τ = 1 s, `B` the flat part divided by `√(2 ln 2/π) = 0.664`, and `K`
//! the slope +½ line read at τ = 3 s. The bias-instability term is the flat floor of flicker
//! noise; a first-order Gauss–Markov bias has instead the deviation
//! [`gauss_markov_deviation`] (IEEE Std 952-1997 annex C, exponentially correlated noise).

use nalgebra::{Matrix3, Vector3};

use super::stats::chi_square_quantile;
use crate::error::{Error, Result, ensure_finite, ensure_finite1};
use crate::math;

/// `√(2 ln 2 / π)`: the ratio of the flat Allan deviation of flicker rate noise to its
/// bias-instability coefficient `B` (IEEE Std 952-1997, annex C).
pub const BIAS_INSTABILITY_FACTOR: f64 = 0.664_282_474_617_750_8;

/// The noise that dominates an Allan deviation at one cluster time (by its slope).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[repr(u32)]
pub enum DominantNoise {
    /// White noise of the integrated output (slope −1).
    Quantization = 0,
    /// White rate noise: angle or velocity random walk (slope −½).
    WhiteNoise = 1,
    /// Flicker rate noise: bias instability (slope 0).
    BiasInstability = 2,
    /// Rate random walk (slope +½).
    RateRandomWalk = 3,
}

/// One point of an Allan-deviation curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AllanPoint {
    /// Cluster time τ (s).
    pub tau: f64,
    /// Cluster size m (samples).
    pub cluster_size: usize,
    /// Overlapping Allan deviation (units of the samples).
    pub deviation: f64,
    /// Lower confidence bound.
    pub lower: f64,
    /// Upper confidence bound.
    pub upper: f64,
    /// Equivalent degrees of freedom behind the bounds.
    pub degrees_of_freedom: f64,
    /// The noise taken to dominate (which sets the degrees of freedom).
    pub dominant: DominantNoise,
}

impl Default for AllanPoint {
    fn default() -> Self {
        Self {
            tau: 0.0,
            cluster_size: 0,
            deviation: 0.0,
            lower: 0.0,
            upper: 0.0,
            degrees_of_freedom: 0.0,
            dominant: DominantNoise::WhiteNoise,
        }
    }
}

/// The largest cluster size a record of `samples` rate samples supports: `(N − 1) / 2`
/// (at least two non-overlapping clusters).
#[must_use]
pub fn max_cluster_size(samples: usize) -> usize {
    samples.saturating_sub(1) / 2
}

/// Writes the default cluster sizes for a record of `samples` rate samples into `out`:
/// octaves `1, 2, 4, …` up to [`max_cluster_size`] (common practice for Allan plots; each
/// costs one pass over the record). Returns how many were written (at most `out.len()`;
/// 64 always suffice).
///
/// ```
/// use rotaframe::calibrate::allan::default_cluster_sizes;
/// let mut m = [0usize; 64];
/// let n = default_cluster_sizes(100, &mut m);
/// assert_eq!(&m[..n], &[1, 2, 4, 8, 16, 32]);
/// ```
pub fn default_cluster_sizes(samples: usize, out: &mut [usize]) -> usize {
    let largest = max_cluster_size(samples);
    let mut m = 1usize;
    let mut n = 0;
    while m <= largest && n < out.len() {
        out[n] = m;
        n += 1;
        m = m.saturating_mul(2);
    }
    n
}

/// The equivalent degrees of freedom of an overlapping Allan variance with cluster size `m`
/// from `samples` rate samples, for the dominant noise (see the [module documentation](self));
/// at least 1.
#[must_use]
pub fn equivalent_degrees_of_freedom(samples: usize, cluster_size: usize, noise: DominantNoise) -> f64 {
    let n = samples as f64 + 1.0;
    let m = cluster_size as f64;
    let edf = match noise {
        DominantNoise::Quantization => (n + 1.0) * (n - 2.0 * m) / (2.0 * (n - m)),
        DominantNoise::WhiteNoise => (3.0 * (n - 1.0) / (2.0 * m) - 2.0 * (n - 2.0) / n) * 4.0 * m * m / (4.0 * m * m + 5.0),
        DominantNoise::BiasInstability => {
            if cluster_size == 1 {
                2.0 * (n - 2.0) / (2.3 * n - 4.9)
            } else {
                5.0 * n * n / (4.0 * m * (n + 3.0 * m))
            }
        }
        DominantNoise::RateRandomWalk => {
            (n - 2.0) / m * ((n - 1.0) * (n - 1.0) - 3.0 * m * (n - 1.0) + 4.0 * m * m) / ((n - 3.0) * (n - 3.0))
        }
    };
    if edf.is_finite() { edf.max(1.0) } else { 1.0 }
}

/// The overlapping Allan deviation of `samples` (rates, at `interval` s) at each of
/// `cluster_sizes`, with confidence bounds at `confidence` (0.683 for one sigma), into `out`
/// (one point per cluster size). `scratch` holds the integrated record: at least
/// `samples.len() + 1` values. Nothing is allocated.
///
/// # Errors
/// [`Error::Invalid`] naming `samples` for fewer than 3 samples; [`Error::NonFinite`] or
/// [`Error::BeyondLimit`] naming `samples` (magnitudes up to
/// [`MAX_FREE_VECTOR`](crate::limits::MAX_FREE_VECTOR)); [`Error::NotPositive`] or [`Error::OutOfRange`] naming `interval` (as an IMU
/// interval); [`Error::OutOfRange`] naming `cluster_sizes` (each in 1 ..=
/// [`max_cluster_size`]) or `confidence` (in (0, 1)); [`Error::LengthMismatch`] naming
/// `scratch` or `out`.
///
/// ```
/// use rotaframe::calibrate::allan::{allan_deviation, AllanPoint};
/// // A rate alternating ±1: the deviation at τ = 1 s is √2 ... and 0 at τ = 2 s, 4 s.
/// let samples: Vec<f64> = (0..1000).map(|k| if k % 2 == 0 { 1.0 } else { -1.0 }).collect();
/// let mut scratch = vec![0.0; samples.len() + 1];
/// let mut out = [AllanPoint::default(); 3];
/// allan_deviation(&samples, 1.0, &[1, 2, 4], 0.683, &mut scratch, &mut out).unwrap();
/// assert!((out[0].deviation - 2f64.sqrt()).abs() < 1e-12 && out[1].deviation < 1e-12);
/// ```
pub fn allan_deviation(
    samples: &[f64],
    interval: f64,
    cluster_sizes: &[usize],
    confidence: f64,
    scratch: &mut [f64],
    out: &mut [AllanPoint],
) -> Result<()> {
    let n = samples.len();
    if n < 3 {
        return Err(Error::Invalid { quantity: "samples", reason: "an Allan deviation needs at least 3 samples" });
    }
    ensure_finite(samples, "samples")?;
    let largest = samples.iter().fold(0.0f64, |a, &b| a.max(b.abs()));
    if largest > crate::limits::MAX_FREE_VECTOR {
        return Err(Error::BeyondLimit {
            quantity: "samples",
            magnitude: largest,
            limit: crate::limits::MAX_FREE_VECTOR,
            unit: "sensor units",
        });
    }
    crate::nav::ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), interval).validate()?;
    // The two tail probabilities (1 ± c)/2 must both lie strictly inside (0, 1) in f64: a
    // confidence within rounding of 1 makes the upper one exactly 1.
    if !(confidence > 0.0 && confidence < 1.0 && 0.5 * (1.0 + confidence) < 1.0) {
        return Err(Error::OutOfRange { quantity: "confidence", value: confidence, min: 0.0, max: 1.0 });
    }
    if scratch.len() < n + 1 {
        return Err(Error::LengthMismatch { quantity: "scratch", found: scratch.len(), expected: n + 1 });
    }
    if out.len() != cluster_sizes.len() {
        return Err(Error::LengthMismatch { quantity: "out", found: out.len(), expected: cluster_sizes.len() });
    }
    let largest = max_cluster_size(n);
    if let Some(&bad) = cluster_sizes.iter().find(|&&m| m == 0 || m > largest) {
        return Err(Error::OutOfRange { quantity: "cluster_sizes", value: bad as f64, min: 1.0, max: largest as f64 });
    }
    // The integrated record of the rates less their mean (the mean in four partial sums).
    let mean = sum4(samples.iter().copied()) / n as f64;
    let theta = &mut scratch[..=n];
    theta[0] = 0.0;
    let mut acc = 0.0;
    for (t, &x) in theta[1..].iter_mut().zip(samples) {
        acc += x - mean;
        *t = acc * interval;
    }
    let theta = &scratch[..=n];
    for (point, &m) in out.iter_mut().zip(cluster_sizes) {
        let terms = n + 1 - 2 * m;
        let (a, b, c) = (&theta[..terms], &theta[m..m + terms], &theta[2 * m..2 * m + terms]);
        let sum = sum4(a.iter().zip(b).zip(c).map(|((&x0, &x1), &x2)| {
            let d = x2 - 2.0 * x1 + x0;
            d * d
        }));
        let tau = m as f64 * interval;
        *point = AllanPoint {
            tau,
            cluster_size: m,
            deviation: math::sqrt(sum / (2.0 * tau * tau * terms as f64)),
            ..AllanPoint::default()
        };
    }
    // Dominant noise from the local slope, then the bounds.
    let count = out.len();
    for i in 0..count {
        let (j, k) = (i.saturating_sub(1), (i + 1).min(count - 1));
        let slope = if j != k && out[j].deviation > 0.0 && out[k].deviation > 0.0 && out[k].tau != out[j].tau {
            math::ln(out[k].deviation / out[j].deviation) / math::ln(out[k].tau / out[j].tau)
        } else {
            -0.5
        };
        let dominant = if slope < -0.75 {
            DominantNoise::Quantization
        } else if slope < -0.25 {
            DominantNoise::WhiteNoise
        } else if slope < 0.25 {
            DominantNoise::BiasInstability
        } else {
            DominantNoise::RateRandomWalk
        };
        let edf = equivalent_degrees_of_freedom(n, out[i].cluster_size, dominant);
        let as_confidence = |e: Error| if e.quantity() == "p" { e.with_quantity("confidence") } else { e };
        let upper_quantile = chi_square_quantile(0.5 * (1.0 + confidence), edf).map_err(as_confidence)?;
        let lower_quantile = chi_square_quantile(0.5 * (1.0 - confidence), edf).map_err(as_confidence)?;
        let p = &mut out[i];
        p.dominant = dominant;
        p.degrees_of_freedom = edf;
        p.lower = p.deviation * math::sqrt(edf / upper_quantile);
        p.upper = p.deviation * math::sqrt(edf / lower_quantile);
    }
    Ok(())
}

/// A sum in four interleaved partial sums (vectorisable, the same on every CPU path).
#[inline(always)]
fn sum4(values: impl Iterator<Item = f64>) -> f64 {
    let mut lanes = [0.0f64; 4];
    for (i, x) in values.enumerate() {
        lanes[i & 3] += x;
    }
    (lanes[0] + lanes[1]) + (lanes[2] + lanes[3])
}

/// The noise terms of a rate sensor, in SI units of its output (gyro: rad/s; accelerometer:
/// m/s²), with the trade units beside.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct NoiseTerms {
    /// White rate noise density `N` (units/√Hz: rad/√s, the angle random walk; m/s/√s, the
    /// velocity random walk): the slope −½ line at τ = 1 s.
    pub white_noise: f64,
    /// Bias instability `B` (rad/s or m/s²): the flat part divided by 0.664.
    pub bias_instability: f64,
    /// Rate random walk `K` (rad/s/√s or m/s²/√s): the slope +½ line at τ = 3 s.
    pub rate_random_walk: f64,
}

impl NoiseTerms {
    /// The model's Allan deviation at `tau` (s): `√(N²/τ + 0.664² B² + K² τ/3)`.
    #[must_use]
    pub fn deviation(&self, tau: f64) -> f64 {
        let (n, b, k) = (self.white_noise, self.bias_instability * BIAS_INSTABILITY_FACTOR, self.rate_random_walk);
        math::sqrt(n * n / tau + b * b + k * k * tau / 3.0)
    }

    /// [`deviation`](Self::deviation) with `tau` checked and the result finite.
    ///
    /// # Errors
    /// [`Error::NonFinite`], [`Error::NotPositive`] or [`Error::OutOfRange`] naming `tau`
    /// (positive, at most [`MAX_TIME`](crate::limits::MAX_TIME)); [`Error::Invalid`] naming
    /// `noise_terms` when a term is negative or not finite, or the deviation overflows.
    ///
    /// ```
    /// use rotaframe::calibrate::allan::NoiseTerms;
    /// let t = NoiseTerms { white_noise: 1e-3, bias_instability: 0.0, rate_random_walk: 0.0 };
    /// assert_eq!(t.checked_deviation(4.0).unwrap(), 5e-4);
    /// assert!(t.checked_deviation(0.0).is_err());
    /// ```
    pub fn checked_deviation(&self, tau: f64) -> Result<f64> {
        ensure_finite1(tau, "tau")?;
        if tau <= 0.0 {
            return Err(Error::NotPositive { quantity: "tau", value: tau });
        }
        if tau > crate::limits::MAX_TIME {
            return Err(Error::OutOfRange { quantity: "tau", value: tau, min: 0.0, max: crate::limits::MAX_TIME });
        }
        let terms = [self.white_noise, self.bias_instability, self.rate_random_walk];
        if !terms.iter().all(|t| t.is_finite() && *t >= 0.0) {
            return Err(Error::Invalid { quantity: "noise_terms", reason: "must be finite and non-negative" });
        }
        let d = self.deviation(tau);
        if !d.is_finite() {
            return Err(Error::Invalid { quantity: "noise_terms", reason: "too large: the deviation overflows f64" });
        }
        Ok(d)
    }

    /// Gyro terms in trade units: angle random walk (deg/√h), bias instability (deg/h), rate
    /// random walk (deg/h/√h).
    ///
    /// ```
    /// use rotaframe::calibrate::allan::NoiseTerms;
    /// let t = NoiseTerms { white_noise: 2.908882086657216e-4, bias_instability: 0.0, rate_random_walk: 0.0 };
    /// assert!((t.gyro_trade_units().0 - 1.0).abs() < 1e-12); // 1 deg/√h
    /// ```
    #[must_use]
    pub fn gyro_trade_units(&self) -> (f64, f64, f64) {
        let degrees = 180.0 / core::f64::consts::PI;
        (
            self.white_noise * degrees * 60.0,
            self.bias_instability * degrees * 3600.0,
            self.rate_random_walk * degrees * 3600.0 * 60.0,
        )
    }

    /// Accelerometer terms in trade units: velocity random walk (m/s/√h), bias instability
    /// (µg, with the standard gravity 9.80665 m/s² of the 3rd CGPM, 1901), acceleration random
    /// walk (m/s/h/√h).
    #[must_use]
    pub fn accelerometer_trade_units(&self) -> (f64, f64, f64) {
        (self.white_noise * 60.0, self.bias_instability / 9.806_65 * 1e6, self.rate_random_walk * 3600.0 * 60.0)
    }
}

/// The cluster times [`fit_noise_terms`] accepts (s): an IMU sample interval to the longest
/// supported time. With the deviations' range below, no square the fit forms can overflow.
pub const FIT_TAU_RANGE: (f64, f64) = (crate::limits::MIN_INTERVAL, crate::limits::MAX_TIME);
/// The deviations [`fit_noise_terms`] accepts (sensor units): far beyond any sensor.
pub const FIT_DEVIATION_RANGE: (f64, f64) = (1.0e-30, 1.0e30);
/// The largest equivalent degrees of freedom [`fit_noise_terms`] accepts as a weight.
pub const FIT_MAX_DEGREES: f64 = 1.0e15;

/// Fits the white-noise, bias-instability and rate-random-walk terms to an Allan-deviation
/// curve (cluster times `taus`, s, and `deviations`); see the [module documentation](self).
/// Each point's relative residual is weighted by its equivalent degrees of freedom when they
/// are given (the variance of `σ̂²/σ²` is `2/ν`), else by `1/τ` (proportional to them for
/// white noise and rate random walk, whose `ν` fall as `N/m`). Terms the curve does not show
/// come out zero.
///
/// # Errors
/// [`Error::LengthMismatch`] naming `deviations` or `degrees_of_freedom`; [`Error::Invalid`]
/// naming `taus` for no points; [`Error::NonFinite`] or [`Error::NotPositive`] naming
/// `taus`, `deviations` or `degrees_of_freedom`; [`Error::OutOfRange`] naming them outside
/// [`FIT_TAU_RANGE`], [`FIT_DEVIATION_RANGE`] or (0, [`FIT_MAX_DEGREES`]].
///
/// ```
/// use rotaframe::calibrate::allan::{fit_noise_terms, NoiseTerms};
/// let truth = NoiseTerms { white_noise: 1e-4, bias_instability: 2e-6, rate_random_walk: 1e-8 };
/// let taus: Vec<f64> = (0..20).map(|k| 0.01 * 2f64.powi(k)).collect();
/// let adev: Vec<f64> = taus.iter().map(|&t| truth.deviation(t)).collect();
/// let fit = fit_noise_terms(&taus, &adev, None).unwrap();
/// assert!((fit.bias_instability / truth.bias_instability - 1.0).abs() < 1e-9);
/// ```
pub fn fit_noise_terms(taus: &[f64], deviations: &[f64], degrees_of_freedom: Option<&[f64]>) -> Result<NoiseTerms> {
    if deviations.len() != taus.len() {
        return Err(Error::LengthMismatch { quantity: "deviations", found: deviations.len(), expected: taus.len() });
    }
    if let Some(dof) = degrees_of_freedom {
        if dof.len() != taus.len() {
            return Err(Error::LengthMismatch { quantity: "degrees_of_freedom", found: dof.len(), expected: taus.len() });
        }
        ensure_finite(dof, "degrees_of_freedom")?;
        if let Some(&bad) = dof.iter().find(|&&v| v <= 0.0) {
            return Err(Error::NotPositive { quantity: "degrees_of_freedom", value: bad });
        }
        if let Some(&bad) = dof.iter().find(|&&v| v > FIT_MAX_DEGREES) {
            return Err(Error::OutOfRange { quantity: "degrees_of_freedom", value: bad, min: 0.0, max: FIT_MAX_DEGREES });
        }
    }
    if taus.is_empty() {
        return Err(Error::Invalid { quantity: "taus", reason: "at least one point is needed" });
    }
    for (values, name, min, max) in [
        (taus, "taus", FIT_TAU_RANGE.0, FIT_TAU_RANGE.1),
        (deviations, "deviations", FIT_DEVIATION_RANGE.0, FIT_DEVIATION_RANGE.1),
    ] {
        ensure_finite(values, name)?;
        if let Some(&bad) = values.iter().find(|&&v| v <= 0.0) {
            return Err(Error::NotPositive { quantity: name, value: bad });
        }
        if let Some(&bad) = values.iter().find(|&&v| !(min..=max).contains(&v)) {
            return Err(Error::OutOfRange { quantity: name, value: bad, min, max });
        }
    }
    let flicker = BIAS_INSTABILITY_FACTOR * BIAS_INSTABILITY_FACTOR;
    // Weighted normal equations of the relative residuals: row (1/τ, c, τ/3)/σ², target 1.
    let mut gram = Matrix3::<f64>::zeros();
    let mut rhs = Vector3::<f64>::zeros();
    let shortest = taus.iter().fold(f64::INFINITY, |a, &b| a.min(b));
    for (i, (&tau, &dev)) in taus.iter().zip(deviations).enumerate() {
        let var = dev * dev;
        let weight = degrees_of_freedom.map_or(shortest / tau, |dof| dof[i]);
        let row = Vector3::new(1.0 / tau, flicker, tau / 3.0) / var;
        gram += weight * row * row.transpose();
        rhs += weight * row;
    }
    // Column scaling keeps the 3 × 3 systems well conditioned.
    let scale = Vector3::from_fn(|i, _| {
        let d = gram[(i, i)];
        if d > 0.0 { 1.0 / math::sqrt(d) } else { 1.0 }
    });
    let scaled_gram = Matrix3::from_fn(|i, j| gram[(i, j)] * scale[i] * scale[j]);
    let scaled_rhs = rhs.component_mul(&scale);
    let mut best: Option<(f64, Vector3<f64>)> = None;
    for subset in 1u8..8 {
        let mut g = Matrix3::<f64>::identity();
        let mut h = Vector3::<f64>::zeros();
        for i in 0..3 {
            if subset & (1 << i) != 0 {
                h[i] = scaled_rhs[i];
                for j in 0..3 {
                    if subset & (1 << j) != 0 {
                        g[(i, j)] = scaled_gram[(i, j)];
                    }
                }
            }
        }
        let Some(solution) = g.cholesky().map(|c| c.solve(&h)) else { continue };
        if solution.iter().any(|&c| c < 0.0 || !c.is_finite()) {
            continue;
        }
        // Σ w (a·c − 1)² = cᵀ G c − 2 cᵀ h + Σ w; compare without the constant.
        let cost = solution.dot(&(scaled_gram * solution)) - 2.0 * solution.dot(&scaled_rhs);
        if best.is_none_or(|(b, _)| cost < b) {
            best = Some((cost, solution));
        }
    }
    let c = best.map_or(Vector3::zeros(), |(_, s)| s.component_mul(&scale));
    Ok(NoiseTerms {
        white_noise: math::sqrt(c[0].max(0.0)),
        bias_instability: math::sqrt(c[1].max(0.0)),
        rate_random_walk: math::sqrt(c[2].max(0.0)),
    })
}

/// The Allan deviation of a first-order Gauss–Markov rate with steady-state standard
/// deviation `sigma` and correlation time `correlation_time` (s) at cluster time `tau` (s)
/// (IEEE Std 952-1997, annex C, exponentially correlated noise, with `q_c = σ √(2/T_c)`):
///
/// ```text
/// σ²(τ) = (q_c T_c)²/τ · [1 − (T_c/2τ)(3 − 4 e^{−τ/T_c} + e^{−2τ/T_c})]
/// ```
///
/// It rises as `q_c √(τ/3)` for `τ ≪ T_c`, peaks near `τ ≈ 1.9 T_c` and falls as
/// `q_c T_c/√τ`.
///
/// ```
/// use rotaframe::calibrate::allan::gauss_markov_deviation;
/// // Short clusters see a random walk of density q_c = σ √(2/T_c).
/// let (sigma, tc) = (1e-5_f64, 100.0_f64);
/// let q = sigma * (2.0 / tc).sqrt();
/// assert!((gauss_markov_deviation(sigma, tc, 0.01).unwrap() / (q * (0.01f64 / 3.0).sqrt()) - 1.0).abs() < 1e-3);
/// ```
///
/// # Errors
/// [`Error::NonFinite`], [`Error::NotPositive`] or [`Error::OutOfRange`] naming `sigma` (at
/// most [`MAX_SENSOR_ERROR`](crate::nav::MAX_SENSOR_ERROR)), `correlation_time` or `tau`
/// (from [`MIN_INTERVAL`](crate::limits::MIN_INTERVAL) to [`MAX_TIME`](crate::limits::MAX_TIME)).
pub fn gauss_markov_deviation(sigma: f64, correlation_time: f64, tau: f64) -> Result<f64> {
    crate::error::ensure_finite1(sigma, "sigma")?;
    if !(0.0..=crate::nav::MAX_SENSOR_ERROR).contains(&sigma) {
        return Err(Error::OutOfRange { quantity: "sigma", value: sigma, min: 0.0, max: crate::nav::MAX_SENSOR_ERROR });
    }
    for (value, name) in [(correlation_time, "correlation_time"), (tau, "tau")] {
        crate::error::ensure_finite1(value, name)?;
        if value <= 0.0 {
            return Err(Error::NotPositive { quantity: name, value });
        }
        if !(crate::limits::MIN_INTERVAL..=crate::limits::MAX_TIME).contains(&value) {
            return Err(Error::OutOfRange {
                quantity: name,
                value,
                min: crate::limits::MIN_INTERVAL,
                max: crate::limits::MAX_TIME,
            });
        }
    }
    let tc = correlation_time;
    let x = tau / tc;
    let qc = sigma * math::sqrt(2.0 / tc);
    // For small x the bracket loses digits to cancellation; its series is
    // x²/3 − x³/4 + 7x⁴/60 − … (the next term, of order x⁵/30, is below 1e-16 of it).
    let bracket = if x < 1e-3 {
        x * x / 3.0 - x * x * x / 4.0 + 7.0 * x * x * x * x / 60.0
    } else {
        1.0 - (3.0 - 4.0 * math::exp(-x) + math::exp(-2.0 * x)) / (2.0 * x)
    };
    Ok(math::sqrt((qc * tc) * (qc * tc) / tau * bracket.max(0.0)))
}
