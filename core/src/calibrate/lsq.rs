//! Linear least squares for the calibrations, without a heap: observations are added one row
//! at a time and folded into an upper-triangular factor by Givens rotations (the "sequential"
//! or "row-wise" QR of Å. Björck, *Numerical Methods for Least Squares Problems*, SIAM 1996,
//! §2.4.3), so that any number of positions needs `O(P²)` memory and the normal equations
//! (which square the condition number) are never formed.
//!
//! For a design `A` (rows `a_k`) and observations `y`, after every row `QᵀA = R` and
//! `Qᵀy = (z, ρ)`: the solution solves `R θ = z`, the residual sum of squares is `‖ρ‖²`, and
//! `(AᵀA)⁻¹ = R⁻¹R⁻ᵀ`. The columns of `A` have the norms of the columns of `R`; the singular
//! values of `A` with its columns scaled to unit norm (those of `R` scaled the same way)
//! give the condition number and, through the right singular vectors of the smallest ones,
//! the combinations of parameters the data cannot tell apart.

use nalgebra::{SMatrix, SVector};

use crate::math;

/// The smallest ratio of the smallest to the largest singular value of the column-scaled
/// design that counts as full rank: below it the data cannot separate some parameters to
/// better than about 1e-10 of their scale, which for a calibration means not at all. (Common
/// practice for a numerical rank test in double precision: well above the rounding level
/// 1e-16 times the number of observations, well below any design a real test produces.)
pub const RANK_TOLERANCE: f64 = 1.0e-10;

/// Components of a null-space vector at least this large (its norm is one) name a parameter
/// as part of an unobservable combination.
const NULL_COMPONENT: f64 = 0.05;

/// A least-squares problem with `P` parameters, folded row by row.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SequentialQr<const P: usize> {
    r: SMatrix<f64, P, P>,
    z: SVector<f64, P>,
    residual_sum_of_squares: f64,
    rows: usize,
}

/// What the design of a finished problem can and cannot determine.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Rank<const P: usize> {
    /// Condition number of the design with its columns scaled to unit norm (∞ if singular).
    pub condition_number: f64,
    /// Bit `j` set: parameter `j` belongs to a combination the data cannot determine.
    pub unobservable: u32,
}

impl<const P: usize> SequentialQr<P> {
    pub(crate) fn new() -> Self {
        Self { r: SMatrix::zeros(), z: SVector::zeros(), residual_sum_of_squares: 0.0, rows: 0 }
    }

    /// Adds the observation `a · θ = y`.
    pub(crate) fn add_row(&mut self, a: &SVector<f64, P>, y: f64) {
        let mut a = *a;
        let mut y = y;
        for k in 0..P {
            if a[k] == 0.0 {
                continue;
            }
            let (rkk, ak) = (self.r[(k, k)], a[k]);
            let norm = math::hypot(rkk, ak);
            let (c, s) = (rkk / norm, ak / norm);
            self.r[(k, k)] = norm;
            a[k] = 0.0;
            for j in k + 1..P {
                let (rkj, aj) = (self.r[(k, j)], a[j]);
                self.r[(k, j)] = c * rkj + s * aj;
                a[j] = c * aj - s * rkj;
            }
            let zk = self.z[k];
            self.z[k] = c * zk + s * y;
            y = c * y - s * zk;
        }
        self.residual_sum_of_squares += y * y;
        self.rows += 1;
    }

    /// The number of rows added.
    pub(crate) fn rows(&self) -> usize {
        self.rows
    }

    /// The residual sum of squares of the least-squares solution.
    pub(crate) fn residual_sum_of_squares(&self) -> f64 {
        self.residual_sum_of_squares
    }

    /// The condition and the unobservable parameters of the design, its columns scaled to
    /// unit norm.
    pub(crate) fn rank(&self) -> Rank<P> {
        self.rank_scaled(&core::array::from_fn(|j| self.r.column(j).norm()))
    }

    /// The same with each column divided by the given scale instead of its own norm (the
    /// typical size of that column's entries times √rows): a column far smaller than its
    /// scale (a sensor axis the references never load, say) then counts as zero, where its
    /// own norm would have blown its rounding noise up to a full column.
    pub(crate) fn rank_scaled(&self, scales: &[f64; P]) -> Rank<P> {
        let mut scaled = self.r;
        let mut unobservable = 0u32;
        for (j, &scale) in scales.iter().enumerate() {
            if scale > 0.0 && scaled.column(j).norm() > RANK_TOLERANCE * scale {
                scaled.column_mut(j).scale_mut(1.0 / scale);
            } else {
                // A zero column: its parameter is unobservable; the SVD below also finds any
                // other combination the remaining columns cannot separate.
                unobservable |= 1 << j;
                scaled.column_mut(j).fill(0.0);
            }
        }
        let (singular_values, v) = jacobi_svd(scaled);
        let largest = singular_values.iter().fold(0.0f64, |a, &b| a.max(b));
        let smallest = singular_values.iter().fold(f64::INFINITY, |a, &b| a.min(b));
        if unobservable == 0 && smallest > RANK_TOLERANCE * largest {
            return Rank { condition_number: largest / smallest, unobservable: 0 };
        }
        for (i, &sigma) in singular_values.iter().enumerate() {
            if sigma <= RANK_TOLERANCE * largest {
                for j in 0..P {
                    if v[(j, i)].abs() >= NULL_COMPONENT {
                        unobservable |= 1 << j;
                    }
                }
            }
        }
        Rank { condition_number: f64::INFINITY, unobservable }
    }

