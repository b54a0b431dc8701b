//! IMU rate logs to increments: angular rate and specific force sampled at their own time
//! tags (with jitter and gaps) become the angle and velocity increments an integrating IMU
//! reports over each interval between two tags, which [`Strapdown`](super::Strapdown) takes
//! (its coning and sculling corrections then apply as they do to any increments).
//!
//! # The rule
//!
//! Over `[t_k, t_{k+1}]` each component is integrated as the cubic through the samples at
//! `t_{k−1}, t_k, t_{k+1}, t_{k+2}` (the quadratic through three at the ends of the log),
//! at the tags' own times, so jitter enters only through the interpolant's nodes:
//!
//! ```text
//! ∫ x dt ≈ T/2 · (p(t_k + T/2 (1 − 1/√3)) + p(t_k + T/2 (1 + 1/√3)))
//! ```
//!
//! two-point Gauss–Legendre quadrature of the Lagrange interpolant `p`, exact for a cubic. The
//! increment's error is `O(T⁵)` inside the log (a fourth-order rule: the accumulated error of a
//! run falls 16-fold when the rate doubles; measured in the tests) and `O(T⁴)` in the first and
//! last interval. (Interpolatory quadrature: P. J. Davis and P. Rabinowitz, *Methods of
//! Numerical Integration*, 2nd ed. (1984), ch. 2; common practice.)
//!
//! Tags must be finite and strictly increasing; a gap longer than `max_gap` (when given) is
//! refused with its start and end times.

use nalgebra::Vector3;

use super::imu::{ImuIncrement, check_interval};
use crate::error::Error;
use crate::limits;
use crate::math;

/// A gap between two time tags longer than the allowed `max_gap`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DataGap {
    /// Index of the tag before the gap.
    pub index: usize,
    /// The tag before the gap (s).
    pub start: f64,
    /// The tag after the gap (s).
    pub end: f64,
}

/// Why a rate log was refused: bad input, or a gap.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RateLogError {
    /// An input was refused, at sample `index`.
    Input {
        /// The sample (or interval) index.
        index: usize,
        /// What was wrong.
        error: Error,
    },
    /// A gap longer than `max_gap`.
    Gap(DataGap),
}

impl core::fmt::Display for RateLogError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            RateLogError::Input { index, error } => write!(f, "sample {index}: {error}"),
            RateLogError::Gap(g) => write!(
                f,
                "`t` has a gap from {} s to {} s (after sample {}), longer than `max_gap`",
                crate::error::num(&g.start),
                crate::error::num(&g.end),
                g.index
            ),
        }
    }
}

impl core::error::Error for RateLogError {}

/// The weights `w_j` of the samples `nodes` (indices into `t`) in the integral over
/// `[t[k], t[k + 1]]` of their Lagrange interpolant, `∫ p dt = Σ_j w_j x_j`, by two-point
/// Gauss–Legendre quadrature: `w_j = T/2 Σ_s ℓ_j(s)` over the two points `s`. The denominators
/// `Π_{m≠j} (t_j − t_m)` are shared by both points and by every component.
fn quadrature_weights(t: &[f64], nodes: &[usize], k: usize) -> [f64; 4] {
    let (a, b) = (t[k], t[k + 1]);
    let half = 0.5 * (b - a);
    let offset = half / math::sqrt(3.0);
    let points = [a + half - offset, a + half + offset];
    let mut weights = [0.0; 4];
    for (w, &j) in weights.iter_mut().zip(nodes) {
        let (mut numerator, mut denominator) = ([1.0, 1.0], 1.0);
        for &m in nodes {
            if m != j {
                denominator *= t[j] - t[m];
                numerator[0] *= points[0] - t[m];
                numerator[1] *= points[1] - t[m];
            }
        }
        *w = half * (numerator[0] + numerator[1]) / denominator;
    }
    weights
}

