//! An adaptive DOP853 integrator with dense output for a state of `N` numbers, allocation-free.
//!
//! Each step takes 12 stages for the 8th-order solution and the 5th/3rd-order error
//! estimate `err = ‖e₅‖² / √(‖e₅‖² + 0.01 ‖e₃‖²)` (in the scaled RMS norm with
//! `scale = atol + rtol · max(|y₀|, |y₁|)`), accepts the step when `err ≤ 1` and chooses the
//! next step as `h · clamp(0.9 err^(−1/8), 0.2, 10)` (Hairer, Nørsett and Wanner, *Solving
//! ODEs I*, 2nd ed., sections II.4 and II.10). The initial step follows the same book's
//! algorithm (II.4, "starting step size"). Dense output on an accepted step costs three more
//! stages and is the 7th-order polynomial of DOP853, evaluated in Horner form.

use super::dop853_tables::{A, B, C, D, E3, E5};
use crate::error::{Error, Result};
use crate::math;

/// Tolerances and limits of an integration.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerances {
    /// Relative tolerance per component.
    pub rtol: f64,
    /// Absolute tolerance per component (in the state's units).
    pub atol: f64,
    /// Largest step (s); `f64::INFINITY` for none.
    pub max_step: f64,
    /// Most steps (accepted and rejected) before the integration gives up with an error.
    pub max_steps: usize,
}

impl Default for Tolerances {
    /// `rtol` 1e-10, `atol` 1e-9, no step bound, a million steps.
    fn default() -> Self {
        Self { rtol: 1e-10, atol: 1e-9, max_step: f64::INFINITY, max_steps: 1_000_000 }
    }
}

impl Tolerances {
    /// Checks the settings: tolerances positive and finite (`rtol` at least 1e-15, below which
    /// f64 cannot follow), `max_step` positive, `max_steps` at least 1.
    ///
    /// # Errors
    /// [`Error::OutOfRange`] or [`Error::NotPositive`] naming the setting.
    pub fn validate(&self) -> Result<()> {
        if !(self.rtol >= 1e-15 && self.rtol <= 1.0) {
            return Err(Error::OutOfRange { quantity: "rtol", value: self.rtol, min: 1e-15, max: 1.0 });
        }
        if !(self.atol > 0.0 && self.atol.is_finite()) {
            return Err(Error::NotPositive { quantity: "atol", value: self.atol });
        }
        if self.max_step.is_nan() || self.max_step <= 0.0 {
            return Err(Error::NotPositive { quantity: "max_step", value: self.max_step });
        }
        if self.max_steps == 0 {
            return Err(Error::NotPositive { quantity: "max_steps", value: 0.0 });
        }
        Ok(())
    }
}

/// One accepted step and its dense output.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DenseStep<const N: usize> {
    /// Start of the step (s).
    pub t0: f64,
    /// End of the step (s).
    pub t1: f64,
    /// State at the start.
    pub y0: [f64; N],
    /// State at the end.
    pub y1: [f64; N],
    coefficients: [[f64; N]; 7],
}

impl<const N: usize> DenseStep<N> {
    /// The state at `t` in `[t0, t1]` from the 7th-order continuous extension (outside the
    /// step the polynomial extrapolates; callers keep `t` inside).
    #[must_use]
    pub fn at(&self, t: f64) -> [f64; N] {
        let x = (t - self.t0) / (self.t1 - self.t0);
        let mut y = [0.0; N];
        for (i, f) in self.coefficients.iter().rev().enumerate() {
            let factor = if i % 2 == 0 { x } else { 1.0 - x };
            for (yi, fi) in y.iter_mut().zip(f) {
                *yi = (*yi + fi) * factor;
            }
        }
        for (yi, y0) in y.iter_mut().zip(&self.y0) {
            *yi += y0;
        }
        y
    }

    /// The same step restricted to the first `M` numbers of the state (`M ≤ N`).
    #[must_use]
    pub fn head<const M: usize>(&self) -> DenseStep<M> {
        let take = |v: &[f64; N]| -> [f64; M] { core::array::from_fn(|i| v[i]) };
        DenseStep {
            t0: self.t0,
            t1: self.t1,
            y0: take(&self.y0),
            y1: take(&self.y1),
            coefficients: self.coefficients.map(|c| take(&c)),
        }
    }

    /// A step whose dense output is the straight line from `y0` to `y1` (for tests of the
    /// code that reads steps).
    #[must_use]
    pub fn linear(t0: f64, t1: f64, y0: [f64; N], y1: [f64; N]) -> Self {
        let mut coefficients = [[0.0; N]; 7];
        for i in 0..N {
            coefficients[0][i] = y1[i] - y0[i];
        }
        Self { t0, t1, y0, y1, coefficients }
    }
}