    /// The solution `θ` and `(AᵀA)⁻¹` (call only for a full-rank design: see [`rank`]).
    pub(crate) fn solve(&self) -> (SVector<f64, P>, SMatrix<f64, P, P>) {
        // R⁻¹ by back substitution, column by column.
        let mut inverse = SMatrix::<f64, P, P>::zeros();
        for j in 0..P {
            for i in (0..=j).rev() {
                let mut sum = if i == j { 1.0 } else { 0.0 };
                for k in i + 1..=j {
                    sum -= self.r[(i, k)] * inverse[(k, j)];
                }
                inverse[(i, j)] = sum / self.r[(i, i)];
            }
        }
        let theta = inverse * self.z;
        let mut covariance = inverse * inverse.transpose();
        for i in 0..P {
            for j in 0..i {
                let m = 0.5 * (covariance[(i, j)] + covariance[(j, i)]);
                covariance[(i, j)] = m;
                covariance[(j, i)] = m;
            }
        }
        (theta, covariance)
    }
}

/// The singular values of `a` and its right singular vectors (the columns of `V`), by
/// one-sided Jacobi rotations of the columns (J. C. Nash, "A one-sided transformation method
/// for the singular value decomposition", Comput. J. 18, 1975; J. Demmel and K. Veselić,
/// SIAM J. Matrix Anal. Appl. 13, 1992): the columns are rotated in pairs until they are
/// orthogonal; their norms are then the singular values.
fn jacobi_svd<const P: usize>(mut a: SMatrix<f64, P, P>) -> ([f64; P], SMatrix<f64, P, P>) {
    let mut v = SMatrix::<f64, P, P>::identity();
    for _sweep in 0..60 {
        let mut rotated = false;
        for p in 0..P {
            for q in p + 1..P {
                let alpha = a.column(p).norm_squared();
                let beta = a.column(q).norm_squared();
                let gamma = a.column(p).dot(&a.column(q));
                if gamma == 0.0 || gamma.abs() <= 1e-16 * math::sqrt(alpha * beta) {
                    continue;
                }
                rotated = true;
                let zeta = (beta - alpha) / (2.0 * gamma);
                let t = zeta.signum() / (zeta.abs() + math::sqrt(1.0 + zeta * zeta));
                let t = if zeta == 0.0 { 1.0 } else { t };
                let c = 1.0 / math::sqrt(1.0 + t * t);
                let s = c * t;
                for m in [&mut a, &mut v] {
                    for k in 0..P {
                        let (x, y) = (m[(k, p)], m[(k, q)]);
                        m[(k, p)] = c * x - s * y;
                        m[(k, q)] = s * x + c * y;
                    }
                }
            }
        }
        if !rotated {
            break;
        }
    }
    (core::array::from_fn(|j| a.column(j).norm()), v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn straight_line_fit_matches_the_closed_form() {
        // y = 2 + 3x at x = 0..5 with residuals ±0.5: the normal-equation solution of a
        // straight line (any statistics text; common practice).
        let mut qr = SequentialQr::<2>::new();
        let xs = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
        let noise = [0.5, -0.5, 0.5, -0.5, 0.5, -0.5];
        for (x, e) in xs.iter().zip(noise) {
            qr.add_row(&SVector::<f64, 2>::new(1.0, *x), 2.0 + 3.0 * x + e);
        }
        let (theta, cov) = qr.solve();
        let n = 6.0;
        let (sx, sxx) = (15.0, 55.0);
        let (sy, sxy) = (
            xs.iter().zip(noise).map(|(x, e)| 2.0 + 3.0 * x + e).sum::<f64>(),
            xs.iter().zip(noise).map(|(x, e)| x * (2.0 + 3.0 * x + e)).sum::<f64>(),
        );
        let det = n * sxx - sx * sx;
        // Rounding: a few operations on numbers of order 100 (1e-13 is 100 ulp of 100).
        assert!((theta[1] - (n * sxy - sx * sy) / det).abs() < 1e-13);
        assert!((theta[0] - (sxx * sy - sx * sxy) / det).abs() < 1e-13);
        assert!((cov[(0, 0)] - sxx / det).abs() < 1e-15);
        let rss: f64 = xs.iter().zip(noise).map(|(x, e)| (2.0 + 3.0 * x + e - theta[0] - theta[1] * x).powi(2)).sum();
        assert!((qr.residual_sum_of_squares() - rss).abs() < 1e-12);
        assert_eq!(qr.rank().unobservable, 0);
    }

    #[test]
    fn jacobi_svd_matches_nalgebra() {
        // nalgebra's SVD (Golub–Kahan) as the outside reference; rounding of a 4 × 4 problem.
        let a = SMatrix::<f64, 4, 4>::from_fn(|i, j| ((i * 7 + j * 3) % 5) as f64 - 1.5 + if i == j { 2.0 } else { 0.0 });
        let (values, v) = jacobi_svd(a);
        let mut ours = values;
        ours.sort_by(|x, y| y.total_cmp(x));
        let reference = a.svd(false, false).singular_values;
        for (x, y) in ours.iter().zip(reference.iter()) {
            assert!((x - y).abs() < 1e-13 * reference[0], "{x} vs {y}");
        }
        // V orthogonal.
        assert!((v.transpose() * v - SMatrix::<f64, 4, 4>::identity()).amax() < 1e-14);
    }

    #[test]
    fn proportional_columns_are_named_unobservable() {
        // Columns 0 and 2 proportional, column 1 independent: 0 and 2 are named, 1 is not.
        let mut qr = SequentialQr::<3>::new();
        for x in [1.0, 2.0, -1.0, 4.0] {
            qr.add_row(&SVector::<f64, 3>::new(1.0, x, 9.8), x);
        }
        let rank = qr.rank();
        assert_eq!(rank.unobservable, 0b101);
        assert!(rank.condition_number.is_infinite());
    }
}