/// The weights of `t[k − 1] … t[k + 2]` over an interior interval `[t[k], t[k + 1]]`, in closed
/// form: with `a = t_k − t_{k−1}`, `h = t_{k+1} − t_k`, `c = t_{k+2} − t_{k+1}` the exact integral
/// of the cubic interpolant has
///
/// ```text
/// w_{k−1} = −h³ (h + 2c) / [12 a (a + h)(a + h + c)]
/// w_k     =  h (h² + 2ch + 4ah + 6ac) / [12 a (h + c)]
/// w_{k+1} =  h (h² + 2ah + 4ch + 6ac) / [12 c (h + a)]
/// w_{k+2} = −h³ (h + 2a) / [12 c (h + c)(a + h + c)]
/// ```
///
/// (`h/24 · (−1, 13, 13, −1)` on even tags), the same numbers as [`quadrature_weights`] to
/// rounding (two-point Gauss–Legendre is exact for the cubic), with one division.
///
/// The outer pair and the inner pair are mirror images (`a ↔ c`), computed side by side.
#[inline]
fn interior_weights(t: &[f64], k: usize) -> [f64; 4] {
    let (a, h, c) = (t[k] - t[k - 1], t[k + 1] - t[k], t[k + 2] - t[k + 1]);
    let ahc = a + h + c;
    let scale = 1.0 / (12.0 * a * c * (a + h) * (h + c) * ahc);
    // Lane 0 gives w_{k−1} and w_k, lane 1 their mirrors w_{k+2} and w_{k+1}.
    let (near, far) = ([a, c], [c, a]);
    let (mut outer, mut inner) = ([0.0; 2], [0.0; 2]);
    for i in 0..2 {
        let (v, u) = (near[i], far[i]);
        outer[i] = -(h * h * h) * (h + 2.0 * u) * u * (h + u) * scale;
        inner[i] = h * (h * h + 2.0 * u * h + 4.0 * v * h + 6.0 * a * c) * u * (v + h) * ahc * scale;
    }
    [outer[0], inner[0], inner[1], outer[1]]
}

/// `Σ_j w_j x_j` over the nodes.
fn weighted<V: Copy + Into<Vector3<f64>>>(x: &[V], nodes: &[usize], weights: &[f64; 4]) -> Vector3<f64> {
    let mut sum = Vector3::zeros();
    for (&j, w) in nodes.iter().zip(weights) {
        sum += x[j].into() * *w;
    }
    sum
}

/// Writes the increments over each interval between the time tags `t` (s) of angular-rate
/// samples `angular_rate` (rad/s) and specific-force samples `specific_force` (m/s², body
/// axes; any type that converts to a `Vector3`, such as a C binding's plain struct) into `out`
/// (`t.len() − 1` increments); see the [module documentation](self).
///
/// # Errors
/// [`RateLogError::Input`]: [`Error::LengthMismatch`] naming `angular_rate`,
/// `specific_force` or `out`; [`Error::Invalid`] naming `t` for fewer than two tags;
/// [`Error::NonFinite`] or [`Error::BeyondLimit`] naming the sample; as
/// [`check_interval`] for duplicated or backward tags (naming `interval`);
/// [`Error::NotPositive`] naming `max_gap`. [`RateLogError::Gap`] for a gap above `max_gap`.
/// Nothing is written on error.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::nav::increments_from_rates;
/// // A constant rate and force over jittered tags: increments are rate × interval.
/// let t = [0.0, 0.0101, 0.0199, 0.0302];
/// let w = [Vector3::new(0.1, 0.0, 0.0); 4];
/// let f = [Vector3::new(0.0, 0.0, -9.8); 4];
/// let mut out = [Default::default(); 3];
/// increments_from_rates(&t, &w, &f, None, &mut out).unwrap();
/// assert!((out[1].delta_angle.x - 0.1 * 0.0098).abs() < 1e-15);
/// ```
pub fn increments_from_rates<V: Copy + Into<Vector3<f64>>>(
    t: &[f64],
    angular_rate: &[V],
    specific_force: &[V],
    max_gap: Option<f64>,
    out: &mut [ImuIncrement],
) -> core::result::Result<(), RateLogError> {
    if out.len() != t.len().saturating_sub(1) {
        let expected = t.len().saturating_sub(1);
        return Err(RateLogError::Input {
            index: 0,
            error: Error::LengthMismatch { quantity: "out", found: out.len(), expected },
        });
    }
    check_rate_log(t, angular_rate, specific_force, max_gap)?;
    write_increments(t, angular_rate, specific_force, 0, out).map_err(|error| RateLogError::Input { index: 0, error })
}

/// The checks of [`increments_from_rates`] on a rate log, without writing anything (for
/// callers that write the increments in blocks with [`write_increments`]).
///
/// # Errors
/// As [`increments_from_rates`], but for `out`.
pub fn check_rate_log<V: Copy + Into<Vector3<f64>>>(
    t: &[f64],
    angular_rate: &[V],
    specific_force: &[V],
    max_gap: Option<f64>,
) -> core::result::Result<(), RateLogError> {
    check_log_shape(t, angular_rate, specific_force, max_gap)?;
    check_samples(t, angular_rate, specific_force, max_gap, 0..t.len())
}