/// What the caller of [`integrate`] says after each accepted step.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Control {
    /// Go on.
    Continue,
    /// Stop here (an event was found in this step).
    Stop,
}

/// How an integration ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Summary<const N: usize> {
    /// Time reached (s).
    pub t: f64,
    /// State reached.
    pub y: [f64; N],
    /// Accepted steps.
    pub accepted: usize,
    /// Rejected steps.
    pub rejected: usize,
    /// Right-hand-side evaluations.
    pub evaluations: usize,
}

/// Scaled RMS norm.
fn norm<const N: usize>(v: &[f64; N], scale: &[f64; N]) -> f64 {
    let sum: f64 = v.iter().zip(scale).map(|(x, s)| (x / s) * (x / s)).sum();
    math::sqrt(sum / N as f64)
}

/// `y + h Σ a_j k_j` over the first `s` stages.
#[inline(always)]
fn combine<const N: usize>(y: &[f64; N], h: f64, a: &[f64; 16], k: &[[f64; N]; 16], s: usize) -> [f64; N] {
    let mut out = *y;
    for (j, kj) in k.iter().enumerate().take(s) {
        let w = a[j];
        if w != 0.0 {
            for i in 0..N {
                out[i] += h * w * kj[i];
            }
        }
    }
    out
}

/// Integrates `y' = f(t, y)` from `(t0, y0)` to `t_end` (> `t0`), handing every accepted step
/// to `on_step`, which may stop the integration early.
///
/// # Errors
/// As [`Tolerances::validate`]; [`Error::NotPositive`] naming `t_span` if `t_end ≤ t0`;
/// [`Error::NonFinite`] naming `t_span`; [`Error::Invalid`] naming `t_span` or `max_step`
/// when it is below the resolution of the times; the first error of `f` or `on_step`;
/// [`Error::Invalid`] naming `max_steps` when the step limit is reached, or `rtol` when the
/// step size falls below the resolution of `t` (a singularity or a force that is not smooth).
pub fn integrate<const N: usize>(
    mut f: impl FnMut(f64, &[f64; N]) -> Result<[f64; N]>,
    t0: f64,
    y0: [f64; N],
    t_end: f64,
    tolerances: &Tolerances,
    mut on_step: impl FnMut(&DenseStep<N>) -> Result<Control>,
) -> Result<Summary<N>> {
    tolerances.validate()?;
    if !(t0.is_finite() && t_end.is_finite()) {
        return Err(Error::NonFinite { quantity: "t_span" });
    }
    if t_end <= t0 {
        return Err(Error::NotPositive { quantity: "t_span", value: t_end - t0 });
    }
    // The smallest step the times can resolve (the loop's own floor): a span or a step limit
    // below it can never be integrated, and is named as such rather than as a tolerance.
    let resolution = 16.0 * f64::EPSILON * t0.abs().max(t_end.abs()).max(1.0);
    if t_end - t0 <= resolution {
        return Err(Error::Invalid {
            quantity: "t_span",
            reason: "is shorter than the resolution of its times (about 3.6e-15 of their magnitude)",
        });
    }
    if tolerances.max_step <= resolution {
        return Err(Error::Invalid {
            quantity: "max_step",
            reason: "is below the resolution of the times of t_span (about 3.6e-15 of their magnitude)",
        });
    }
    let (rtol, atol) = (tolerances.rtol, tolerances.atol);
    let scale_of =
        |a: &[f64; N], b: &[f64; N]| -> [f64; N] { core::array::from_fn(|i| atol + rtol * a[i].abs().max(b[i].abs())) };
    let mut t = t0;
    let mut y = y0;
    let mut k = [[0.0; N]; 16];
    k[0] = f(t, &y)?;
    let mut evaluations = 1;
    // Starting step (Hairer, Nørsett and Wanner, II.4).
    let span = t_end - t0;
    let mut h = {
        let sc = scale_of(&y, &y);
        let (d0, d1) = (norm(&y, &sc), norm(&k[0], &sc));
        let h0 = if d0 < 1e-5 || d1 < 1e-5 { 1e-6 } else { 0.01 * d0 / d1 };
        let h0 = h0.min(span).min(tolerances.max_step);
        let y1: [f64; N] = core::array::from_fn(|i| y[i] + h0 * k[0][i]);
        let f1 = f(t + h0, &y1)?;
        evaluations += 1;
        let diff: [f64; N] = core::array::from_fn(|i| f1[i] - k[0][i]);
        let d2 = norm(&diff, &sc) / h0;
        let h1 = if d1.max(d2) <= 1e-15 { (h0 * 1e-3).max(1e-6) } else { math::exp(math::ln(0.01 / d1.max(d2)) / 8.0) };
        (100.0 * h0).min(h1).min(span).min(tolerances.max_step)
    };
    let (mut accepted, mut rejected) = (0usize, 0usize);
    loop {
        if accepted + rejected >= tolerances.max_steps {
            return Err(Error::Invalid {
                quantity: "max_steps",
                reason: "the integration reached its step limit before the end of the time span (raise the limit, loosen the tolerances or check the force)",
            });
        }
        let remaining = t_end - t;
        let last = h >= remaining;
        if last {
            h = remaining;
        }
        if h <= 16.0 * f64::EPSILON * t.abs().max(1.0) {
            return Err(Error::Invalid {
                quantity: "rtol",
                reason: "the step size fell below the resolution of the time (a singular or discontinuous force, or tolerances too tight)",
            });
        }
        for s in 1..12 {
            let ys = combine(&y, h, &A[s], &k, s);
            k[s] = f(t + C[s] * h, &ys)?;
        }
        evaluations += 11;
        let y_new = combine(
            &y,
            h,
            &{
                let mut b = [0.0; 16];
                b[..12].copy_from_slice(&B);
                b
            },
            &k,
            12,
        );
        k[12] = f(t + h, &y_new)?;
        evaluations += 1;
        let sc = scale_of(&y, &y_new);
        let mut e5 = [0.0; N];
        let mut e3 = [0.0; N];
        for j in 0..13 {
            for i in 0..N {
                e5[i] += E5[j] * k[j][i];
                e3[i] += E3[j] * k[j][i];
            }
        }
        let (n5, n3) = (norm(&e5, &sc), norm(&e3, &sc));
        let (n5, n3) = (n5 * n5, n3 * n3);
        let err = if n5 == 0.0 && n3 == 0.0 { 0.0 } else { h * n5 / math::sqrt(n5 + 0.01 * n3) };
        if !err.is_finite() {
            return Err(Error::NonFinite { quantity: "state" });
        }
        let factor = if err == 0.0 { 10.0 } else { (0.9 * math::exp(-math::ln(err) / 8.0)).clamp(0.2, 10.0) };
        if err > 1.0 {
            rejected += 1;
            h *= factor.min(1.0);
            continue;
        }
        // Accepted: the three extra stages and the dense-output coefficients.
        for s in 13..16 {
            let ys = combine(&y, h, &A[s], &k, s);
            k[s] = f(t + C[s] * h, &ys)?;
        }
        evaluations += 3;
        let mut coefficients = [[0.0; N]; 7];
        for i in 0..N {
            let dy = y_new[i] - y[i];
            coefficients[0][i] = dy;
            coefficients[1][i] = h * k[0][i] - dy;
            coefficients[2][i] = 2.0 * dy - h * (k[12][i] + k[0][i]);
        }
        for (r, d) in D.iter().enumerate() {
            for i in 0..N {
                let mut sum = 0.0;
                for (j, kj) in k.iter().enumerate() {
                    sum += d[j] * kj[i];
                }
                coefficients[3 + r][i] = h * sum;
            }
        }
        let t_new = if last { t_end } else { t + h };
        let step = DenseStep { t0: t, t1: t_new, y0: y, y1: y_new, coefficients };
        accepted += 1;
        t = t_new;
        y = y_new;
        k[0] = k[12];
        let control = on_step(&step)?;
        if control == Control::Stop || last {
            return Ok(Summary { t, y, accepted, rejected, evaluations });
        }
        h = (h * factor).min(tolerances.max_step);
    }
}

