//! The discrete form `Φ = exp(F T)`, `Q_d = ∫₀ᵀ exp(F s) G Q Gᵀ exp(F s)ᵀ ds` (exact series
//! with scaling and squaring, or second order), and the padded-row kernels that the
//! covariance series shares (formulas: the [module documentation](super)).

use nalgebra::{SMatrix, SVector, Vector3};

use crate::error::{Error, Result};
use crate::nav::ImuIncrement;

/// Calls `body::<N, W>` on rows padded to four lanes for the 15- and 21-state sizes, through
/// their AVX2 twins where the CPU has them, and `body::<N, N>` for other sizes.
macro_rules! padded_call {
    ($twin15:ident, $twin21:ident, $body:ident, ($($arg:expr),*)) => {
        match N {
            15 => crate::fast_call!($twin15, $body::<15, 16>, ($($arg),*)),
            21 => crate::fast_call!($twin21, $body::<21, 24>, ($($arg),*)),
            _ => $body::<N, N>($($arg),*),
        }
    };
}

/// `Φ = exp(F T)` and `Q_d = ∫₀ᵀ exp(F s) G diag(psd) Gᵀ exp(F s)ᵀ ds` over `interval` (s); see
/// the [module documentation](super).
///
/// # Errors
/// [`Error::NotPositive`] or [`Error::OutOfRange`] naming `interval` (positive, at most
/// [`MAX_INTERVAL`](crate::limits::MAX_INTERVAL)); [`Error::NonFinite`] naming `f`, `g` or
/// `psd`; [`Error::Invalid`] naming `psd` for a negative density, and naming `f` or `psd` when `Φ` or `Q_d` overflows f64.
///
/// ```
/// use nalgebra::{SMatrix, SVector};
/// use rotaframe::linearise::inertial::discretise;
/// // A random walk x' = w of density q: Φ = 1, Q_d = q T.
/// let f = SMatrix::<f64, 1, 1>::zeros();
/// let g = SMatrix::<f64, 1, 1>::identity();
/// let (phi, qd) = discretise(&f, &g, &SVector::<f64, 1>::new(2.0), 0.5).unwrap();
/// assert_eq!((phi[(0, 0)], qd[(0, 0)]), (1.0, 1.0));
/// ```
#[inline]
pub fn discretise<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    interval: f64,
) -> Result<(SMatrix<f64, N, N>, SMatrix<f64, N, N>)> {
    check_discretisation(f, g, psd, interval)?;
    let (mut phi, mut q) = (SMatrix::<f64, N, N>::zeros(), SMatrix::<f64, N, N>::zeros());
    padded_call!(
        exact_15_fast,
        exact_21_fast,
        exact_from_noise_input,
        (f.as_slice(), g.as_slice(), psd.as_slice(), interval, phi.as_mut_slice(), q.as_mut_slice())
    );
    check_discrete_form(&phi, &q)?;
    Ok((phi, q))
}

/// [`discretise`] truncated at second order: `Φ = I + F T + F² T²/2`,
/// `Q_d = Q_c T + (F Q_c + Q_c Fᵀ) T²/2` (see the [module documentation](super) for the error
/// bound): two sparse products instead of the full series, for filters that rebuild `Φ` and
/// `Q_d` at every IMU step.
///
/// # Errors
/// As [`discretise`].
///
/// ```
/// use nalgebra::{SMatrix, SVector};
/// use rotaframe::linearise::inertial::{discretise, discretise_second_order};
/// // x'' = w (a double integrator): Φ and Q_d are exactly second order in T for Φ.
/// let f = SMatrix::<f64, 2, 2>::new(0.0, 1.0, 0.0, 0.0);
/// let g = SMatrix::<f64, 2, 1>::new(0.0, 1.0);
/// let psd = SVector::<f64, 1>::new(1.0);
/// let (phi, qd) = discretise_second_order(&f, &g, &psd, 0.1).unwrap();
/// let (phi_exact, qd_exact) = discretise(&f, &g, &psd, 0.1).unwrap();
/// assert_eq!(phi, phi_exact);
/// assert_eq!(qd[(1, 1)], qd_exact[(1, 1)]); // q T; the position entries miss q T³/3
/// assert!((qd[(0, 0)] - qd_exact[(0, 0)]).abs() <= 0.1f64.powi(3) / 3.0 + 1e-18);
/// ```
#[inline]
pub fn discretise_second_order<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    interval: f64,
) -> Result<(SMatrix<f64, N, N>, SMatrix<f64, N, N>)> {
    check_discretisation(f, g, psd, interval)?;
    let (mut phi, mut q) = (SMatrix::<f64, N, N>::zeros(), SMatrix::<f64, N, N>::zeros());
    padded_call!(
        second_order_15_fast,
        second_order_21_fast,
        second_order_body,
        (f.as_slice(), g.as_slice(), psd.as_slice(), interval, phi.as_mut_slice(), q.as_mut_slice())
    );
    check_discrete_form(&phi, &q)?;
    Ok((phi, q))
}