/// The whole-log checks: at least two tags, one sample of each kind per tag, a positive
/// `max_gap`.
fn check_log_shape<V>(
    t: &[f64],
    angular_rate: &[V],
    specific_force: &[V],
    max_gap: Option<f64>,
) -> core::result::Result<(), RateLogError> {
    let at = |error| RateLogError::Input { index: 0, error };
    let n = t.len();
    if n < 2 {
        return Err(at(Error::Invalid { quantity: "t", reason: "needs at least two time tags" }));
    }
    for (quantity, found) in [("angular_rate", angular_rate.len()), ("specific_force", specific_force.len())] {
        if found != n {
            return Err(at(Error::LengthMismatch { quantity, found, expected: n }));
        }
    }
    if let Some(gap) = max_gap
        && (gap.is_nan() || gap <= 0.0)
    {
        return Err(at(Error::NotPositive { quantity: "max_gap", value: gap }));
    }
    Ok(())
}

/// The per-sample checks over the samples `range` of a log that passed [`check_log_shape`]:
/// each sample in its limits, and the interval after it (when there is one) a valid, allowed
/// step.
fn check_samples<V: Copy + Into<Vector3<f64>>>(
    t: &[f64],
    angular_rate: &[V],
    specific_force: &[V],
    max_gap: Option<f64>,
    range: core::ops::Range<usize>,
) -> core::result::Result<(), RateLogError> {
    let at = |index| move |error| RateLogError::Input { index, error };
    let n = t.len();
    for k in range {
        limits::check_vector(&angular_rate[k].into(), limits::MAX_ANGULAR_VELOCITY, "rad/s", "angular_rate").map_err(at(k))?;
        limits::check_vector(&specific_force[k].into(), limits::MAX_ACCELERATION, "m/s²", "specific_force").map_err(at(k))?;
        if k + 1 < n {
            check_interval(t[k], t[k + 1]).map_err(at(k))?;
            if let Some(gap) = max_gap
                && t[k + 1] - t[k] > gap
            {
                return Err(RateLogError::Gap(DataGap { index: k, start: t[k], end: t[k + 1] }));
            }
        }
    }
    Ok(())
}

/// Intervals per block of [`increments_in_blocks`]: a block's samples and increments stay in
/// the first-level cache.
pub const RATE_LOG_BLOCK: usize = 256;

/// The increments of a rate log in one pass, block by block: each block of up to
/// [`RATE_LOG_BLOCK`] intervals is checked as [`increments_from_rates`] checks it, then written
/// and handed to `sink(first_interval, increments)`, so that the samples are read from memory
/// once (the two-pass [`increments_from_rates`] reads them twice). For callers that own
/// fresh output and discard it on error, such as the Python binding.
///
/// # Errors
/// As [`check_rate_log`], at the first bad sample. Blocks before it were already handed to
/// `sink`, and the last of them may be built from samples after it (up to two tags past the
/// block's end), which were not checked: discard everything the sink received.
///
/// ```
/// use nalgebra::Vector3;
/// use rotaframe::nav::{increments_in_blocks, ImuIncrement};
/// let t: Vec<f64> = (0..1000).map(|k| 0.01 * k as f64).collect();
/// let w = vec![Vector3::new(0.0, 0.0, 0.2); 1000];
/// let f = vec![Vector3::new(0.0, 0.0, -9.8); 1000];
/// let mut out = vec![ImuIncrement::default(); 999];
/// increments_in_blocks(&t, &w, &f, Some(0.05), |first, block| {
///     out[first..first + block.len()].copy_from_slice(block)
/// })
/// .unwrap();
/// assert!((out[500].delta_angle.z - 0.002).abs() < 1e-15);
/// ```
pub fn increments_in_blocks<V: Copy + Into<Vector3<f64>>>(
    t: &[f64],
    angular_rate: &[V],
    specific_force: &[V],
    max_gap: Option<f64>,
    mut sink: impl FnMut(usize, &[ImuIncrement]),
) -> core::result::Result<(), RateLogError> {
    check_log_shape(t, angular_rate, specific_force, max_gap)?;
    let intervals = t.len() - 1;
    let mut block = [ImuIncrement::default(); RATE_LOG_BLOCK];
    let mut first = 0;
    while first < intervals {
        let len = RATE_LOG_BLOCK.min(intervals - first);
        // The block's own samples, and the log's last one with the last block.
        let end = if first + len == intervals { t.len() } else { first + len };
        check_samples(t, angular_rate, specific_force, max_gap, first..end)?;
        let part = &mut block[..len];
        write_increments(t, angular_rate, specific_force, first, part)
            .map_err(|error| RateLogError::Input { index: first, error })?;
        sink(first, part);
        first += len;
    }
    Ok(())
}

