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
    let at = |index| move |error| RateLogError::Input { index, error };
    let n = t.len();
    if n < 2 {
        return Err(at(0)(Error::Invalid { quantity: "t", reason: "needs at least two time tags" }));
    }
    for (quantity, found) in [("angular_rate", angular_rate.len()), ("specific_force", specific_force.len())] {
        if found != n {
            return Err(at(0)(Error::LengthMismatch { quantity, found, expected: n }));
        }
    }
    if let Some(gap) = max_gap
        && (gap.is_nan() || gap <= 0.0)
    {
        return Err(at(0)(Error::NotPositive { quantity: "max_gap", value: gap }));
    }
    for k in 0..n {
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
        let start = k.saturating_sub(1);
        let last = (k + 2).min(n - 1);
        let nodes: [usize; 4] = [start, start + 1, start + 2, start + 3];
        let used = &nodes[..=(last - start).min(3)];
        let weights = quadrature_weights(t, used, k);
        *o = ImuIncrement {
            delta_angle: weighted(angular_rate, used, &weights),
            delta_velocity: weighted(specific_force, used, &weights),
            interval: t[k + 1] - t[k],
        };
    }
    Ok(())
}