crate::fast_twin!(fn second_order_15_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = second_order_body::<15, 16>);
crate::fast_twin!(fn second_order_21_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = second_order_body::<21, 24>);

/// The second-order truncation, from `F` (column-major) and the noise input `G` (column-major)
/// with its densities, into `phi` (column-major) and `q` (symmetric), column by column:
///
/// * column `j` of `Φ` is `e_j + T F[:, j] + (T²/2) Σ_k F[k, j] F[:, k]`, one vectorised update
///   per non-zero entry of column `j` (`F`'s columns are its contiguous storage);
/// * `Q_d = B + Bᵀ` with `B = Σ_m q_m g_m w_mᵀ`, `w_m = F g_m T²/2 + g_m T/2` for the columns
///   `g_m` of `G` (at most three non-zero entries each): `B = Q_c Fᵀ T²/2 + Q_c T/2`, so that
///   `Q_c` and its products are never formed.
#[inline(always)]
fn second_order_body<const N: usize, const W: usize>(
    f: &[f64],
    g: &[f64],
    psd: &[f64],
    t: f64,
    phi_out: &mut [f64],
    q_out: &mut [f64],
) {
    let columns = Rows::<N, W>::from_rows_of(f);
    let half_t2 = 0.5 * t * t;
    for (j, out) in phi_out.chunks_exact_mut(N).enumerate() {
        let column = &columns.0[j];
        let sum = columns.combine(&column[..N], half_t2);
        for ((o, &s), &c) in out.iter_mut().zip(&sum).zip(column) {
            *o = s + c * t;
        }
        out[j] += 1.0;
    }
    let mut b = Rows::<N, W>::zeros();
    for (g_column, &density) in g.chunks_exact(N).zip(psd) {
        if density == 0.0 {
            continue;
        }
        let mut w = columns.combine(g_column, half_t2);
        for (x, &gi) in w.iter_mut().zip(g_column) {
            *x += gi * (0.5 * t);
        }
        for (row, &gj) in b.0.iter_mut().zip(g_column) {
            if gj != 0.0 {
                let weight = density * gj;
                for (r, &x) in row.iter_mut().zip(&w) {
                    *r += weight * x;
                }
            }
        }
    }
    let mut q = Rows::<N, W>::zeros();
    symmetric_sum(&b, &mut q);
    q.write_symmetric(q_out);
}