/// Writes the increments over intervals `first .. first + out.len()` of a rate log that
/// passed [`check_rate_log`] (on one that did not, the values are meaningless but finite
/// input stays finite).
///
/// # Errors
/// [`Error::LengthMismatch`] naming `out` if the intervals run past the log's end (or the
/// sample arrays are shorter than `t`).
pub fn write_increments<V: Copy + Into<Vector3<f64>>>(
    t: &[f64],
    angular_rate: &[V],
    specific_force: &[V],
    first: usize,
    out: &mut [ImuIncrement],
) -> crate::error::Result<()> {
    let n = t.len().min(angular_rate.len()).min(specific_force.len());
    let available = n.saturating_sub(1).saturating_sub(first);
    if n < 2 || out.len() > available {
        return Err(Error::LengthMismatch { quantity: "out", found: out.len(), expected: available });
    }
    for (offset, o) in out.iter_mut().enumerate() {
        let k = first + offset;
        *o = if k >= 1 && k + 2 < n {
            // Inside the log (all but the first and last interval): the closed form.
            let weights = interior_weights(&t[k - 1..k + 3], 1);
            let sum = |x: &[V]| -> Vector3<f64> {
                let x = &x[k - 1..k + 3];
                x[0].into() * weights[0] + x[1].into() * weights[1] + x[2].into() * weights[2] + x[3].into() * weights[3]
            };
            ImuIncrement { delta_angle: sum(angular_rate), delta_velocity: sum(specific_force), interval: t[k + 1] - t[k] }
        } else {
            let start = k.saturating_sub(1);
            let last = (k + 2).min(n - 1);
            let nodes: [usize; 4] = [start, start + 1, start + 2, start + 3];
            let used = &nodes[..=(last - start).min(3)];
            let weights = quadrature_weights(t, used, k);
            ImuIncrement {
                delta_angle: weighted(angular_rate, used, &weights),
                delta_velocity: weighted(specific_force, used, &weights),
                interval: t[k + 1] - t[k],
            }
        };
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_form_interior_weights_equal_the_gauss_legendre_weights() {
        // Uneven spacings from 1:1600 to 1600:1; the two forms are the same exact integral of
        // the same cubic, so they differ by rounding only. The general form forms differences of
        // tags up to (a + h + c)/h = 3200 intervals apart, losing up to 3.5 of the 16 digits:
        // 1e-12 of the weights' size allows for it.
        let spacings = [0.025, 0.1, 1.0, 3.0, 40.0];
        for &a in &spacings {
            for &h in &spacings {
                for &c in &spacings {
                    let t = [0.0, a, a + h, a + h + c];
                    let closed = interior_weights(&t, 1);
                    let general = quadrature_weights(&t, &[0, 1, 2, 3], 1);
                    let size: f64 = closed.iter().map(|w| w.abs()).sum();
                    for (x, y) in closed.iter().zip(general) {
                        assert!((x - y).abs() <= 1e-12 * size, "a {a} h {h} c {c}: {closed:?} vs {general:?}");
                    }
                    // The weights integrate a constant exactly, up to the rounding of the sum
                    // (the outer weights grow large beside a short neighbouring interval).
                    // (`t[2] − t[1]` is the interval as the tags hold it: `h` rounded.)
                    assert!((closed.iter().sum::<f64>() - (t[2] - t[1])).abs() <= 1e-14 * size);
                }
            }
        }
        // Even tags: h/24 · (−1, 13, 13, −1) (the cubic's integral over the middle interval).
        let even = interior_weights(&[0.0, 1.0, 2.0, 3.0], 1);
        for (x, y) in even.iter().zip([-1.0, 13.0, 13.0, -1.0]) {
            assert!((x - y / 24.0).abs() < 1e-15);
        }
    }
}