/// The time in `[t0, t1]` where `g` changes sign, to within `tolerance` (s), by the Illinois
/// variant of regula falsi (M. Dowell and P. Jarratt, *BIT* 11 (1971) 168–174), given the
/// values `g0 = g(t0)` and `g1 = g(t1)` of opposite signs.
///
/// # Errors
/// The first error of `g`.
pub fn locate_root(mut g: impl FnMut(f64) -> Result<f64>, t0: f64, t1: f64, g0: f64, g1: f64, tolerance: f64) -> Result<f64> {
    let (mut a, mut b, mut ga, mut gb) = (t0, t1, g0, g1);
    let mut side = 0i8;
    for _ in 0..200 {
        if (b - a).abs() <= tolerance {
            break;
        }
        let t = (a * gb - b * ga) / (gb - ga);
        let t = if t.is_finite() && t > a.min(b) && t < a.max(b) { t } else { 0.5 * (a + b) };
        let gt = g(t)?;
        if gt == 0.0 {
            return Ok(t);
        }
        if (gt > 0.0) == (gb > 0.0) {
            b = t;
            gb = gt;
            if side == -1 {
                ga *= 0.5;
            }
            side = -1;
        } else {
            a = t;
            ga = gt;
            if side == 1 {
                gb *= 0.5;
            }
            side = 1;
        }
    }
    Ok(if ga.abs() < gb.abs() { a } else { b })
}