/// The covariance propagated over `interval` by the second-order discrete form: the Taylor
/// series of the covariance equation `Ṗ = F P + P Fᵀ + Q_c` to `T²`,
///
/// ```text
/// M = F P + P Fᵀ + Q_c,   P(T) = P + M T + (F M + M Fᵀ) T²/2
/// ```
///
/// These are the terms of `Φ P Φᵀ + Q_d` with the second-order `Φ` and `Q_d` of
/// [`discretise_second_order`] up to `T²` (Groves 2013, §14.2.4; from memory), without their
/// products of third and fourth order in `T` (below `(‖F T‖∞)³` of `P`'s entries: a few parts
/// in 10⁶ at 100 Hz). `F` is sparse (about 53 non-zero entries of 225 for the 15-state model),
/// so the two products `F P` and `F M` are one vectorised row update per non-zero entry, on the
/// stack; the result is made exactly symmetric.
///
/// # Errors
/// As [`discretise`]; [`Error::Invalid`] naming `p` if the result overflows.
///
/// ```
/// use nalgebra::{SMatrix, SVector};
/// use rotaframe::linearise::inertial::{discretise_second_order, propagate_covariance_second_order};
/// let f = SMatrix::<f64, 2, 2>::new(0.0, 1.0, 0.0, -0.5);
/// let g = SMatrix::<f64, 2, 1>::new(0.0, 1.0);
/// let psd = SVector::<f64, 1>::new(0.2);
/// let p = SMatrix::<f64, 2, 2>::new(1.0, 0.1, 0.1, 2.0);
/// let t = 0.01;
/// let qc = g * psd[0] * g.transpose();
/// let m = f * p + p * f.transpose() + qc;
/// let taylor = p + m * t + (f * m + m * f.transpose()) * (t * t / 2.0);
/// let step = propagate_covariance_second_order(&f, &g, &psd, &p, t).unwrap();
/// assert!((step - taylor).amax() < 1e-15);
/// // Φ P Φᵀ + Q_d of the second-order Φ and Q_d differs only in third order.
/// let (phi, qd) = discretise_second_order(&f, &g, &psd, t).unwrap();
/// assert!((step - (phi * p * phi.transpose() + qd)).amax() < 1e-6);
/// ```
#[inline]
pub fn propagate_covariance_second_order<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    p: &SMatrix<f64, N, N>,
    interval: f64,
) -> Result<SMatrix<f64, N, N>> {
    check_discretisation(f, g, psd, interval)?;
    let mut out = SMatrix::<f64, N, N>::zeros();
    padded_call!(
        covariance_step_15_fast,
        covariance_step_21_fast,
        covariance_step_body,
        (f.as_slice(), g.as_slice(), psd.as_slice(), interval, p.as_slice(), out.as_mut_slice())
    );
    crate::error::ensure_finite(out.as_slice(), "p")
        .map_err(|_| Error::Invalid { quantity: "p", reason: "the propagated covariance overflows f64" })?;
    Ok(out)
}

/// [`propagate_covariance_second_order`] in place, without the input checks: for callers whose
/// `F` and `G` come from [`error_model`](super::error_model) on checked inputs, with densities of
/// a checked model and a checked interval (the aided filter's predict, at the IMU rate). On
/// overflow `p` is left as it was.
///
/// # Errors
/// [`Error::Invalid`] naming `p` if the result overflows.
#[inline]
pub(crate) fn propagate_covariance_second_order_in_place<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    p: &mut SMatrix<f64, N, N>,
    interval: f64,
) -> Result<()> {
    let before = *p;
    padded_call!(
        covariance_step_15_fast,
        covariance_step_21_fast,
        covariance_step_body,
        (f.as_slice(), g.as_slice(), psd.as_slice(), interval, before.as_slice(), p.as_mut_slice())
    );
    if crate::error::ensure_finite(p.as_slice(), "p").is_err() {
        *p = before;
        return Err(Error::Invalid { quantity: "p", reason: "the propagated covariance overflows f64" });
    }
    Ok(())
}

crate::fast_twin!(fn covariance_step_15_fast(f: &[f64], g: &[f64], psd: &[f64], t: f64, p: &[f64], out: &mut [f64]) -> () = covariance_step_body::<15, 16>);
crate::fast_twin!(fn covariance_step_21_fast(f: &[f64], g: &[f64], psd: &[f64], t: f64, p: &[f64], out: &mut [f64]) -> () = covariance_step_body::<21, 24>);

/// Dense rows padded to `W` lanes.
type PaddedRows<const N: usize, const W: usize> = [[f64; W]; N];

/// `out = A X` by rows, one vectorised row update per non-zero entry of `A` (the zero test is
/// a branch that follows the same pattern on every call of a filter, so the predictor learns
/// it; cheaper than building a list of the non-zero entries each time).
#[inline(always)]
fn sparse_product<const N: usize, const W: usize>(a: &PaddedRows<N, W>, x: &PaddedRows<N, W>, out: &mut PaddedRows<N, W>) {
    for (row_out, a_row) in out.iter_mut().zip(a) {
        let mut row = [0.0f64; W];
        for (&value, x_row) in a_row[..N].iter().zip(x) {
            if value != 0.0 {
                for (r, v) in row.iter_mut().zip(x_row) {
                    *r += value * v;
                }
            }
        }
        *row_out = row;
    }
}

/// The second-order covariance step (see [`propagate_covariance_second_order`]); all matrices
/// column-major, `P` symmetric (its columns are its rows).
#[inline(always)]
fn covariance_step_body<const N: usize, const W: usize>(f: &[f64], g: &[f64], psd: &[f64], t: f64, p: &[f64], out: &mut [f64]) {
    let mut f_rows: PaddedRows<N, W> = [[0.0; W]; N];
    for (j, column) in f.chunks_exact(N).enumerate() {
        for (i, &x) in column.iter().enumerate() {
            f_rows[i][j] = x;
        }
    }
    let mut p_rows: PaddedRows<N, W> = [[0.0; W]; N];
    for (row, column) in p_rows.iter_mut().zip(p.chunks_exact(N)) {
        row[..N].copy_from_slice(column);
    }
    // M = F P + (F P)ᵀ + Q_c.
    let mut product: PaddedRows<N, W> = [[0.0; W]; N];
    sparse_product(&f_rows, &p_rows, &mut product);
    let mut m: PaddedRows<N, W> = [[0.0; W]; N];
    noise_entries::<N>(g, psd, |i, j, v| m[i][j] += v);
    for i in 0..N {
        for j in 0..N {
            m[i][j] += product[i][j] + product[j][i];
        }
    }
    // F M, and P + M T + (F M + M Fᵀ) T²/2 on the lower triangle, mirrored.
    sparse_product(&f_rows, &m, &mut product);
    let half_t2 = 0.5 * t * t;
    for j in 0..N {
        for i in j..N {
            let value = p_rows[i][j] + m[i][j] * t + (product[i][j] + product[j][i]) * half_t2;
            out[j * N + i] = value;
            out[i * N + j] = value;
        }
    }
}

/// The checks of [`discretise`]: the interval, finite `F`, `G`, densities, none negative.
fn check_discretisation<const N: usize, const M: usize>(
    f: &SMatrix<f64, N, N>,
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
    interval: f64,
) -> Result<()> {
    ImuIncrement::new(Vector3::zeros(), Vector3::zeros(), interval).validate()?;
    crate::error::ensure_finite(f.as_slice(), "f")?;
    crate::error::ensure_finite(g.as_slice(), "g")?;
    crate::error::ensure_finite(psd.as_slice(), "psd")?;
    if psd.iter().any(|&q| q < 0.0) {
        return Err(Error::Invalid { quantity: "psd", reason: "spectral densities must be non-negative" });
    }
    Ok(())
}

/// Refuses a discrete form that overflowed: `Φ` (an `F·T` too large for f64, naming `f`) or
/// `Q_d` (noise densities too large, naming `psd`).
fn check_discrete_form<const N: usize>(phi: &SMatrix<f64, N, N>, q: &SMatrix<f64, N, N>) -> Result<()> {
    if crate::error::ensure_finite(phi.as_slice(), "f").is_err() {
        return Err(Error::Invalid { quantity: "f", reason: "F·T is too large: Φ = exp(F T) overflows f64" });
    }
    if crate::error::ensure_finite(q.as_slice(), "psd").is_err() {
        return Err(Error::Invalid { quantity: "psd", reason: "the noise densities are too large: Q_d overflows f64" });
    }
    Ok(())
}

/// As [`discretise`] with the continuous noise covariance `Q_c = G Q Gᵀ` given (not checked;
/// used through its lower triangle, as a symmetric matrix).
///
/// The 15- and 21-state sizes run on rows padded to a multiple of four lanes, and with an
/// AVX2 twin where the CPU has it (the same bits; see [`dispatch`](crate::dispatch)).
#[must_use]
pub fn discretise_covariance<const N: usize>(
    f: &SMatrix<f64, N, N>,
    qc: &SMatrix<f64, N, N>,
    interval: f64,
) -> (SMatrix<f64, N, N>, SMatrix<f64, N, N>) {
    let (mut phi, mut q) = (SMatrix::<f64, N, N>::zeros(), SMatrix::<f64, N, N>::zeros());
    padded_call!(
        exact_qc_15_fast,
        exact_qc_21_fast,
        exact_from_covariance,
        (f.as_slice(), qc.as_slice(), interval, phi.as_mut_slice(), q.as_mut_slice())
    );
    (phi, q)
}

crate::fast_twin!(fn exact_15_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_noise_input::<15, 16>);
crate::fast_twin!(fn exact_21_fast(f: &[f64], g: &[f64], psd: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_noise_input::<21, 24>);
crate::fast_twin!(fn exact_qc_15_fast(f: &[f64], qc: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_covariance::<15, 16>);
crate::fast_twin!(fn exact_qc_21_fast(f: &[f64], qc: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) -> () = exact_from_covariance::<21, 24>);

#[inline(always)]
fn exact_from_noise_input<const N: usize, const W: usize>(
    f: &[f64],
    g: &[f64],
    psd: &[f64],
    interval: f64,
    phi: &mut [f64],
    q: &mut [f64],
) {
    discretise_body::<N, W>(f, &noise_rows::<N, W>(g, psd), interval, phi, q);
}

#[inline(always)]
fn exact_from_covariance<const N: usize, const W: usize>(f: &[f64], qc: &[f64], interval: f64, phi: &mut [f64], q: &mut [f64]) {
    // The lower triangle, mirrored: the series keeps every term exactly symmetric.
    let mut rows = Rows::<N, W>::zeros();
    for (j, column) in qc.chunks_exact(N).enumerate() {
        for (i, &x) in column.iter().enumerate().skip(j) {
            rows.0[i][j] = x;
            rows.0[j][i] = x;
        }
    }
    discretise_body::<N, W>(f, &rows, interval, phi, q);
}

/// The discretisation on rows padded to `W ≥ N` entries (the padding stays zero), from `F`
/// (column-major, `N²` values) and `Q_c` into `phi` (column-major) and `q` (symmetric): slices,
/// so that no layer copies the matrices.
#[inline(always)]
fn discretise_body<const N: usize, const W: usize>(
    f: &[f64],
    qc: &Rows<N, W>,
    interval: f64,
    phi_out: &mut [f64],
    q_out: &mut [f64],
) {
    let pattern = RowPattern::<N>::of(f);
    // Halve until ‖F t‖∞ ≤ 1/4 (at most 60 halvings: F is finite).
    let norm = pattern.norm_inf();
    let mut halvings = 0;
    let mut t = interval;
    while norm * t > 0.25 && halvings < 60 {
        t *= 0.5;
        halvings += 1;
    }
    let mut phi = Rows::<N, W>::zeros();
    let mut q = Rows::<N, W>::zeros();
    taylor::<N, W>(&pattern, qc, t, &mut phi, &mut q);
    phi.write_transposed(phi_out);
    q.write_symmetric(q_out);
    if halvings > 0 {
        let mut p = SMatrix::<f64, N, N>::from_column_slice(phi_out);
        let mut qm = SMatrix::<f64, N, N>::from_column_slice(q_out);
        for _ in 0..halvings {
            qm = p * qm * p.transpose() + qm;
            p *= p;
        }
        symmetrise(&mut qm);
        phi_out.copy_from_slice(p.as_slice());
        q_out.copy_from_slice(qm.as_slice());
    }
}

/// A square matrix stored by rows: `W ≥ N` rows of `W` entries, of which the leading `N × N`
/// block is used and the rest stays zero, so that row updates run in whole vector lanes and
/// transposes in 4 × 4 blocks.
#[derive(Clone, Copy)]
#[repr(C, align(32))]
pub(super) struct Rows<const N: usize, const W: usize>(pub(super) [[f64; W]; W]);

impl<const N: usize, const W: usize> Rows<N, W> {
    #[inline(always)]
    pub(super) fn zeros() -> Self {
        Self([[0.0; W]; W])
    }
    #[inline(always)]
    pub(super) fn identity() -> Self {
        let mut m = Self::zeros();
        m.add_identity();
        m
    }
    #[inline(always)]
    pub(super) fn add_identity(&mut self) {
        for i in 0..N {
            self.0[i][i] += 1.0;
        }
    }
    /// From `N²` values in column-major order, scaled.
    #[inline(always)]
    pub(super) fn from_columns(m: &[f64], scale: f64) -> Self {
        let mut out = Self::zeros();
        for (j, column) in m.chunks_exact(N).enumerate() {
            for (i, &x) in column.iter().enumerate() {
                out.0[i][j] = x * scale;
            }
        }
        out
    }
    /// The rows of this matrix are the `N` contiguous groups of `N` values of `m` (the
    /// columns of a column-major matrix), padded.
    #[inline(always)]
    pub(super) fn from_rows_of(m: &[f64]) -> Self {
        let mut out = Self::zeros();
        for (row, group) in out.0.iter_mut().zip(m.chunks_exact(N)) {
            row[..N].copy_from_slice(group);
        }
        out
    }
    /// With `self` holding a matrix `A` by columns (row `k` is column `k` of `A`): the column
    /// `A x scale` for the column `x`, one vectorised update per non-zero entry of `x`.
    #[inline(always)]
    fn combine(&self, x: &[f64], scale: f64) -> [f64; W] {
        let mut out = [0.0f64; W];
        for (&xk, column) in x.iter().zip(&self.0) {
            if xk != 0.0 {
                let weight = xk * scale;
                for (o, &c) in out.iter_mut().zip(column) {
                    *o += weight * c;
                }
            }
        }
        out
    }
    #[inline(always)]
    pub(super) fn matrix(&self) -> SMatrix<f64, N, N> {
        SMatrix::from_fn(|i, j| self.0[i][j])
    }
    #[inline(always)]
    fn scale(&mut self, factor: f64) {
        for row in &mut self.0 {
            for x in row.iter_mut() {
                *x *= factor;
            }
        }
    }
    #[inline(always)]
    fn add_assign(&mut self, other: &Self) {
        for (a, b) in self.0.iter_mut().zip(&other.0) {
            for (x, y) in a.iter_mut().zip(b) {
                *x += y;
            }
        }
    }
    /// The largest magnitude of an entry.
    #[inline(always)]
    fn largest(&self) -> f64 {
        let mut m = [0.0f64; W];
        for row in &self.0 {
            for (m, &x) in m.iter_mut().zip(row) {
                let a = x.abs();
                *m = if a > *m { a } else { *m };
            }
        }
        m.iter().fold(0.0, |a, &b| if b > a { b } else { a })
    }
    /// Writes the `N × N` block in column-major order (its transpose by rows, in blocks).
    #[inline(always)]
    fn write_transposed(&self, out: &mut [f64]) {
        let mut transposed = Self::zeros();
        transpose_blocks(self, &mut transposed, false);
        for (column, row) in out.chunks_exact_mut(N).zip(&transposed.0) {
            column.copy_from_slice(&row[..N]);
        }
    }
    /// Writes the `N × N` block of a symmetric matrix (its rows are its columns).
    #[inline(always)]
    fn write_symmetric(&self, out: &mut [f64]) {
        for (column, row) in out.chunks_exact_mut(N).zip(&self.0) {
            column.copy_from_slice(&row[..N]);
        }
    }
}

/// `out = a + aᵀ` (exactly symmetric: entries `(i, j)` and `(j, i)` are the same sum).
#[inline(always)]
pub(super) fn symmetric_sum<const N: usize, const W: usize>(a: &Rows<N, W>, out: &mut Rows<N, W>) {
    transpose_blocks(a, out, true);
}

/// `out = aᵀ`, or `a + aᵀ` with `add`, by 4 × 4 blocks when `W` is a multiple of four (each
/// block read as four row vectors and rearranged in registers), else entry by entry.
#[inline(always)]
fn transpose_blocks<const N: usize, const W: usize>(a: &Rows<N, W>, out: &mut Rows<N, W>, add: bool) {
    if !W.is_multiple_of(4) {
        for i in 0..W {
            for j in 0..W {
                out.0[i][j] = if add { a.0[i][j] + a.0[j][i] } else { a.0[j][i] };
            }
        }
        return;
    }
    for bi in (0..W).step_by(4) {
        for bj in (0..=bi).step_by(4) {
            // Blocks (bi, bj) and (bj, bi) of the result from blocks (bj, bi) and (bi, bj).
            let (lower, upper) = (block4(a, bi, bj), block4(a, bj, bi));
            let (mut new_lower, mut new_upper) = (transpose4(&upper), transpose4(&lower));
            if add {
                for r in 0..4 {
                    for c in 0..4 {
                        new_lower[r][c] += lower[r][c];
                    }
                }
                new_upper = transpose4(&new_lower);
            }
            for r in 0..4 {
                out.0[bi + r][bj..bj + 4].copy_from_slice(&new_lower[r]);
                out.0[bj + r][bi..bi + 4].copy_from_slice(&new_upper[r]);
            }
        }
    }
}

/// The 4 × 4 block of `a` at (`row`, `column`), as four row vectors. (Functions, not
/// closures, so that they are inlined into each CPU path; see `dispatch`.)
#[inline(always)]
fn block4<const N: usize, const W: usize>(a: &Rows<N, W>, row: usize, column: usize) -> [[f64; 4]; 4] {
    core::array::from_fn(|r| {
        let lanes = &a.0[row + r][column..column + 4];
        [lanes[0], lanes[1], lanes[2], lanes[3]]
    })
}

#[inline(always)]
fn transpose4(m: &[[f64; 4]; 4]) -> [[f64; 4]; 4] {
    [
        [m[0][0], m[1][0], m[2][0], m[3][0]],
        [m[0][1], m[1][1], m[2][1], m[3][1]],
        [m[0][2], m[1][2], m[2][2], m[3][2]],
        [m[0][3], m[1][3], m[2][3], m[3][3]],
    ]
}

/// The Taylor series of `Φ` and `Q_d` over a short interval.
///
/// Every product of the series has `F` on the left, and `F` is sparse (an INS model has about
/// 70 non-zero entries of 225): row `i` of `F X` is the sum over the non-zero `F[i, k]` of
/// `F[i, k]` times row `k` of `X`, one vectorised row update per non-zero entry.
#[inline(always)]
fn taylor<const N: usize, const W: usize>(
    pattern: &RowPattern<N>,
    qc: &Rows<N, W>,
    t: f64,
    phi: &mut Rows<N, W>,
    q: &mut Rows<N, W>,
) {
    // Φ = Σ (F T)ᵏ/k!: term ← F term T/k, in two buffers used in turn.
    *phi = Rows::<N, W>::identity();
    let mut terms = [Rows::<N, W>::identity(), Rows::<N, W>::zeros()];
    // The stopping test compares with the sum after the first term (Φ's entries are within a
    // factor of two of it for ‖F T‖ ≤ 1/4), so each term costs one scan of itself.
    let mut threshold = 0.0;
    for k in 1..30 {
        let [even, odd] = &mut terms;
        let (last, term) = if k % 2 == 1 { (&*even, odd) } else { (&*odd, even) };
        left_product(pattern, last, t / f64::from(k), term);
        phi.add_assign(term);
        if k == 1 {
            threshold = 1e-16 * phi.largest();
        }
        if term.largest() <= threshold {
            break;
        }
    }
    // Q_{k+1} = F Q_k + Q_k Fᵀ = S + Sᵀ with S = F Q_k (Q_k symmetric).
    let mut q_term = *qc;
    q_term.scale(t);
    *q = q_term;
    let product = &mut terms[0];
    let mut threshold = 1e-16 * q_term.largest();
    for k in 2..30 {
        left_product(pattern, &q_term, t / f64::from(k), product);
        symmetric_sum(product, &mut q_term);
        q.add_assign(&q_term);
        if k == 2 {
            threshold = threshold.max(1e-16 * q.largest());
        }
        if q_term.largest() <= threshold {
            break;
        }
    }
}

/// The columns and values of each row's non-zero entries.
pub(super) struct RowPattern<const N: usize> {
    count: [usize; N],
    columns: [[u8; N]; N],
    values: [[f64; N]; N],
}

impl<const N: usize> RowPattern<N> {
    /// The pattern of a matrix given column-major (`N²` values; `N` below 256).
    #[inline(always)]
    pub(super) fn of(a: &[f64]) -> Self {
        let mut pattern = Self { count: [0; N], columns: [[0; N]; N], values: [[0.0; N]; N] };
        for (k, column) in a.chunks_exact(N).enumerate() {
            for (i, &x) in column.iter().enumerate() {
                let c = pattern.count[i];
                pattern.columns[i][c] = k as u8;
                pattern.values[i][c] = x;
                pattern.count[i] += usize::from(x != 0.0);
            }
        }
        pattern
    }
    /// The largest row sum of magnitudes (the ∞-norm).
    #[inline(always)]
    fn norm_inf(&self) -> f64 {
        let mut norm = 0.0f64;
        for (values, &count) in self.values.iter().zip(&self.count) {
            let sum = values[..count].iter().fold(0.0, |s, x| s + x.abs());
            norm = if sum > norm { sum } else { norm };
        }
        norm
    }
}

/// `out = scale A X` for `A` with the given pattern (its non-zero entries); rows `N..W` of
/// `out` are left as they are (zero).
#[inline(always)]
pub(super) fn left_product<const N: usize, const W: usize>(
    pattern: &RowPattern<N>,
    x: &Rows<N, W>,
    scale: f64,
    out: &mut Rows<N, W>,
) {
    for i in 0..N {
        // The row is summed in a local array (held in registers), then stored once.
        let mut row = [0.0f64; W];
        let count = pattern.count[i];
        for (&k, &value) in pattern.columns[i][..count].iter().zip(&pattern.values[i][..count]) {
            let factor = value * scale;
            for (r, v) in row.iter_mut().zip(&x.0[usize::from(k)]) {
                *r += factor * v;
            }
        }
        out.0[i] = row;
    }
}

/// Calls `add(i, j, value)` for the entries of `G diag(psd) Gᵀ` (`G` column-major, `N` rows),
/// a sum of outer products over the non-zero entries of each column of `G` (an INS model's
/// columns have at most three). Each off-diagonal value is given for `(i, j)` and `(j, i)`
/// alike, so that the sum is exactly symmetric.
#[inline(always)]
fn noise_entries<const N: usize>(g: &[f64], psd: &[f64], mut add: impl FnMut(usize, usize, f64)) {
    for (column, &density) in g.chunks_exact(N).zip(psd) {
        if density == 0.0 {
            continue;
        }
        let mut rows = [0usize; N];
        let mut count = 0;
        for (i, &x) in column.iter().enumerate() {
            rows[count] = i;
            count += usize::from(x != 0.0);
        }
        for (a, &i) in rows[..count].iter().enumerate() {
            let scaled = density * column[i];
            for &j in &rows[a..count] {
                let value = scaled * column[j];
                add(i, j, value);
                if i != j {
                    add(j, i, value);
                }
            }
        }
    }
}

/// `G diag(psd) Gᵀ` by padded rows.
#[inline(always)]
fn noise_rows<const N: usize, const W: usize>(g: &[f64], psd: &[f64]) -> Rows<N, W> {
    let mut qc = Rows::<N, W>::zeros();
    noise_entries::<N>(g, psd, |i, j, v| qc.0[i][j] += v);
    qc
}

/// `G diag(psd) Gᵀ`.
pub(super) fn noise_covariance<const N: usize, const M: usize>(
    g: &SMatrix<f64, N, M>,
    psd: &SVector<f64, M>,
) -> SMatrix<f64, N, N> {
    let mut qc = SMatrix::<f64, N, N>::zeros();
    noise_entries::<N>(g.as_slice(), psd.as_slice(), |i, j, v| qc[(i, j)] += v);
    qc
}

/// Makes `p` exactly symmetric: each pair of off-diagonal entries becomes its mean.
pub(crate) fn symmetrise<const N: usize>(p: &mut SMatrix<f64, N, N>) {
    for i in 0..N {
        for j in 0..i {
            let m = 0.5 * (p[(i, j)] + p[(j, i)]);
            p[(i, j)] = m;
            p[(j, i)] = m;
        }
    }
}
